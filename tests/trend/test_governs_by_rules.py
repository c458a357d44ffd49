"""Which time governs follows the rules on the trend (rulebooks/time-to-act.yaml), not Python: degradation under way
by the rise test (rulebooks/trend/onset.yaml) asks for plan soon through a rule a site can change, and a single
reading far up (a knock) is not a rise."""

from __future__ import annotations

from datetime import datetime, timedelta

import pytest

from engine.advice import ZoneScale
from engine.trend.acting import trend_raises
from engine.trend.report import governing, trend_from_rows

SCALE = ZoneScale(2, "rigid", 1.4, 2.8, 4.5, False, "ISO 20816-3 (from memory)")
MACHINE = "RW-2 raw water pump"
OPENS = {"act-now": 0, "plan-soon": 14, "plan": 28, "none": 91}     # rulebooks/advice/severity.yaml
RULE = "trend.time-to-act.degradation-under-way"


def _rows(peak, velocity):
    t0 = datetime(2026, 1, 12, 8, 30)
    return [{"id": i + 1, "taken_at": (t0 + timedelta(days=30.5 * i)).isoformat(), "channel": "P1H", "point": "P1H",
             "direction": "horizontal", "indicators": {"accel_peak_g": p, "velocity_rms_mm_s": v}}
            for i, (p, v) in enumerate(zip(peak, velocity, strict=True))]


# invented monthly history (demo data): velocity creeping toward A/B, acceleration peak from 0.1 g to 40 times that
VELOCITY = [0.60, 0.62, 0.66, 0.70, 0.75, 0.80]


@pytest.mark.parametrize("peak, fold", [
    ([0.1, 0.1, 0.1, 0.1, 2.0, 4.0], 40.0),      # the latest two at 20 and 40 times the baseline: under way
    ([0.1, 0.1, 0.1, 0.1, 0.5, 4.0], None),      # one reading 40 times up, the one before 5: a knock, not a rise
    ([0.1, 0.1, 0.1, 0.1, 0.9, 0.95], None),     # 9 and 9.5 times: below the rise ratio of 10
], ids=["two-up", "one-up", "below-ratio"])
def test_the_rise_of_an_acceleration_level_needs_two_surveys_in_a_row(peak, fold):
    (p,) = trend_from_rows(MACHINE, _rows(peak, VELOCITY), SCALE)["points"]
    ind = next(i for i in p["indicators"] if i["name"] == "accel_peak_g")
    assert ind["risen_fold"] == (pytest.approx(fold) if fold else None)
    said = trend_raises([p]).get("P1H", [])
    assert (RULE in [r["rule"] for r in said]) == (fold is not None)


def test_the_rule_sets_the_time_and_its_sentence_is_shown():
    (p,) = trend_from_rows(MACHINE, _rows([0.1, 0.1, 0.1, 0.1, 2.0, 4.0], VELOCITY), SCALE)["points"]
    velocity = next(x for x in p["projections"] if x["indicator"] == "velocity_rms_mm_s")
    g = p["governs"]
    assert velocity["projected"] and velocity["days"] > OPENS["plan-soon"], velocity    # months away
    assert g["by"] == "trend" and g["urgency"]["id"] == "plan-soon" and g["opens_days"] == 14
    assert g["rules"] == [RULE] and "stands 40.0 times its healthy level" in " ".join(g["why"][0].split())
    from engine.report import render
    text = render({"machine": MACHINE, "points": [p], **_head()}, "text", "trend")
    assert "which time governs: the trend says plan soon" in text and "why: At P1H" in text


def _head():
    doc = trend_from_rows(MACHINE, _rows([0.1] * 6, VELOCITY), SCALE)
    return {k: v for k, v in doc.items() if k not in ("machine", "points")}


def test_a_site_rule_changes_the_time_that_governs(tmp_path):
    # the same rule id in a site overlay replaces the shipped one: here it asks for act now; Python says nothing
    site = tmp_path / "site"
    site.mkdir()
    (site / "sooner.yaml").write_text(f"""rulebook: a site that acts sooner on a rise
rules:
  - id: {RULE}
    overrides: true
    title: An acceleration level risen an order of magnitude stops the machine here
    source: site practice (invented for this test)
    needs: [{{fact: trend, as: t, where: {{degradation_under_way: true}}}}]
    derives:
      fact: time_to_act
      fields: {{point: t.point, indicator: t.indicator, urgency: act-now, within_days: -1}}
    certainty: 1.0
    because: "Site rule: {{t.indicator_words}} at {{t.point}} stands {{t.risen_fold}} times its level."
""")
    (p,) = trend_from_rows(MACHINE, _rows([0.1, 0.1, 0.1, 0.1, 2.0, 4.0], VELOCITY), SCALE, site=(site,))["points"]
    said = trend_raises([p], (site,))["P1H"]
    assert [r["urgency"]["id"] for r in said if r["rule"] == RULE] == ["act-now"]
    g = governing(p, None, OPENS, said)
    assert g is not None and g["urgency"]["id"] == "act-now" and g["why"][0].startswith("Site rule:")


def test_the_diagnosis_first_at_a_tie():
    (p,) = trend_from_rows(MACHINE, _rows([0.1, 0.1, 0.1, 0.1, 2.0, 4.0], VELOCITY), SCALE)["points"]
    g = governing(p, {"id": "plan-soon", "label": "plan soon", "within": "2 to 4 weeks"}, OPENS)
    assert g is not None and g["by"] == "diagnosis" and len(g["because"]) == 2 and g["rules"] == [RULE]


def test_a_rule_fired_at_two_indicators_is_one_reason_with_both_sentences():
    # the peak and the RMS both 40 times their baseline: one "the trend says plan soon", two sentences why
    rows = _rows([0.1, 0.1, 0.1, 0.1, 2.0, 4.0], VELOCITY)
    for r in rows:
        r["indicators"]["accel_rms_g"] = r["indicators"]["accel_peak_g"] / 4.0
    (p,) = trend_from_rows(MACHINE, rows, SCALE)["points"]
    g = p["governs"]
    assert g["because"] == [f"the trend says plan soon (2 to 4 weeks: schedule the repair at the next planned stop; "
                            f"rule {RULE})"]
    assert len(g["why"]) == 2 and g["fold"] == pytest.approx(40.0)
