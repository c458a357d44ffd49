"""The trend reaching the time to act (rulebooks/time-to-act.yaml): which trend facts move an urgency, to
which step, and that the advice never lets a trend lower one and says why it moved."""

from __future__ import annotations

import dataclasses

import pytest

from engine.advice import load_advice, urgency_raises
from engine.evidence.vocabulary import fields_of
from engine.machine import load_machine
from engine.pipeline import diagnose, document_of
from engine.readings import PhaseReading
from engine.report import render
from engine.simulation import as_reading, simulate

from support import RW2
from support import reasoner as shared_reasoner
from support import trend_fact as support_trend_fact


@pytest.fixture(scope="module")
def reasoner():
    return shared_reasoner()


def trend_fact(**over) -> dict:
    fact = support_trend_fact(**over)
    assert set(fact) == set(fields_of("trend")) | {"kind", "id"}
    return fact


def projected(low: float, **over) -> dict:
    return trend_fact(**{"projected_days": 2 * low, "projected_low_days": low, "projected_high_days": 3 * low,
                         "degradation_began": True, "readings_since_onset": 6,
                         "projection_to": "limit accel_rms_g = 1", "projection_words": "limit accel_rms_g = 1",
                         "projection_boundary": "limit", **over})


def asked(reasoner, fact) -> list[str]:
    """The urgency steps the rules and the advice data ask for, for one trend fact."""
    data = load_advice()
    from engine.advice import _urgencies
    return [r.urgency.id for r in urgency_raises(reasoner.reason([fact]), data, _urgencies(data))]


# the windows of rulebooks/advice/severity.yaml: act now 'days', plan soon '2 to 4 weeks', plan '1 to 3 months'
@pytest.mark.parametrize("low_days, step", [(0.0, "act-now"), (9.0, "act-now"), (13.9, "act-now"),
                                            (14.0, "plan-soon"), (20.0, "plan-soon"), (50.0, "plan"),
                                            (120.0, None)])
def test_a_projected_crossing_asks_for_the_step_whose_window_holds_its_early_end(reasoner, low_days, step):
    assert asked(reasoner, projected(low_days)) == ([step] if step else [])


@pytest.mark.parametrize("over", [
    {"degradation_began": False},                       # a fit of every reading: no start of degradation found
    {"readings_since_onset": 3},                        # fewer readings since the start than the model's parameters + 1
    {"projection_boundary": "A/B", "projection_to": "zone boundary A/B (1.4 mm/s)"},    # not damage
    {"projection_boundary": "B/C", "projection_to": "zone boundary B/C (2.8 mm/s)"},    # zone C itself: plan soon
], ids=["no-start-found", "too-few-since-start", "to-A/B", "to-B/C"])
def test_a_projection_that_must_not_count_moves_nothing(reasoner, over):
    assert asked(reasoner, projected(5.0, **over)) == []


def test_a_crossing_of_c_d_counts(reasoner):
    assert asked(reasoner, projected(5.0, projection_boundary="C/D",
                                     projection_to="zone boundary C/D (4.5 mm/s)")) == ["act-now"]


@pytest.mark.parametrize("over, step", [
    ({"indicator": "velocity_rms_mm_s", "iso_change_significant": True}, "watch"),
    ({"indicator": "velocity_rms_mm_s", "iso_change_significant": True, "readings": 2}, None),
    ({"indicator": "velocity_rms_mm_s"}, None),
    ({"indicator": "accel_peak_g", "change_pct": 120.0}, "watch"),
    ({"indicator": "accel_peak_g", "change_pct": 120.0, "rate_per_month": -0.1}, None),    # falling back now
    ({"indicator": "accel_peak_g", "change_pct": 80.0}, None),
    ({"indicator": "kurtosis", "change_pct": 500.0}, None),                               # not a level
    ({"indicator": "env_BPFI_db", "change_db": 7.0, "change_pct": 0.0}, "watch"),
    ({"indicator": "env_BPFI_db", "change_db": 5.0, "change_pct": 0.0}, None),
], ids=["iso-change", "iso-change-two-readings", "iso-no-change", "accel-doubled", "accel-doubled-falling",
        "accel-up-80", "kurtosis", "envelope-7-dB", "envelope-5-dB"])
def test_a_change_since_baseline_asks_for_a_shorter_survey_interval(reasoner, over, step):
    # ISO 20816-3 criterion II, 25 % of B/C (from memory); a doubling (+6 dB) over baseline: common practice
    assert asked(reasoner, trend_fact(**over)) == ([step] if step else [])


