"""Rivals on one bearing, and pole-pass sidebands that cannot be a modulation, under the shipped rules."""

from __future__ import annotations

import pytest

from engine.common.errors import UsageError
from engine.evidence import extract_evidence
from engine.machine import load_machine
from engine.machine.kinematics import pole_pass_hz
from engine.reasoning import CONFIDENT, Reasoner, load_rulebook
from engine.simulation import as_reading, simulate

from support import CASES, ROOT

RW2 = load_machine(CASES / "machines" / "rw2-raw-water-pump.yaml")


@pytest.fixture(scope="module")
def reasoner():
    return Reasoner(load_rulebook())


@pytest.fixture(scope="module")
def outer_race_facts():
    return extract_evidence(as_reading(simulate(RW2, "outer-race", "pump_nde", 3, None, 25600.0, 4.0, 2)), RW2)


def _hypothesis(result, fault, component):
    return next((h for h in result.hypotheses if (h.fault, h.component) == (fault, component)), None)


def test_impulsiveness_and_the_sensor_s_place_support_only_the_bearing_s_leading_family(reasoner, outer_race_facts):
    # a weaker ball-rate family on the same channel and view as the outer-race family
    lead = max((f for f in outer_race_facts if f["kind"] == "envelope_tone" and f["defect"] == "BPFO"
                and f["component"] == "pump_nde" and f["fundamental_owned"] and f["location"] == "pump_nde"),
               key=lambda f: f["first_snr_db"])
    rival = lead | {"id": "rival", "defect": "BSF", "first_snr_db": lead["first_snr_db"] - 3.0}
    facts = [f for f in outer_race_facts if not (f["kind"] == "envelope_tone" and f["defect"] == "BSF")] + [rival]
    result = reasoner.reason(facts)
    outer = {f.rule_id for f in _hypothesis(result, "outer-race", "pump_nde").support}
    ball = {f.rule_id for f in _hypothesis(result, "rolling-element", "pump_nde").support}
    assert {"bearing.defect.impulsive", "bearing.defect.at-bearing"} <= outer
    assert not {"bearing.defect.impulsive", "bearing.defect.at-bearing"} & ball
    assert "bearing.defect.envelope" in ball        # its own tones still count for it


def _pole_pass(channel: str, pairs: int, db: float) -> dict:
    return {"kind": "sideband_family", "id": f"sb-{channel}", "channel": channel, "point": channel,
            "direction": "horizontal", "location": "motor_de", "location_shaft": "motor", "carrier": "1X",
            "component": "M-RW2", "carrier_hz": 24.77, "carrier_found": True, "spacing": "pole pass",
            "spacing_shaft": "motor", "spacing_hz": 0.933, "count": 2 * pairs, "pairs": pairs,
            "max_order": pairs, "sideband_to_carrier_db": db}


@pytest.mark.parametrize("pairs, db, confident", [
    (1, -4.0, False),     # above -6 dB: no amplitude modulation (depth <= 1) puts a sideband there
    (1, -15.0, False),    # one pair alone is one sign: below a conclusion
    (2, -15.0, True),     # two symmetric pairs at a modulation's level: a family
    (3, -40.0, False),    # far below the rule's floor of -30 dB
])
def test_pole_pass_sidebands_make_a_rotor_bar_call_only_as_a_modulation_family(reasoner, pairs, db, confident):
    result = reasoner.reason([_pole_pass("M1H", pairs, db)])
    bars = _hypothesis(result, "rotor-bar", "M-RW2")
    certainty = bars.certainty if bars else 0.0
    assert (certainty >= CONFIDENT) is confident, certainty


def test_pole_pass_frequency_of_a_line_fed_motor():
    # p (2 f_L / p - fr): 4 poles, 50 Hz, 1486 rpm -> 4 x (25 - 24.767) = 0.933 Hz (standard induction-motor relation)
    assert pole_pass_hz(50.0, 4, 1486 / 60) == pytest.approx(0.9333, rel=1e-3)
    assert pole_pass_hz(50.0, 4, 1500 / 60) is None          # synchronous: no slip
    assert pole_pass_hz(50.0, 4, 0.85 * 1486 / 60) is None   # 16 % slip: past pull-out, a drive feeds it


def test_the_simulator_refuses_broken_bars_where_the_motor_cannot_run_on_its_line():
    with pytest.raises(UsageError, match="slip"):
        simulate(RW2, "rotor-bar", "M-RW2", 3, 0.85 * 1486, 12800.0, 1.0, 0)


def test_a_ball_defect_s_cage_rate_modulation_counts_against_a_cage_call(reasoner):
    # a damaged ball rides with the cage: its tones carry FTF sidebands and FTF shows in the envelope
    # (Randall & Antoni 2011, section 2.1); the cage rate is then the ball defect's, not a cage fault's
    cwru = load_machine(ROOT / "tests/machines/cwru-motor.yaml")
    facts = extract_evidence(as_reading(simulate(cwru, "rolling-element", "drive_end", 2, 1797, 12000.0, 4.0, 0)), cwru)
    result = reasoner.reason(facts)
    assert (result.top.fault, result.top.component) == ("rolling-element", "drive_end")
    cage = _hypothesis(result, "cage", "drive_end")
    assert "bearing.cage.ball-modulation" in {f.rule_id for f in cage.against}
    assert cage.certainty < CONFIDENT
