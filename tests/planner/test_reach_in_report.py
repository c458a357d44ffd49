"""A diagnosis reports what its reading's settings could not show, by the planner's own checks."""

from __future__ import annotations

from engine.machine import load_machine
from engine.pipeline import diagnose, document_of
from engine.reasoning import Reasoner, load_rulebook
from engine.report import render
from engine.simulation import as_reading, simulate

from support import CASES

CT1 = CASES / "machines" / "ct1-cooling-tower-fan.yaml"


def test_a_short_coarse_reading_names_the_gear_faults_it_cannot_show():
    # 1280 Hz for 0.4 s: Fmax 500 Hz, 200 lines of 2.5 Hz; the fan turns 2.25 times, so its
    # synchronous average (a cracked tooth on the output shaft) cannot be formed (common practice:
    # at least 10 turns for a stable average)
    machine = load_machine(CT1)
    sim = simulate(machine, "healthy", None, 1, None, 1280.0, 0.4, 0, ["GINH"])
    d = diagnose(as_reading(sim), machine, Reasoner(load_rulebook()))
    doc = document_of(d)
    cannot = {(v["fault"], v["component"]) for v in doc["reach"] if v["state"] == "cannot show"}
    assert ("gear-tooth", "bevel_stage") in cannot
    assert all(v["reasons"] for v in doc["reach"])
    assert "CANNOT SHOW: gear-tooth" in render(doc, "text")


def test_settings_that_reach_everything_leave_the_list_empty_for_the_purpose():
    machine = load_machine(CT1)
    sim = simulate(machine, "healthy", None, 1, None, 25600.0, 8.0, 0, ["GINH"])
    doc = document_of(diagnose(as_reading(sim), machine, Reasoner(load_rulebook())))
    assert not [v for v in doc["reach"] if v["state"] == "cannot show"]
