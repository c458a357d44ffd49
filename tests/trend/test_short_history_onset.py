"""A short monthly history: a rise far beyond healthy scatter is degradation under way before a healthy band can be
made, a healthy short history is not, readings the store holds as diagnosed faulty are not healthy baseline, and a
velocity projection months away does not stand alone when the diagnosis or the acceleration says act sooner."""

from __future__ import annotations

from datetime import datetime, timedelta

import numpy as np
import pytest

from engine.advice import ZoneScale
from engine.history.store import Store
from engine.trend.health import shipped_settings, smooth_log
from engine.trend.onset import first_predicting_time
from engine.trend.report import MIN_PROJECTION_READINGS, governing, trend_document, trend_from_rows
from tests.support import ROOT, RW2

SCALE = ZoneScale(2, "rigid", 1.4, 2.8, 4.5, False, "ISO 20816-3 (from memory)")
MACHINE = "RW-2 raw water pump"
# a stage-4 inner race on a monthly route, as the new analyst's trial saw it (item 11) and as `tellwave synth`
# gives it on the demo pump (healthy, then stages 1 to 4 a month apart; invented data): acceleration RMS and peak
RMS_G = [0.0320, 0.0333, 0.0817, 0.3607, 2.5385]
PEAK_G = [0.0891, 0.1215, 0.5252, 2.6251, 12.8647]


def _rows(**series):
    t0 = datetime(2026, 5, 3, 9)
    n = len(next(iter(series.values())))
    return [{"id": i + 1, "taken_at": (t0 + timedelta(days=30.5 * i)).isoformat(), "channel": "P1H", "point": "P1H",
             "direction": "horizontal", "indicators": {k: v[i] for k, v in series.items()}} for i in range(n)]


def _onset(raw, every_days=30.5, healthy=None):
    raw = np.asarray(raw, float)
    s = shipped_settings()
    return first_predicting_time(smooth_log(raw, s.smooth_readings), single=smooth_log(raw, 1),
                                 days=np.arange(len(raw)) * every_days, healthy=healthy)


def test_the_rule_and_its_source_are_in_the_rulebook():
    s = shipped_settings()
    assert s.rise_ratio == 10 and s.rise_in_row == 2
    from engine.common.errors import RulebookError
    from engine.common.yamlfile import read_yaml
    from engine.trend.health import ONSET_FILE

    onset = read_yaml(ONSET_FILE, RulebookError).data["onset"]
    assert "common practice" in onset["rise_source"] and "25 %" in onset["rise_source"]


def test_a_many_fold_rise_in_five_monthly_readings_is_degradation_under_way():
    # the old rule answered "5 reading(s): too few to tell whether degradation has begun"; the acceleration RMS
    # stands 11 and 79 times its healthy level at the last two readings, past the rise ratio of 10 (common practice)
    on = _onset(RMS_G)
    assert on.index == 3 and on.fold == pytest.approx(2.5385 / np.median(RMS_G[:3]), rel=1e-6)
    assert on.reason.startswith("degradation under way") and "too few to tell" not in on.reason


def test_the_trend_says_degradation_under_way_and_to_act_on_the_diagnosis():
    doc = trend_from_rows(MACHINE, _rows(accel_rms_g=RMS_G, accel_peak_g=PEAK_G), SCALE, limits={"accel_peak_g": 20.0})
    (p,) = [x for x in doc["points"][0]["projections"] if x["indicator"] == "accel_peak_g"]
    assert not p["projected"] and p["risen_fold"] > 50
    assert "degradation under way" in p["reason"] and "act on the diagnosis" in p["reason"]
    assert "too few to tell" not in p["reason"]
    from engine.report import render
    assert "risen" in render(doc, "text", "trend")


def test_a_many_fold_rise_with_enough_readings_since_is_projected():
    # three healthy readings, then four rising ones at 20 to 300 times: the rise test dates the start at the 4th
    # reading and the 4 readings since carry a projection (a fit needs at least 4)
    rms = [0.03, 0.031, 0.029, 0.6, 1.5, 3.8, 9.0]
    on = _onset(rms)
    assert on.index == 3 and on.early == 3
    doc = trend_from_rows(MACHINE, _rows(accel_rms_g=rms), SCALE, limits={"accel_rms_g": 30.0})
    (p,) = doc["points"][0]["projections"]
    assert p["readings_since_onset"] == MIN_PROJECTION_READINGS and p["projected"] and p["days"] > 0
    assert p["risen_fold"] == pytest.approx(9.0 / 0.03, rel=1e-3)


@pytest.mark.parametrize("n", [3, 4, 5, 6, 7, 8])
def test_a_healthy_short_history_is_never_called_degrading(n):
    # lognormal scatter of 30 % between surveys (wider than healthy acceleration levels scatter, common practice)
    # and one reading 10 times the level at the end (a knock): 2000 simulated histories, no start declared
    rng = np.random.default_rng(2028 + n)
    for _ in range(2000):
        raw = 0.05 * np.exp(rng.normal(0.0, 0.3, n))
        assert _onset(raw).index is None
        raw[-1] *= 10.0
        assert _onset(raw).index is None
    assert "too few to tell" in _onset(np.full(n, 0.05)).reason


