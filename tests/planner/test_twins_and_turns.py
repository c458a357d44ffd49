"""Limits no setting lifts (rates that share lines), and the turns every reading of a machine needs."""

from __future__ import annotations

from engine.machine import load_machine
from engine.machine.kinematics import bearing_multiples
from engine.planner.check import CANNOT, check, verdicts
from engine.planner.policy import load_policy
from engine.planner.settings import given_settings
from engine.planner.targets import purposes_at, targets_at

from support import CASES

POLICY = load_policy()
CT1 = load_machine(CASES / "machines" / "ct1-cooling-tower-fan.yaml")
BW1 = load_machine(CASES / "machines" / "bw1-backwash-blower.yaml")


def _limits(machine, point_id, settings):
    point = next(p for p in machine.points if p.id == point_id)
    return point, [lim for lim in check(machine, settings, POLICY, points=[point_id]) if lim.effect != "view"]


def test_a_defect_rate_whose_harmonics_other_bearings_own_is_flagged():
    # CT-1: the motor's drive-end BPFO (3.06 x 985 rpm) is half the gearbox input bearing's BPFO
    # (6.13 x the same speed), within 1 %: every harmonic of the input bearing's BPFO is an even
    # harmonic of the motor's. The shared lines go to the motor's family, which has its odd harmonics
    # of its own (issue 19; before, the lower harmonic order took them and the motor's was flagged)
    speeds = CT1.speeds_at(None)
    b = {x.id: x for x in CT1.bearings}
    motor = bearing_multiples(b["motor_de"])["bpfo"] * speeds[b["motor_de"].shaft]
    gear = bearing_multiples(b["input_front"])["bpfo"] * speeds[b["input_front"].shaft]
    assert abs(2 * motor / gear - 1) < 0.01
    s = given_settings(POLICY, fmax_hz=5000.0, lines=12800)
    _, lims = _limits(CT1, "GINH", s)
    twins = [lim for lim in lims if lim.setting == "twin" and "BPFO of input_front" in lim.what]
    assert twins and "motor_de" in twins[0].what
    _, lims = _limits(CT1, "MDEH", s)
    assert not [lim for lim in lims if lim.setting == "twin" and "BPFO of motor_de" in lim.what]


def test_two_rates_of_one_bearing_within_slip_are_flagged():
    # BW-1 blower drive end: 2 x BSF lies within 0.7 % of BPFO (bearings slip 1-2 %, common practice)
    s = given_settings(POLICY, fmax_hz=5000.0, lines=12800)
    _, lims = _limits(BW1, "BDEH", s)
    assert any(lim.setting == "twin" and "2 x BSF" in lim.what and "BPFO" in lim.what for lim in lims)


def test_a_record_shorter_than_two_turns_of_the_slowest_shaft_cannot_show_anything():
    # the fan turns at 338 rpm: 2 turns take 0.355 s; the analysis refuses a shorter record
    s = given_settings(POLICY, fmax_hz=1000.0, lines=300)          # 0.3 s
    point, lims = _limits(CT1, "GINH", s)
    targets = [t for u in purposes_at(CT1, point) for t in targets_at(CT1, point, u)]
    assert all(v.state == CANNOT for v in verdicts(targets, lims))
