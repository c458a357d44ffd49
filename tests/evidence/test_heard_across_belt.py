"""A sensor across a belt drive does not weigh the other machine's bearings.

On the invented AF-3 belt fan an unbalanced fan (25.6 kHz x 4 s, seed 0) once carried an outer-race
hypothesis on the motor's bearing at 22 %, from an envelope family on a fan sensor (FOBV) across the
belt, with nothing at the motor's own point. A bearing's impacts reach a sensor through its housing and
the frame, not through a rubber belt (common practice; `Machine.shafts_heard_from`). Where the other
shaft has no sensor in the reading, the far one is all there is, and it is still weighed.
"""

from __future__ import annotations

from engine.evidence import extract_evidence
from engine.machine import load_machine
from engine.pipeline import diagnose
from engine.simulation import as_reading, simulate

from support import TEST_MACHINES, reasoner

AF3 = load_machine(TEST_MACHINES / "af3-fan-twin-22211.yaml")


def test_a_fan_sensor_does_not_hear_the_motor_s_bearing_and_the_motor_sensor_does():
    reading = as_reading(simulate(AF3, "outer-race", "motor_de", 3, seed=11), "af3.wav")
    tones = [f for f in extract_evidence(reading, AF3)
             if f["kind"] == "envelope_tone" and f["component"] == "motor_de" and f["defect"] == "BPFO"]
    heard = {f["channel"]: f["shaft_seen"] for f in tones}
    assert heard.get("MDEH") is True
    assert not any(heard.get(ch) for ch in ("FIBH", "FOBH", "FOBV", "FOBA"))
    # and the motor's own sensor still calls it
    result = diagnose(reading, AF3, reasoner()).reasoning
    top = result.hypotheses[0]
    assert (top.fault, top.component) == ("outer-race", "motor_de") and top.confident


def test_an_unbalanced_fan_gets_no_outer_race_on_the_motor_from_a_fan_sensor():
    reading = as_reading(simulate(AF3, "unbalance", "fan", 3, seed=0), "af3.wav")
    result = diagnose(reading, AF3, reasoner()).reasoning
    assert not [h for h in result.hypotheses if h.component == "motor_de"]
    assert (result.hypotheses[0].fault, result.hypotheses[0].component) == ("unbalance", "fan")


def test_without_a_sensor_on_the_motor_a_fan_sensor_still_weighs_the_motor_s_bearing():
    reading = as_reading(simulate(AF3, "outer-race", "motor_de", 3, seed=11, points=["FOBH", "FOBV"]), "af3.wav")
    tones = [f for f in extract_evidence(reading, AF3)
             if f["kind"] == "envelope_tone" and f["component"] == "motor_de" and f["defect"] == "BPFO"]
    assert tones and all(f["shaft_seen"] for f in tones)