def test_the_rise_test_never_runs_where_the_band_can_be_made(rng):
    # a long healthy history whose last two readings are 12 times the level: the band's own tests decide (a
    # burst of two is no start), the rise test stands in only where no band can be made
    raw = np.r_[np.exp(rng.normal(0.0, 0.1, 20)), [12.0, 12.0]]
    assert _onset(raw).index is None


def test_readings_diagnosed_faulty_are_not_the_healthy_band():
    # twelve monthly readings: two healthy, a confident fault call from the 3rd on and a rise from it. Made of the
    # first 6 readings the band holds the rise and reads it as healthy; made of the 2 healthy ones it cannot be
    # made, and the rise test dates the start where the readings first stood 10 times their level (0.35 g)
    rms = [0.030, 0.031, 0.09, 0.15, 0.22, 0.3, 0.35, 0.4, 0.5, 0.6, 0.65, 0.7]
    plain = _onset(rms)
    assert plain.index is None and "within the healthy band" in plain.reason
    capped = _onset(rms, healthy=2)
    assert capped.index == 6 and capped.early == 2
    assert capped.fold == pytest.approx(0.7 / np.sqrt(0.03 * 0.031), rel=1e-9)     # over the 2 healthy ones
    only = _onset(rms[:5], healthy=2)
    assert only.index is None and "only 2 healthy reading(s), before the first confident fault call" in only.reason


def _call(reading, taken_at, certainty=0.82):
    return {"reading_id": reading, "taken_at": taken_at, "fault": "inner-race", "fault_name": "inner-race defect",
            "component": "pump_de", "certainty": certainty, "points": ["P1H", "P1A"]}


def test_the_baseline_leaves_out_readings_diagnosed_faulty():
    rows = _rows(accel_peak_g=PEAK_G, velocity_rms_mm_s=[0.72, 0.58, 0.61, 0.86, 0.95])
    plain = trend_from_rows(MACHINE, rows, SCALE)["points"][0]
    assert plain["healthy_baseline"] is None
    peak = next(i for i in plain["indicators"] if i["name"] == "accel_peak_g")
    assert peak["baseline"] == pytest.approx(np.median(PEAK_G[:3]), abs=1e-4)      # holds two faulty readings
    doc = trend_from_rows(MACHINE, rows, SCALE, calls=[_call(2, rows[1]["taken_at"])])["points"][0]
    peak = next(i for i in doc["indicators"] if i["name"] == "accel_peak_g")
    assert peak["baseline"] == pytest.approx(PEAK_G[0], abs=1e-4) and peak["baseline_readings"] == 1
    hb = doc["healthy_baseline"]
    assert hb["healthy_readings"] == 1 and not hb["holds_faulty"]
    assert "before 2026-06-02" in hb["why"] and "82 %" in hb["why"]
    assert doc["iso_change"]["baseline_mm_s"] == pytest.approx(0.72)
    from engine.report import render
    assert "healthy baseline: the baseline is the 1 reading(s)" in render({**trend_from_rows(
        MACHINE, rows, SCALE, calls=[_call(2, rows[1]["taken_at"])])}, "text", "trend")


def test_a_call_at_another_bearing_or_before_a_repair_leaves_the_baseline():
    rows = _rows(accel_peak_g=PEAK_G)
    other = {**_call(2, rows[1]["taken_at"]), "points": ["P2H"]}
    assert trend_from_rows(MACHINE, rows, SCALE, calls=[other])["points"][0]["healthy_baseline"] is None
    first = trend_from_rows(MACHINE, rows, SCALE, calls=[_call(1, rows[0]["taken_at"])])["points"][0]
    assert first["healthy_baseline"]["holds_faulty"] and "holds faulty readings" in first["healthy_baseline"]["why"]


def _record(n, when, peak, rms, certainty, urgency):
    return {"content_hash": f"h{n}", "machine": MACHINE, "machine_file": str(RW2), "source": f"r{n}.wav",
            "taken_at": when, "time_from": "route", "speed_rpm": 1486.0, "elapsed_s": 0.1, "fs_hz": 25600.0,
            "duration_s": 4.0, "verdict": {"urgency": urgency, "urgency_label": urgency, "worst_zone": "A",
                                           "withheld": False, "summary": "s"}, "top": None,
            "channels": [{"channel": "P1H", "point": "P1H", "direction": "horizontal", "location": "pump_de",
                          "zone": "A"}],
            "indicators": [{"channel": "P1H", "name": "velocity_rms_mm_s", "value": 0.7 + 0.06 * n},
                           {"channel": "P1H", "name": "accel_peak_g", "value": peak},
                           {"channel": "P1H", "name": "accel_rms_g", "value": rms}],
            "hypotheses": [{"rank": 1, "fault": "inner-race", "fault_name": "inner-race defect",
                            "component": "pump_de", "certainty": certainty, "urgency": urgency}]}