# Dyer & Stewart 1978 (from memory): a sound bearing's kurtosis is near the Gaussian 3 and rises with local damage;
# "near 3" is below param.impulsive_kurtosis (4, common practice), "well above" at least param.kurtosis_fast_rise (6)
@pytest.mark.parametrize("over, step", [
    ({"baseline": 3.1, "latest": 8.0, "rate_per_month": 1.5}, "watch"),
    ({"baseline": 3.1, "latest": 6.0, "rate_per_month": 0.2}, "watch"),          # at the level: fires
    ({"baseline": 3.1, "latest": 8.0, "rate_per_month": -1.5}, None),            # falling back: spreading damage
    ({"baseline": 3.1, "latest": 5.9, "rate_per_month": 1.5}, None),             # not yet well above 3
    ({"baseline": 4.5, "latest": 9.0, "rate_per_month": 1.5}, None),             # impulsive from the start
    ({"baseline": 3.1, "latest": 8.0, "rate_per_month": 1.5, "readings": 3}, None),   # too few readings
], ids=["rising", "at-the-level", "falling", "below-the-level", "impulsive-baseline", "three-readings"])
def test_kurtosis_rising_from_near_3_to_well_above_asks_for_a_shorter_survey_interval(reasoner, over, step):
    assert asked(reasoner, trend_fact(indicator="kurtosis", indicator_name="kurtosis", change_pct=0.0,
                                      **over)) == ([step] if step else [])


def _healthy(reasoner):
    m = load_machine(RW2)
    return m, as_reading(simulate(m, "healthy", None, 1, None, 12800.0, 3.0, 5))


def test_a_trend_raises_a_quiet_diagnosis_and_says_why(reasoner):
    m, reading = _healthy(reasoner)
    quiet = diagnose(reading, m, reasoner)
    assert quiet.advice.urgency.id == "none" and not quiet.advice.raised_by
    d = diagnose(reading, m, reasoner, more_facts=lambda facts, alarms: [projected(9.0)])
    assert d.advice.urgency.id == "act-now"
    (why,) = d.advice.raised_by
    assert why.point == "P1H" and why.rule_id == "trend.time-to-act.projected-crossing"
    assert "in 18.0 days (80 % interval from 9.00 days)" in " ".join(why.because.split()), why.because
    doc = document_of(d)
    assert doc["verdict"]["urgency_raised_by"][0]["urgency"]["id"] == "act-now"
    text = render(doc, "text", "diagnosis")
    assert "sooner because of the trend (act now): The trend of acceleration RMS, g at P1H" in text


def test_a_trend_never_lowers_an_urgency(reasoner):
    m = load_machine(RW2)
    reading = as_reading(simulate(m, "unbalance", "pump", 4, None, 12800.0, 3.0, 2))
    # the pump is measured horizontally only: 1X phase horizontal and vertical at its drive end (about 90 degrees
    # apart) makes the unbalance a call (shaft.unbalance.one-radial-direction holds it at 45 % without)
    reading = dataclasses.replace(reading, phase_1x=(PhaseReading("P1H", None, 40.0, None, "phase", 1),
                                                     PhaseReading("pump_de", "vertical", 128.0, None, "phase", 2)))
    d = diagnose(reading, m, reasoner, more_facts=lambda facts, alarms: [
        trend_fact(point="P1H", indicator="accel_peak_g", change_pct=150.0), projected(50.0, id="trend-2")])
    assert d.advice.urgency.id == "act-now"        # stage-4 unbalance, zone D: the trend asks for watch and plan
    assert not d.advice.raised_by
    assert all(not r.raised_by for r in d.advice.recommendations)


def test_a_finding_at_the_point_is_raised_and_one_elsewhere_is_not(reasoner):
    m = load_machine(RW2)
    reading = as_reading(simulate(m, "outer-race", "pump_de", 2, None, 25600.0, 4.0, 3))
    plain = diagnose(reading, m, reasoner)
    top = plain.advice.recommendations[0]
    assert top.hypothesis.confident and top.urgency.id in ("plan", "plan-soon"), top.urgency
    points = {lv.point for lv in plain.evidence.levels if lv.channel in top.hypothesis.channels}
    elsewhere = next(lv.point for lv in plain.evidence.levels if lv.point not in points)
    here = sorted(points)[0]
    d = diagnose(reading, m, reasoner, more_facts=lambda facts, alarms: [projected(5.0, point=here)])
    assert d.advice.recommendations[0].urgency.id == "act-now"
    assert d.advice.recommendations[0].raised_by[0].point == here
    text = render(document_of(d), "text", "diagnosis")
    assert "act now, sooner than the finding alone: The trend of acceleration RMS, g at " + here in text
    d = diagnose(reading, m, reasoner, more_facts=lambda facts, alarms: [projected(5.0, point=elsewhere)])
    assert d.advice.recommendations[0].urgency == top.urgency     # the finding was not seen there
    assert d.advice.urgency.id == "act-now"                       # the machine still is, and says why
    assert d.advice.raised_by[0].point == elsewhere


def test_a_rule_asking_for_an_unknown_step_is_a_rulebook_error(reasoner, tmp_path):
    from engine.common.errors import RulebookError
    from engine.reasoning import Reasoner, load_rulebook

    site = tmp_path / "site.yaml"
    site.write_text("""rulebook: test
rules:
  - id: test.time-to-act.misspelt
    title: misspelt step
    source: test
    needs: [{fact: trend, as: t, where: {indicator: accel_rms_g}}]
    derives: {fact: time_to_act, fields: {point: t.point, indicator: t.indicator, urgency: act-soon, within_days: -1}}
    certainty: 1.0
    because: "misspelt"
""")
    data = load_advice()
    from engine.advice import _urgencies
    result = Reasoner(load_rulebook(site)).reason([trend_fact()])
    with pytest.raises(RulebookError, match="'act-soon', not on the urgency scale"):
        urgency_raises(result, data, _urgencies(data))


