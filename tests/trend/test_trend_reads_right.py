"""Trends that read right: the baseline is the first readings only, a percent change needs enough readings,
dB quantities change in dB, a fit needs more readings than its parameters, times unrounded in JSON, and the
report of a diagnosis with its history shows every indicator stored."""

from __future__ import annotations

from datetime import datetime, timedelta

import numpy as np
import pytest

from engine.advice import ZoneScale
from engine.reasoning import load_rulebook
from engine.trend import change_of
from engine.trend.change import baseline_count, min_change_readings
from engine.trend.report import MIN_PROJECTION_READINGS, trend_from_rows
from engine.trend.series import Series

SCALE = ZoneScale(2, "rigid", 1.4, 2.8, 4.5, False, "ISO 20816-3 (from memory)")


def _series(values, name="accel_peak_g", every_days=30.0):
    t0 = datetime(2026, 1, 1)
    times = tuple(t0 + timedelta(days=every_days * i) for i in range(len(values)))
    return Series("M", "P1H", name, times, np.array(values, dtype=float), tuple(range(len(values))))


def _rows(values, name="accel_peak_g", every_days=30.0):
    t0 = datetime(2026, 1, 1, 8)
    return [{"id": i, "taken_at": (t0 + timedelta(days=every_days * i)).isoformat(), "channel": "P1H",
             "point": "P1H", "direction": "horizontal", "indicators": {name: v}} for i, v in enumerate(values)]


@pytest.mark.parametrize("n", range(1, 15))
def test_the_baseline_never_holds_the_latest_reading(n):
    assert baseline_count(n) <= n - 1 and (baseline_count(n) >= 1 or n == 1)


def test_three_readings_have_no_percent_change_and_a_baseline_of_the_first_two():
    # the demo pump's acceleration peak as a new user saw it: 0.48 g baseline held the latest 1.749 g
    c = change_of(_series([0.117, 0.48, 1.749]))
    assert c.baseline == pytest.approx(np.median([0.117, 0.48])) and c.baseline_readings == 2
    assert c.change == pytest.approx(1.749 - c.baseline) and c.change_pct is None
    assert min_change_readings() == load_rulebook().parameters["trend_change_min_readings"].value == 4
    c4 = change_of(_series([0.117, 0.12, 0.11, 0.5]))
    assert c4.baseline == pytest.approx(0.117) and c4.change_pct == pytest.approx(100 * (0.5 - 0.117) / 0.117)


def test_a_db_quantity_changes_in_db_never_in_percent():
    doc = trend_from_rows("M", _rows([10.0, 10.5, 9.5, 10.0, 16.0], "env_BPFO_db"), SCALE)
    (ind,) = doc["points"][0]["indicators"]
    assert ind["change_pct"] is None and ind["change_db"] == pytest.approx(6.0) and ind["unit"] == "dB"
    from engine.report import render
    assert "+6.0 dB" in render(doc, "text", "trend") and "%" not in render(doc, "text", "trend").split("per month")[1]


@pytest.mark.parametrize("n", [3, MIN_PROJECTION_READINGS])
def test_a_fit_needs_more_readings_than_its_parameters(n):
    values = 1.0 * np.exp(0.02 * 30 * np.arange(n))          # a clean exponential rise of 1X (a fitted indicator)
    doc = trend_from_rows("M", _rows(list(values), "x1_mm_s"), SCALE, limits={"x1_mm_s": 20.0})
    (proj,) = doc["points"][0]["projections"]
    if n < MIN_PROJECTION_READINGS:
        assert not proj["projected"] and "more readings than the 3 parameters" in proj["reason"]
    else:
        assert proj["projected"] and proj["days"] > 0


def test_days_to_a_limit_are_unrounded_with_seconds_beside_them():
    values = 1.0 * np.exp(0.3 * np.arange(6) / 24 * 7)   # 1X every 7 hours, rising fast
    doc = trend_from_rows("M", _rows(list(values), "x1_mm_s", every_days=7 / 24), SCALE, limits={"x1_mm_s": 20.0})
    (proj,) = doc["points"][0]["projections"]
    assert proj["projected"]
    assert proj["seconds"] == pytest.approx(proj["days"] * 86400.0, rel=1e-12)
    assert proj["days"] != round(proj["days"], 2)                 # not to 0.01 day (864 s)
    assert proj["low_seconds"] <= proj["seconds"]


