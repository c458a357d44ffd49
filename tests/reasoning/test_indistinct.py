"""Certainty where the evidence cannot separate two faults (nu27 items 3 and 4): each ceiling rule holds its
hypothesis below a call on a reading built to need it, and stays out where something separates the two.

The readings are simulated on invented machines (the demo plant; the AF-3 fan of the twin-bearing tests): they
show that the rules fire where they should, not how well they judge real machines (bench.confusion and
bench.real_data do that)."""

from __future__ import annotations

import dataclasses
import functools
import math

import pytest

from engine.evidence.envelope import _alike
from engine.evidence.matching import TIE
from engine.machine import load_machine
from engine.machine.kinematics import rates_at
from engine.pipeline import diagnose
from engine.readings import PhaseReading
from engine.simulation import as_reading, simulate

from support import CASES, TEST_MACHINES, reasoner

pytestmark = pytest.mark.slow

ONE_RADIAL = "shaft.unbalance.one-radial-direction"


@functools.cache
def _machine(name: str):
    return load_machine(CASES / "machines" / name if (CASES / "machines" / name).exists() else TEST_MACHINES / name)


def _diagnose(name, fault, component, stage=3, seed=1, phase=()):
    m = _machine(name)
    r = as_reading(simulate(m, fault, component, stage, None, 25600.0, 4.0, seed))
    if phase:
        r = dataclasses.replace(r, phase_1x=tuple(PhaseReading(p, d, deg, None, "phase", i + 1)
                                                  for i, (p, d, deg) in enumerate(phase)))
    return diagnose(r, m, reasoner()).reasoning


def _hypothesis(reasoning, fault, component):
    return next(h for h in reasoning.hypotheses if (h.fault, h.component) == (fault, component))


def _held_by(h) -> set[str]:
    return {f.rule_id for f in h.against}


# --- unbalance where the strongest 1X has one radial direction -------------------------------------------

def test_unbalance_on_a_pump_measured_horizontally_only_is_held_below_a_call():
    # RW-2's pump bearings have horizontal points only: a loose support would give the same radial 1X
    h = _hypothesis(_diagnose("rw2-raw-water-pump.yaml", "unbalance", "pump", stage=2), "unbalance", "pump")
    assert h.certainty == pytest.approx(0.45)
    assert ONE_RADIAL in _held_by(h)
    held = next(f for f in h.against if f.rule_id == ONE_RADIAL)
    assert "90 degrees" in held.because and "soft foot" in held.because


def test_horizontal_and_vertical_phase_at_a_pump_bearing_lifts_the_hold():
    # about 90 degrees between horizontal and vertical 1X: the rotating force of unbalance (common practice,
    # as rulebooks/phase.yaml phase.unbalance.quadrature cites it)
    h = _hypothesis(_diagnose("rw2-raw-water-pump.yaml", "unbalance", "pump", stage=2,
                              phase=[("P1H", None, 40.0), ("pump_de", "vertical", 128.0)]), "unbalance", "pump")
    assert h.confident
    assert ONE_RADIAL not in _held_by(h)


def test_phase_across_the_coupling_does_not_lift_the_hold():
    # radial phases alike across the coupling raise unbalance (phase.yaml), but a loose support under the pump
    # moves with the same rotating force: it does not separate the two
    h = _hypothesis(_diagnose("rw2-raw-water-pump.yaml", "unbalance", "pump", stage=2,
                              phase=[("M2H", None, 40.0), ("P1H", None, 52.0)]), "unbalance", "pump")
    assert h.certainty == pytest.approx(0.45)
    assert ONE_RADIAL in _held_by(h)


def test_a_blower_bearing_with_two_radial_points_is_not_held():
    # BW-1's blower bearing has BDEH and BDEV: the H/V comparison is there to be made
    h = _hypothesis(_diagnose("bw1-backwash-blower.yaml", "unbalance", "blower", stage=3), "unbalance", "blower")
    assert ONE_RADIAL not in _held_by(h)
    assert h.confident


# --- two defect rates of one bearing that coincide ----------------------------------------------------

def _orders(n, d, pitch, angle_deg):
    """BPFO and the ball defect rate 2 x BSF in orders of the shaft: the standard kinematic formulas as
    ../shared/notes/check-values.md lists them (BPFO = n/2 (1 - d/D cos phi), BSF = D/(2d) (1 - (d/D cos phi)^2)),
    written out here, not read from kinematics.py."""
    c = d / pitch * math.cos(math.radians(angle_deg))
    return n / 2 * (1 - c), pitch / d * (1 - c * c)


def test_a_22211s_ball_rate_falls_within_the_tie_of_its_bpfo():
    m = _machine("af3-fan-twin-22211.yaml")
    rates = rates_at(m, m.shaft_speeds_hz)
    b = next(x for x in rates.bearings if x.bearing == "fan_outboard")
    bpfo, ball = _orders(15, 12.0, 77.5, 10.0)          # the machine file's geometry
    assert abs(ball / bpfo - 1) < TIE                   # 0.76 % apart
    assert b.bpfo_hz / b.shaft_hz == pytest.approx(bpfo, rel=1e-9)
    assert _alike(b, "BPFO", b.impact_rate_hz("BPFO")) == "BSF"
    assert _alike(b, "BSF", b.impact_rate_hz("BSF")) == "BPFO"
    assert _alike(b, "BPFI", b.impact_rate_hz("BPFI")) == ""
    assert _alike(b, "FTF", b.impact_rate_hz("FTF")) == ""


