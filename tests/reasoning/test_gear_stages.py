"""Gear tooth damage stages climb with the damage (nu27 finding 6): the simulator's tooth at stages 1 to 4
on CT-1's bevel pinion, graded by FM4 (rulebooks/advice/severity.yaml fault_severity) and the tooth rule.
FM4 is about 3 for a sound gear (Stewart 1977; Zakrajsek 1993; from memory: ../shared/notes/check-values.md).
The readings are invented (the demo plant, seeded)."""

import pytest

from engine.advice import fault_measure, load_advice
from engine.machine import load_machine
from engine.pipeline import diagnose
from engine.reasoning import CONFIDENT
from engine.simulation import as_reading, simulate

from support import CASES, reasoner

pytestmark = pytest.mark.slow

CT1 = CASES / "machines/ct1-cooling-tower-fan.yaml"


@pytest.fixture(scope="module")
def stages():
    machine = load_machine(CT1)
    out = {}
    for stage in (1, 2, 3, 4):
        d = diagnose(as_reading(simulate(machine, "gear-tooth", "bevel_stage", stage, None, 25600.0, 4.0, 1)),
                     machine, reasoner())
        tooth = next((h for h in d.reasoning.hypotheses if (h.fault, h.component) == ("gear-tooth", "bevel_stage")),
                     None)
        rec = next((r for r in d.advice.recommendations if r.hypothesis is tooth), None)
        out[stage] = (d, tooth, rec, fault_measure(tooth, load_advice()) if tooth else None)
    return out


def test_a_sound_gear_reads_fm4_about_three():
    # Stewart (1977): FM4 about 3 for a healthy gear (from memory); the simulator's sound teeth differ a little
    machine = load_machine(CT1)
    d = diagnose(as_reading(simulate(machine, "healthy", None, 1, None, 25600.0, 4.0, 1)), machine, reasoner())
    fm4 = [f["fm4"] for f in d.facts if f["kind"] == "once_per_rev_event" and f["shaft"] in ("gear_input", "fan")]
    assert fm4 and all(2.0 < v < 4.5 for v in fm4), fm4


def test_fm4_climbs_with_the_tooth_damage(stages):
    fm4 = [stages[s][3].value if stages[s][3] else 0.0 for s in (1, 2, 3, 4)]
    assert fm4 == sorted(fm4) and fm4[3] > 2 * fm4[0], fm4


def test_stage_one_tooth_is_not_act_now(stages):
    d, tooth, rec, measure = stages[1]
    assert d.advice.urgency.id != "act-now"
    assert tooth is None or tooth.certainty < CONFIDENT or rec.urgency.id != "act-now"
    assert measure is None or not measure.grade.startswith("severe")


@pytest.mark.parametrize("stage", [2, 3])
def test_middle_stages_are_found_and_not_severe(stages, stage):
    d, tooth, rec, measure = stages[stage]
    assert tooth is not None and tooth.certainty >= CONFIDENT
    assert not measure.grade.startswith("severe") and rec.urgency.id == "plan-soon"


def test_stage_four_tooth_is_act_now(stages):
    d, tooth, rec, measure = stages[4]
    assert tooth is not None and tooth.certainty >= CONFIDENT
    assert measure.grade.startswith("severe") and rec.urgency.id == "act-now" and d.advice.urgency.id == "act-now"
