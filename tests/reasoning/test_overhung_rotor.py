"""Unbalance of an overhung rotor: a high axial 1X is its own sign, not misalignment's.

A rotor between its bearings is unbalanced by a radial force: axial 1X stays low, and a high one
points elsewhere (`shaft.unbalance.low-axial`, `shaft.unbalance.against-axial`). An overhung rotor's
unbalance is a force and a couple that rock the shaft about its bearings, and its axial 1X runs as high
as the radial (common practice). A machine file says `overhung: true` on the rotor; the rules then ask
neither. The invented AF-3 fan (Tallow Ridge Water Works), simulated with seeded noise: the simulator
gives an overhung rotor's unbalance an axial 1X equal to the radial (`simulation.shaft.OVERHUNG_AXIAL`).
"""

from __future__ import annotations

import pytest

from engine.machine import load_machine
from engine.pipeline import diagnose
from engine.reasoning import CONFIDENT
from engine.simulation import as_reading, simulate

from support import TEST_MACHINES, reasoner

OVERHUNG = load_machine(TEST_MACHINES / "af3-fan-overhung.yaml")
BETWEEN = load_machine(TEST_MACHINES / "af3-fan-twin-22211.yaml")      # the same fan, its wheel not said overhung
AXIAL_RULES = {"shaft.unbalance.low-axial", "shaft.unbalance.against-axial"}


def _unbalance(machine_simulated, machine_read, stage: int = 3, seed: int = 11):
    sim = simulate(machine_simulated, "unbalance", "fan", stage, fs_hz=12000.0, duration_s=2.0, seed=seed)
    result = diagnose(as_reading(sim, "af3.wav"), machine_read, reasoner()).reasoning
    h = next(h for h in result.hypotheses if (h.fault, h.component) == ("unbalance", "fan"))
    return h, {f.rule_id for f in (*h.support, *h.against)}


def test_the_machine_file_says_which_rotor_is_overhung():
    assert [r.overhung for r in OVERHUNG.rotors] == [True]
    assert [r.overhung for r in BETWEEN.rotors] == [False]          # left out: between the bearings


@pytest.mark.parametrize("stage", [2, 3])
def test_an_overhung_fan_s_unbalance_with_a_high_axial_1x_is_called_unbalance(stage):
    h, fired = _unbalance(OVERHUNG, OVERHUNG, stage)
    assert h.certainty >= CONFIDENT
    assert not fired & AXIAL_RULES
    # the same samples read as if the wheel sat between its bearings: the high axial 1X counts against
    # unbalance and the call is lost (so the check above can fail)
    h_between, fired_between = _unbalance(OVERHUNG, BETWEEN, stage)
    assert "shaft.unbalance.against-axial" in fired_between
    assert h_between.certainty < CONFIDENT


def test_a_rotor_between_its_bearings_still_has_its_low_axial_1x_counted_for_unbalance():
    h, fired = _unbalance(BETWEEN, BETWEEN)
    assert "shaft.unbalance.low-axial" in fired and "shaft.unbalance.against-axial" not in fired
    assert h.certainty >= CONFIDENT
    # the overhung fan's own reading does not ask for the low axial 1X it would not have
    h_overhung, fired_overhung = _unbalance(BETWEEN, OVERHUNG)
    assert "shaft.unbalance.low-axial" not in fired_overhung
    assert h_overhung.certainty <= h.certainty