def test_rates_five_percent_apart_are_told_apart():
    m = _machine("af3-fan-twin-22211.yaml")
    base = next(x for x in rates_at(m, m.shaft_speeds_hz).bearings if x.bearing == "fan_outboard")
    # more rollers of the same size: BPFO moves, the ball rate does not
    far = dataclasses.replace(base, bpfo_hz=base.impact_rate_hz("BSF") * 1.05)
    assert _alike(far, "BPFO", far.bpfo_hz) == ""
    near = dataclasses.replace(base, bpfo_hz=base.impact_rate_hz("BSF") * (1 + 0.9 * TIE))
    assert _alike(near, "BPFO", near.bpfo_hz) == "BSF"


def test_an_outer_race_whose_rate_a_ball_shares_is_still_called():
    # BW-1's blower bearing: 2 x BSF lies 0.7 % below BPFO. Outer race or ball, the bearing is replaced: a
    # ceiling here turned a stage-3 outer race into "no action", so none holds it
    h = _hypothesis(_diagnose("bw1-backwash-blower.yaml", "outer-race", "blower_de"), "outer-race", "blower_de")
    assert h.confident


def _no_other_call(reasoning, component):
    """No hypothesis but the one on ``component`` reaches a call, and none of another fault there."""
    return [(h.faults, h.component, round(h.certainty, 2)) for h in reasoning.hypotheses
            if h.confident and h.component != component] == [] and sum(
        1 for h in reasoning.hypotheses if h.confident) == 1


@pytest.mark.parametrize("name, bearing", [("bw1-backwash-blower.yaml", "blower_de"),
                                           ("af3-fan-twin-22211.yaml", "fan_outboard")])
@pytest.mark.parametrize("stage, seed", [(2, 1), (3, 2)])
def test_an_outer_race_whose_rate_a_ball_shares_names_both_at_its_certainty_and_stage(name, bearing, stage, seed):
    # no sidebands at FTF round the lines: the lines fit BPFO and 2 x BSF alike, so the finding names both parts
    # (standard bearing kinematics; Randall & Antoni 2011, section 2.1: a ball's lines carry them, a race's do not),
    # and the bearing keeps its certainty, stage and so its time to act
    r = _diagnose(name, "outer-race", bearing, stage=stage, seed=seed)
    h = r.top
    assert (h.fault, h.component) == ("outer-race", bearing)
    assert h.faults == ("outer-race", "rolling-element")
    assert h.named == "outer-race defect or rolling-element defect"
    assert h.confident and h.stage == stage
    assert [f.rule_id for f in h.indistinct] == ["bearing.defect.rates-coincide"]
    because = h.indistinct[0].because
    assert "within 1 %" in because and "sidebands at FTF" in because and "longer record" in because
    assert _no_other_call(r, bearing)
    # the two halves do not fight for the lines: no hypothesis of the ball on that bearing takes any of them
    assert not any(x.fault == "rolling-element" and x.component == bearing for x in h.explained_by)


@pytest.mark.parametrize("name, bearing", [("bw1-backwash-blower.yaml", "blower_de"),
                                           ("af3-fan-twin-22211.yaml", "fan_outboard")])
def test_a_ball_on_a_race_rate_whose_cage_rate_sidebands_show_is_called_alone(name, bearing):
    # the race rate's family holds the ball's lines (its rate lies within 1 %), but they carry deep sidebands at
    # FTF: a damaged ball's sign (Randall & Antoni 2011, section 2.1). It was called "cage" (BW-1 0.51, AF-3 0.54)
    r = _diagnose(name, "rolling-element", bearing)
    h = r.top
    assert (h.fault, h.component, h.faults) == ("rolling-element", bearing, ("rolling-element",))
    assert h.confident and h.stage == 3
    assert not any(x.confident for x in r.hypotheses if x.fault == "cage")
    assert _no_other_call(r, bearing)


def test_a_ball_fault_whose_cage_rate_sidebands_show_is_called():
    # the 22212 of the belt fan: 2 x BSF 0.3 % from BPFO, and the ball's lines carry FTF sidebands, which a race
    # defect does not (Randall & Antoni 2011, section 2.1)
    r = _diagnose("belt-fan-6309-22212.yaml", "rolling-element", "fan_de")
    h = _hypothesis(r, "rolling-element", "fan_de")
    assert h.confident
    assert h.faults == ("rolling-element",)          # the sidebands tell it from an outer race: named alone


def test_a_bearing_whose_rates_stand_apart_is_called():
    # RW-2's pump drive-end bearing: no two of its race and ball rates within 1 %
    h = _hypothesis(_diagnose("rw2-raw-water-pump.yaml", "inner-race", "pump_de"), "inner-race", "pump_de")
    assert h.confident
    assert h.faults == ("inner-race",) and not h.indistinct


@pytest.mark.parametrize("fault, bearing", [("outer-race", "pump_nde"), ("rolling-element", "pump_nde")])
def test_race_and_ball_of_a_bearing_whose_rates_stand_apart_are_named_alone(fault, bearing):
    # RW-2's pump non-drive-end bearing: its 2 x BSF stands well apart from BPFO, so nothing is named beside
    h = _hypothesis(_diagnose("rw2-raw-water-pump.yaml", fault, bearing), fault, bearing)
    assert h.confident and h.faults == (fault,)
