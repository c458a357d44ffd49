"""The demo plant's gear cases: the tooth or the worn mesh explains the impulsiveness and the
envelope lines it makes, so no bearing is blamed beside it (explaining away, issue 19)."""

from __future__ import annotations

import functools

import pytest

from engine.machine import load_machine
from engine.pipeline import diagnose
from engine.pipeline.cases import load_case, simulation_of
from engine.reasoning import Reasoner, load_rulebook
from engine.simulation import as_reading

from support import CASES

BEARING_AT_MOST = 0.4


@functools.cache
def _reasoner():
    return Reasoner(load_rulebook())


@pytest.mark.parametrize("name", ["ct1-bevel-tooth", "ct1-bevel-wear"])
def test_a_gear_fault_leaves_no_bearing_hypothesis_above_40_percent(name):
    case = load_case(CASES / "demo" / f"{name}.case.yaml")
    machine = load_machine(case.machine)
    result = diagnose(as_reading(simulation_of(case, machine), name), machine, _reasoner()).reasoning
    assert result.top.family == "gear" and result.top.certainty >= 0.5
    bearings = [(h.fault, h.component, round(h.certainty, 2)) for h in result.hypotheses if h.family == "bearing"]
    assert all(c <= BEARING_AT_MOST for _, _, c in bearings), bearings


def test_a_gear_fault_and_a_bearing_fault_at_once_are_both_named():
    case = load_case(CASES / "demo" / "ct1-bevel-tooth.case.yaml")
    machine = load_machine(case.machine)
    from engine.simulation import simulate

    sim = simulate(machine, "gear-tooth", "bevel_stage", 3, seed=15, also=(("outer-race", "output_lower", 3),))
    confident = {(h.fault, h.component) for h in diagnose(as_reading(sim), machine, _reasoner()).reasoning.confident()}
    assert confident == {("gear-tooth", "bevel_stage"), ("outer-race", "output_lower")}
