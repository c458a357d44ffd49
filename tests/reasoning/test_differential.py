"""The differential of the leading hypotheses: rivals, separating evidence, what is still missing."""

from __future__ import annotations

import dataclasses

import pytest

from engine.machine import load_machine
from engine.pipeline import diagnose, document_of
from engine.reasoning import Reasoner, load_rulebook
from engine.simulation import as_reading, simulate

from support import CASES

RW2 = CASES / "machines" / "rw2-raw-water-pump.yaml"


@pytest.fixture(scope="module")
def outer_race():
    machine = load_machine(RW2)
    sim = simulate(machine, "outer-race", "pump_nde", 3, None, 25600.0, 4.0, 2)
    return machine, diagnose(as_reading(sim), machine, Reasoner(load_rulebook()))


def test_the_leader_names_its_rivals_and_what_separates_them(outer_race):
    _, d = outer_race
    lead = d.reasoning.differential[0]
    assert (lead.fault, lead.component) == ("outer-race", "pump_nde")
    top = d.reasoning.top
    rivals = {(r.fault, r.component) for r in lead.rivals}
    # every rival shares the leader's component or family, and ranks below it
    for r in lead.rivals:
        assert r.component == lead.component or r.fault in {"outer-race", "inner-race", "rolling-element", "cage"}
        assert r.certainty <= top.certainty
    assert rivals, "a bearing defect on a pump with four bearings has rivals"


def test_missing_lists_only_rules_that_did_not_fire(outer_race):
    _, d = outer_race
    book = load_rulebook()
    for dx in d.reasoning.differential:
        h = next(h for h in d.reasoning.hypotheses if (h.fault, h.component) == (dx.fault, dx.component))
        fired = {f.title for f in h.support} | {f.title for f in h.against}
        assert not set(dx.missing) & fired
        titles = {r.title for r in book.rules}
        assert set(dx.missing) <= titles


def test_a_sign_no_input_could_give_is_not_missing():
    # unbalance on RW-2 with no 1X phase given: the phase rules could not fire, so they are not "missing"
    machine = load_machine(RW2)
    sim = simulate(machine, "unbalance", "pump", 3, None, 25600.0, 4.0, 1)
    d = diagnose(as_reading(sim), machine, Reasoner(load_rulebook()))
    dx = next(x for x in d.reasoning.differential if x.fault == "unbalance")
    book = load_rulebook()
    phase_titles = {r.title for r in book.rules if any(p.kind.startswith("phase") for p in r.needs)}
    assert phase_titles, "the rulebooks read 1X phase"
    assert not set(dx.missing) & phase_titles


def test_a_nudge_at_the_lowest_weight_is_not_a_missing_sign():
    # the twin-bearing rules grade a call other rules make (where two like bearings' lines are heard); on
    # pump_de, whose 7312 has no twin, their absence says nothing, and the report listed them as "not found"
    machine = load_machine(RW2)
    sim = simulate(machine, "inner-race", "pump_de", 2, None, 25600.0, 4.0, 12)
    book = load_rulebook()
    d = diagnose(as_reading(sim), machine, Reasoner(book))
    lowest = book.parameters["learning_lowest_weight"].value
    nudges = {r.title for r in book.rules if r.derives is None and 0 < r.weight <= lowest}
    assert any("twin" in r.id for r in book.rules if r.title in nudges)
    for dx in d.reasoning.differential:
        assert not set(dx.missing) & nudges, dx.missing


def test_the_report_joins_the_settling_measurement(outer_race):
    machine, d = outer_race
    doc = document_of(d)
    assert doc["differential"] and all(dx["settle"] for dx in doc["differential"])


def test_a_stated_speed_3_percent_off_is_reported_and_the_measured_one_used():
    # rates follow the measured speed; the reading problem says so (common practice: a tach reading or
    # a nameplate speed can be off by a few percent)
    machine = load_machine(RW2)
    nominal = machine.shaft_speeds_hz[machine.driver_shaft] * 60
    sim = simulate(machine, "outer-race", "pump_nde", 3, nominal * 0.97, 25600.0, 4.0, 1)
    reading = dataclasses.replace(as_reading(sim), speed_rpm=nominal)
    d = diagnose(reading, machine, Reasoner(load_rulebook()))
    assert any(h.fault == "speed-differs" and h.certainty >= 0.5 for h in d.reasoning.reading_problems)
    speed = document_of(d)["speed"]
    assert speed["source"] == "1X harmonics"
    assert speed["measured_rpm"] == pytest.approx(nominal * 0.97, rel=0.002)
    assert "measured from" in speed["text"]
    assert d.reasoning.top.fault == "outer-race" and d.reasoning.top.component == "pump_nde"


@pytest.mark.slow
def test_a_bearing_s_damage_stage_rests_on_its_own_sensor_only():
    # issue 13: the stage was once raised by the kurtosis of a channel on another bearing
    machine = load_machine(RW2)
    reasoner = Reasoner(load_rulebook())
    for component in ("pump_de", "pump_nde"):
        sim = simulate(machine, "outer-race", component, 3, None, 25600.0, 4.0, 0)
        d = diagnose(as_reading(sim), machine, reasoner)
        h = next(h for h in d.reasoning.hypotheses if (h.fault, h.component) == ("outer-race", component))
        staged = [f for f in h.support if f.rule_id.startswith("bearing.stage.")]
        assert staged and h.stage == max(book_stage(f.rule_id) for f in staged)
        for f in staged:
            locations = {fact.get("location") for _, fact in f.facts if "location" in fact}
            assert locations <= {component}, (f.rule_id, locations)


def book_stage(rule_id: str) -> int:
    return load_rulebook().rule(rule_id).stage