@pytest.mark.parametrize("velocity, baseline, latest", [("in/s-peak", "0.0394 in/s RMS", "0.0866 in/s RMS"),
                                                        ("mm/s-rms", "1.00 mm/s RMS", "2.20 mm/s RMS")])
def test_the_raise_sentences_are_in_the_chosen_units(reasoner, velocity, baseline, latest):
    # 1 mm/s = 1 / 25.4 in/s (the inch is 25.4 mm exactly, NIST SP 811); a broadband level stays RMS in peak
    from engine.common.units import shown_units

    m, reading = _healthy(reasoner)
    facts = [trend_fact(indicator="velocity_rms_mm_s", indicator_name="velocity, mm/s RMS", indicator_words="velocity",
                        iso_change_significant=True, baseline=1.0, latest=2.2, baseline_mm_s=1.0, latest_mm_s=2.2),
             projected(5.0, id="trend-2", indicator="velocity_rms_mm_s", indicator_name="velocity, mm/s RMS",
                       indicator_words="velocity", projection_to="zone boundary C/D (4.5 mm/s)",
                       projection_words="zone boundary C/D", projection_boundary="C/D")]
    d = diagnose(reading, m, reasoner, more_facts=lambda *_: facts)
    doc = document_of(d, units=shown_units(None, velocity))
    said = {r["rule"]: r["because"] for r in doc["verdict"]["urgency_raised_by"]}
    assert set(said) == {"trend.time-to-act.projected-crossing", "trend.time-to-act.velocity-change"}
    crossing = said["trend.time-to-act.projected-crossing"]
    assert crossing.startswith("The trend of velocity at P1H projects zone boundary C/D in 10.0 days"), crossing
    change = said["trend.time-to-act.velocity-change"]
    assert f"went from a baseline of {baseline} to {latest}, a change" in change, change
    if velocity.startswith("in/s"):
        assert "mm/s" not in crossing + change
        text = " ".join(render(doc, "text", "diagnosis").split())
        assert f"sooner because of the trend (watch): Broadband velocity at P1H went from a baseline of {baseline}" \
               in text, text


# rulebooks/time-to-act.yaml trend.time-to-act.degradation-under-way: the rise test of rulebooks/trend/onset.yaml
# (10 times the healthy level in 2 surveys in a row; common practice, its source there) asks for plan soon
@pytest.mark.parametrize("over, step", [
    ({"indicator": "accel_peak_g", "degradation_under_way": True, "risen_fold": 57.0}, "plan-soon"),
    ({"indicator": "accel_rms_g", "degradation_under_way": True, "risen_fold": 12.0}, "plan-soon"),
    ({"indicator": "accel_peak_g", "degradation_under_way": False, "risen_fold": 0.0}, None),
], ids=["peak-57-fold", "rms-12-fold", "not-under-way"])
def test_degradation_under_way_asks_to_plan_soon(reasoner, over, step):
    assert asked(reasoner, trend_fact(**over)) == ([step] if step else [])


def test_degradation_under_way_says_how_many_times_its_healthy_level(reasoner):
    (f,) = reasoner.reason([trend_fact(indicator="accel_peak_g", indicator_words="acceleration peak, g",
                                       degradation_under_way=True, risen_fold=57.3)]).derived("time_to_act")
    assert f.rule_id == "trend.time-to-act.degradation-under-way"
    assert "At P1H the acceleration peak, g stands 57.3 times its healthy level" in " ".join(f.because.split())


# trend.time-to-act.projected-act-by: the act-by time (best expected score, a late answer costing four times as
# fast as an early one: the IEEE PHM 2012 challenge's score, as ../shared/datasets/README.md quotes it) asks for
# the step whose window holds it, only where it comes before the 80 % interval's early end
@pytest.mark.parametrize("act_by, steps", [
    (5.0, ["act-now", "plan-soon"]),     # act-by 5 days: act now; the early end 20 days: plan soon
    (25.0, ["plan-soon"]),               # after the early end: the crossing rule alone
    (-1.0, ["plan-soon"]),               # no act-by time (a path without draws)
], ids=["act-by-first", "act-by-later", "no-act-by"])
def test_the_act_by_time_counts_where_it_is_sooner_than_the_interval(reasoner, act_by, steps):
    assert sorted(asked(reasoner, projected(20.0, projected_act_by_days=act_by))) == sorted(steps)


def test_a_stored_diagnosis_raised_by_degradation_under_way(reasoner):
    m, reading = _healthy(reasoner)
    d = diagnose(reading, m, reasoner, more_facts=lambda facts, alarms: [
        trend_fact(indicator="accel_peak_g", degradation_under_way=True, risen_fold=30.0)])
    assert d.advice.urgency.id == "plan-soon"
    (why,) = d.advice.raised_by
    assert why.rule_id == "trend.time-to-act.degradation-under-way" and why.point == "P1H"
