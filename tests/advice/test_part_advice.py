"""What to do names the part the machine file knows, and a hypothesis below a call is told to confirm
first (nu26 items 12 and 16); small wording defects of the report and the truth file (item 20)."""

from __future__ import annotations

from engine.advice import _recommend, _urgencies, load_advice, part_names
from engine.machine import load_machine
from engine.reasoning.findings import Firing, Hypothesis
from engine.simulation.result import Truth

from support import CASES, RW2

CT1 = CASES / "machines/ct1-cooling-tower-fan.yaml"
BW1 = CASES / "machines/bw1-backwash-blower.yaml"


def _h(fault: str, family: str, component: str, certainty: float, *facts: dict) -> Hypothesis:
    firings = tuple(Firing(f"r{i}", "t", "s", "x.yaml:1", (), certainty, "b", (("f", f),))
                    for i, f in enumerate(facts))
    return Hypothesis(fault, fault, family, component, certainty, None, firings, ())


def _advise(h: Hypothesis, machine_file):
    data = load_advice()
    return _recommend(h, load_machine(machine_file), "A", data, _urgencies(data))


def test_bearing_spares_name_the_designation_and_a_direct_drive_has_no_belt_to_tension():
    rec = _advise(_h("inner-race", "bearing", "pump_de", 0.9), RW2)
    assert "bearing 7312 B, matched pair (pump_de)" in rec.spares     # cases/machines/rw2-raw-water-pump.yaml
    assert not any("belt" in line for line in rec.actions)
    belted = _advise(_h("inner-race", "bearing", "motor_de", 0.9), BW1)
    assert any("belt tension" in line for line in belted.actions)
    assert "bearing 6310-C3 (motor_de)" in belted.spares
    assert not any("{" in line for line in (*rec.actions, *rec.spares, *rec.confirm))


def test_a_tooth_fault_names_the_gear_by_its_shaft_and_teeth():
    event = {"kind": "once_per_rev_event", "shaft": "gear_input", "fm4": 20.0}
    rec = _advise(_h("gear-tooth", "gear", "bevel_stage", 0.8, event), CT1)
    assert any("the 23-tooth gear on gear_input (bevel_stage)" in line for line in rec.actions)
    unknown = part_names(load_machine(CT1), _h("gear-tooth", "gear", "bevel_stage", 0.8))
    assert "23-tooth" in unknown["gear"] and "67-tooth" in unknown["gear"]    # no event: both gears named


def test_measure_again_names_the_envelope_band_seen_at_the_bearings_own_point():
    # a tone of motor_de first seen across the coupling (a pump point, clearer) and then at its own housing
    tone = {"kind": "envelope_tone", "component": "motor_de", "band_lo_hz": 0.0, "band_hi_hz": 4267.0}
    far = tone | {"channel": "P1H", "location": "pump_de", "max_snr_db": 40.0}
    own = tone | {"channel": "M2H", "location": "motor_de", "max_snr_db": 30.0, "band_lo_hz": 675.0,
                  "band_hi_hz": 11520.0}
    names = part_names(load_machine(RW2), _h("outer-race", "bearing", "motor_de", 0.8, far, own))
    assert names["envelope_band"] == "the envelope band of 675 to 11520 Hz (M2H)"
    clearer = own | {"channel": "M2V", "max_snr_db": 35.0, "band_lo_hz": 1000.0}
    names = part_names(load_machine(RW2), _h("outer-race", "bearing", "motor_de", 0.8, far, own, clearer))
    assert names["envelope_band"] == "the envelope band of 1000 to 11520 Hz (M2V)"


def test_below_a_call_the_work_and_spares_wait_for_confirmation_unless_the_fault_is_urgent():
    weak = _advise(_h("misalignment-angular", "shaft", "drive_shaft", 0.34), CT1)
    assert weak.spares == () and len(weak.actions) == 1 and "confirm" in weak.actions[0]
    assert weak.confirm                                          # how to confirm it stays
    strong = _advise(_h("misalignment-angular", "shaft", "drive_shaft", 0.7), CT1)
    assert strong.spares and len(strong.actions) > 1
    urgent = _advise(_h("gear-tooth", "gear", "bevel_stage", 0.4), CT1)   # its own urgency is plan soon
    assert urgent.spares and "Not yet a call" not in " ".join(urgent.actions)


def test_the_truth_file_speed_has_no_float_noise():
    truth = Truth("unbalance", "pump", 2, 985.0000000000001, 1, 25600.0, 4.0)
    assert truth.as_dict()["speed_rpm"] == 985.0
