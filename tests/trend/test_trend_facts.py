"""Trend facts: they match the vocabulary, and a rule can use them."""

from __future__ import annotations

import pytest
import yaml

from engine.advice import ZoneScale
from engine.evidence.vocabulary import fields_of
from engine.reasoning import Reasoner, load_rulebook
from engine.trend.facts import trend_facts
from engine.trend.report import trend_from_rows

SCALE = ZoneScale(2, "rigid", 1.4, 2.8, 4.5, False, "ISO 20816-3 (from memory)")


def _rows(values):
    return [{"id": i, "taken_at": f"2026-0{i + 1}-01T08:00:00", "channel": "P1H", "point": "P1H",
             "direction": "horizontal", "indicators": {"velocity_rms_mm_s": v, "accel_peak_g": 0.1 * v}}
            for i, v in enumerate(values)]


def test_trend_facts_carry_every_vocabulary_field():
    facts = trend_facts(trend_from_rows("M", _rows([1.0, 1.6, 2.2, 2.8]), SCALE))
    assert {f["indicator"] for f in facts} == {"velocity_rms_mm_s", "accel_peak_g"}
    for f in facts:
        assert set(f) == set(fields_of("trend"))
    v = next(f for f in facts if f["indicator"] == "velocity_rms_mm_s")
    assert v["iso_change_significant"] is True and v["projection_to"].startswith("zone boundary C/D")
    assert v["projected_days"] > 0


SITE_RULE = {
    "rulebook": "test overlay",
    "rules": [{
        "id": "test.trend.significant-change",
        "title": "Velocity changed significantly since the baseline",
        "source": "ISO 20816-3:2022 criterion II (from memory)",
        "needs": [{"fact": "trend", "as": "t",
                   "where": {"indicator": "velocity_rms_mm_s", "iso_change_significant": True}}],
        "concludes": {"fault": "unbalance", "component": "t.point"},
        "certainty": 0.3,
        "because": "Velocity at {t.point} rose from {t.baseline} to {t.latest} mm/s.",
    }],
}


@pytest.mark.parametrize("values, fires", [([1.0, 1.6, 2.2, 2.8], True), ([1.0, 1.1, 1.0, 1.05], False)],
                         ids=["rising", "steady"])
def test_a_rule_can_use_trend_facts(tmp_path, values, fires):
    site = tmp_path / "site.yaml"
    site.write_text(yaml.safe_dump(SITE_RULE, sort_keys=False))
    result = Reasoner(load_rulebook(site)).reason(trend_facts(trend_from_rows("M", _rows(values), SCALE)))
    fired = [f.rule_id for h in result.hypotheses for f in h.support]
    assert ("test.trend.significant-change" in fired) is fires


def test_a_projection_from_every_reading_is_no_start_of_degradation():
    # four readings: too few for a change point, so the fit runs over all of them (engine/trend/projection.py)
    v = next(f for f in trend_facts(trend_from_rows("M", _rows([1.0, 1.6, 2.2, 2.8]), SCALE))
             if f["indicator"] == "velocity_rms_mm_s")
    assert v["projected_days"] > 0 and v["projected_low_days"] >= 0
    assert v["degradation_began"] is False and v["readings_since_onset"] == 0


def test_the_fact_carries_the_projection_to_an_alarm_before_one_to_a_b():
    alarm = {"point": "P1H", "band": "overall", "unit": "mm/s RMS", "indicator": "velocity_rms_mm_s",
             "alert": 2.8, "danger": 4.5}
    doc = trend_from_rows("M", _rows([0.5, 0.6, 0.7, 0.8]), SCALE, alarms=[alarm])
    labels = [x["limit_label"] for x in doc["points"][0]["projections"] if x["indicator"] == "velocity_rms_mm_s"]
    assert labels == ["zone boundary A/B (1.4 mm/s)", "alarm danger level overall = 4.5 mm/s RMS"]
    v = next(f for f in trend_facts(doc) if f["indicator"] == "velocity_rms_mm_s")
    assert v["projection_to"] == "alarm danger level overall = 4.5 mm/s RMS" and v["projection_boundary"] == "limit"
    # for the sentences: a velocity named and targeted without mm/s in words, its values as numbers in mm/s RMS
    assert v["indicator_words"] == "velocity" and v["projection_words"] == "alarm danger level overall"
    assert (v["baseline_mm_s"], v["latest_mm_s"]) == (v["baseline"], v["latest"]) == (0.6, 0.8)
    a = next(f for f in trend_facts(doc) if f["indicator"] == "accel_peak_g")
    assert a["indicator_words"] == a["indicator_name"] == "acceleration peak, g" and a["latest_mm_s"] == 0.0