def test_the_stored_history_reads_right_end_to_end(tmp_path):
    # the history as `diagnose --store` keeps it: inner race called at 30 % (not confident) then 82 % from the
    # 2nd reading; the latest diagnosis says act now
    certainties = [0.3, 0.82, 0.9, 0.9, 0.85]
    urgencies = ["none", "plan", "plan", "plan-soon", "act-now"]
    with Store(tmp_path / "h.sqlite") as store:
        for i in range(5):
            store.add(_record(i, (datetime(2026, 5, 3, 9) + timedelta(days=31 * i)).isoformat(), PEAK_G[i], RMS_G[i],
                              certainties[i], urgencies[i]))
        assert [c["reading_id"] for c in store.confident_calls(MACHINE, 0.5)] == [2, 3, 4, 5]
        doc = trend_document(store, MACHINE, point="P1H", limits={"accel_peak_g": 20.0})
    (p,) = doc["points"]
    assert p["healthy_baseline"]["healthy_readings"] == 1 and p["healthy_baseline"]["reading"] == 2
    peak = next(x for x in p["projections"] if x["indicator"] == "accel_peak_g")
    assert "act on the diagnosis" in peak["reason"] and peak["risen_fold"] == pytest.approx(12.8647 / 0.0891, rel=1e-3)
    g = p["governs"]
    velocity = next(x for x in p["projections"] if x["indicator"] == "velocity_rms_mm_s")
    assert velocity["projected"] and velocity["days"] > 30          # months away: reads as reassurance alone
    assert g is not None and g["by"] == "diagnosis" and "act now" in g["because"][0] and g["fold"] > 100
    from engine.report import render
    text = render(doc, "text", "trend")
    assert "which time governs: the diagnosis of the latest reading says act now" in text
    assert "not a time to wait" in text


def test_which_time_governs_names_the_velocity_projection_in_the_shown_units(tmp_path):
    from engine.common.units import shown_units

    with Store(tmp_path / "h.sqlite") as store:
        for i in range(5):
            store.add(_record(i, (datetime(2026, 5, 3, 9) + timedelta(days=31 * i)).isoformat(), PEAK_G[i], RMS_G[i],
                              0.9, "act-now"))
        doc = trend_document(store, MACHINE, point="P1H", units=shown_units(None, "in/s-peak"))
    (p,) = doc["points"]
    g = p["governs"]
    shown = p["projections"][g["projection"]]
    assert g["limit_label"] == shown["limit_label"] and "in/s" in g["limit_label"]
    assert p["healthy_baseline"]["holds_faulty"]          # called faulty from the first reading on


def _entry(days=150.0, peak=(0.1, 0.12)):
    """A point of a trend document (the fields ``trend_from_rows`` gives that the trend facts read): a velocity
    projected to A/B in ``days``, and an acceleration peak from ``peak[0]`` to ``peak[1]`` over 6 readings, its
    latest two at that level (so ``risen_fold`` is the fold when it is 10 or more, rulebooks/trend/onset.yaml)."""
    fold = peak[1] / peak[0]
    return {"point": "P1H", "direction": "horizontal",
            "projections": [{"indicator": "velocity_rms_mm_s", "label": "velocity, mm/s RMS", "projected": True,
                             "method": "CUSUM", "days": days, "low_days": days / 2, "high_days": days * 2,
                             "act_by_days": None, "onset": None, "readings_since_onset": None, "risen_fold": None,
                             "limit_label": "zone boundary A/B (1.4 mm/s)"}],
            "indicators": [{"name": "accel_peak_g", "label": "acceleration peak, g", "baseline": peak[0],
                            "latest": peak[1], "readings": 6, "change_pct": 100.0 * (fold - 1.0),
                            "rate_per_month": 0.0, "change_db": None,
                            "risen_fold": fold if fold >= shipped_settings().rise_ratio else None}]}


OPENS = {"act-now": 0, "plan-soon": 14, "plan": 28, "none": 91}     # rulebooks/advice/severity.yaml


@pytest.mark.parametrize("urgency, peak, days, by", [
    ("act-now", (0.1, 0.12), 150.0, "diagnosis"),
    ("plan", (0.1, 0.12), 150.0, "diagnosis"),       # its window opens at 28 days, before the crossing
    ("plan", (0.1, 0.12), 20.0, None),                # the trend is sooner: the projection stands
    ("none", (0.1, 0.12), 150.0, None),               # nothing to do sooner
    ("none", (0.1, 1.5), 150.0, "trend"),             # the acceleration has risen 15-fold
    ("none", (0.1, 0.9), 150.0, None),                # 9-fold: below the rise ratio
])
def test_the_sooner_of_diagnosis_and_trend_governs(urgency, peak, days, by):
    g = governing(_entry(days, peak), {"id": urgency, "label": urgency, "within": "w"}, OPENS)
    assert (g and g["by"]) == by


def test_the_readme_says_what_the_code_needs():
    text = " ".join((ROOT / "README.md").read_text(encoding="utf-8").split())
    s = shipped_settings()
    assert f"at least {MIN_PROJECTION_READINGS} readings" in text
    assert f"{s.early_min} readings for its healthy band" in text
    assert f"{s.rise_ratio:g} times their healthy level" in text