def test_the_report_of_a_diagnosis_with_history_shows_every_stored_indicator():
    from engine.report import render
    names = {"velocity_rms_mm_s": 1.0, "accel_peak_g": 0.3, "kurtosis": 3.2, "env_BPFI_db": 12.0, "x1_mm_s": 0.8}
    rows = [{"id": i, "taken_at": f"2026-0{i + 1}-01T08:00:00", "channel": "P1H", "point": "P1H",
             "direction": "horizontal", "indicators": {k: v * (1 + 0.1 * i) for k, v in names.items()}}
            for i in range(5)]
    trend = trend_from_rows("M", rows, SCALE)
    from engine.history.record import INDICATORS

    from support import doc_of
    doc = dict(doc_of("rw2-impeller-unbalance"), trend=trend)
    for fmt in ("text", "md", "html"):
        out = render(doc, fmt).replace("\\_", "_")
        for name in names:
            assert INDICATORS[name][0] in out, (fmt, name)


def test_the_trend_plot_draws_the_projected_crossing_and_its_interval():
    # weekly readings, 7 healthy then a rise of acceleration RMS toward a limit of 2 g (invented data)
    rng = np.random.default_rng(8)
    values = list(np.r_[0.02 * np.exp(rng.normal(0.0, 0.05, 7)), 0.02 * np.geomspace(3.0, 40.0, 7)])
    doc = trend_from_rows("M", _rows(values, "accel_rms_g", every_days=7.0), SCALE, limits={"accel_rms_g": 2.0},
                          plots=True)
    (proj,) = doc["points"][0]["projections"]
    assert proj["projected"] and proj["days"] % 7.0 != pytest.approx(0.0, abs=1e-6)
    svg = next(p["svg"] for p in doc["points"][0]["plots"] if "acceleration" in p["title"])
    assert "to the projected crossing of the RMS (median)" in svg and "80 % interval of the crossing of the RMS" in svg


def test_the_rate_is_the_slope_of_the_latest_readings_and_the_report_says_so():
    # a level that rose and is falling back (monthly): the change (latest 7 against the baseline 1) is up,
    # the rate, the slope of the latest 4 (13, 11, 9, 7: -2 every 30 days, derived), down; both are named
    from engine.report import render
    from engine.trend.change import RATE_READINGS
    from engine.trend.series import DAYS_PER_MONTH
    doc = trend_from_rows("M", _rows([1.0, 1.0, 1.0, 5.0, 9.0, 13.0, 11.0, 9.0, 7.0], "x1_mm_s"), SCALE)
    (ind,) = doc["points"][0]["indicators"]
    assert RATE_READINGS == 4 and ind["rate_readings"] == 4
    assert ind["change"] == pytest.approx(6.0) and ind["rate_per_month"] == pytest.approx(-2.0 / 30.0 * DAYS_PER_MONTH,
                                                                                          rel=1e-3)
    assert "slope of the latest 4 readings" in render(doc, "text", "trend")


def test_the_trend_text_reads_right_a_reached_limit_a_vague_prior_and_no_empty_column():
    # the new user's wording findings (item 21), on invented weekly readings that rise past one limit
    from engine.report import render
    rng = np.random.default_rng(21)
    values = list(np.r_[0.02 * np.exp(rng.normal(0.0, 0.05, 7)), 0.02 * np.geomspace(3.0, 40.0, 7)])
    doc = trend_from_rows("M", _rows(values, "accel_rms_g", every_days=7.0), SCALE,
                          limits={"accel_rms_g": 0.5}, plots=True)
    doc["points"][0]["projections"].append(
        trend_from_rows("M", _rows(values, "accel_rms_g", every_days=7.0), SCALE,
                        limits={"accel_rms_g": 2.0})["points"][0]["projections"][0])
    text = render(doc, "text", "trend")
    assert "already reached: the last reading is at or past it" in text and "now to now" not in text
    assert "vague prior" in text and "prior: vague prior" not in text
    assert "\n\n\n" not in text.split("projections:")[1]
    md = render(doc, "md", "trend")
    assert "before the repair" not in md and "|---|---|---|---|---|\n" in md
    doc["store"] = "h.sqlite"
    assert "before the repair" not in render(doc, "html", "trend")


def test_a_small_rate_keeps_its_sign_and_size():
    # 4 decimals turned -0.00003 a month into "-0"; 4 significant figures keep it
    doc = trend_from_rows("M", _rows([0.0100, 0.0100, 0.0100, 0.00999, 0.00998, 0.00997], "accel_rms_g"), SCALE)
    (ind,) = doc["points"][0]["indicators"]
    assert ind["rate_per_month"] < 0 and abs(ind["rate_per_month"]) > 1e-6


def test_readings_before_a_repair_keep_their_curves_colour_faded():
    from engine.trend.report import BEFORE_REPAIR_COLOR, _faded
    assert _faded("#1a1a1a") == "#989898" and abs(int(BEFORE_REPAIR_COLOR[1:3], 16) - 0x98) <= 2
    assert _faded("#2a5d8a") != _faded("#1a1a1a")      # peak and RMS told apart before a repair too
