"""Site alarm bands in the trend: a band can be a --limit (a misspelt one lists the stored bands), every
alarm at a point is projected to its danger level, and the trend shows the alarm's levels and which
readings passed them, with readable names (not the store's band[...]_g)."""

from __future__ import annotations

import json

import numpy as np
import pytest

from engine.advice import ZoneScale
from engine.history.record import indicator_label
from engine.report import render
from engine.trend.facts import trend_facts
from engine.trend.report import trend_from_rows

from support import one_error_line

SCALE = ZoneScale(2, "rigid", 1.4, 2.8, 4.5, False, "ISO 20816-3 (from memory)")
BAND = "band[2000-6000 Hz]_g"
ALARM = {"point": "P1H", "band": "2000-6000 Hz", "unit": "g RMS", "indicator": BAND, "alert": 0.05, "danger": 0.2}
# an invented series (demo data): ten healthy readings, then a band level growing 40 % a reading
BAND_VALUES = [0.010, 0.011, 0.010, 0.009, 0.010, 0.011, 0.010, 0.010, 0.011, 0.010] + \
    [0.010 * 1.4 ** k for k in range(1, 9)]


def _rows(values, name=BAND):
    return [{"id": i + 1, "taken_at": f"2026-01-{1 + i:02d}T08:00:00", "channel": "P1H", "point": "P1H",
             "direction": "horizontal", "indicators": {"velocity_rms_mm_s": 1.0, name: v}}
            for i, v in enumerate(values)]


def test_band_indicators_read_as_words():
    assert indicator_label(BAND) == "band 2000-6000 Hz, g RMS"
    assert indicator_label("band[1X]_mm_s") == "band 1X, mm/s RMS"
    assert indicator_label("kurtosis") == "kurtosis"


def test_an_alarm_is_projected_to_its_danger_level_and_its_passes_are_listed():
    doc = trend_from_rows("M", _rows(BAND_VALUES), SCALE, alarms=[ALARM], plots=True)
    (p,) = doc["points"]
    proj = next(x for x in p["projections"] if x["indicator"] == BAND)
    assert proj["limit_label"] == "alarm danger level 2000-6000 Hz = 0.2 g RMS" and proj["limit"] == 0.2
    assert proj["projected"] and proj["days"] > 0
    (row,) = p["alarms"]
    passed = [v for v in BAND_VALUES if v >= 0.05]            # 0.0538, 0.0753, 0.105, 0.148
    assert [r["value"] for r in row["passed"]] == pytest.approx(passed, rel=1e-3)
    assert [r["state"] for r in row["passed"]] == ["alert"] * len(passed)
    assert row["latest_state"] == "alert" and row["label"] == "band 2000-6000 Hz, g RMS"
    # the fact the rules read names it in words and carries the projection to the alarm
    fact = next(f for f in trend_facts(doc) if f["indicator"] == BAND)
    assert fact["indicator_name"] == "band 2000-6000 Hz, g RMS" and fact["projection_boundary"] == "limit"
    assert fact["projected_low_days"] >= 0 and fact["projected_low_days"] <= fact["projected_days"]
    text = render(doc, "text", "trend")
    assert "band 2000-6000 Hz, g RMS (2000-6000 Hz): alert 0.05, danger 0.2 g RMS; latest 0.1476, alert; " \
           "passed by 4 reading(s)" in text, text
    assert "band[" not in text.split("site alarms")[0].split("projections:")[0]
    plot = next(x for x in p["plots"] if x["title"] == "P1H: band 2000-6000 Hz, g RMS")
    assert "danger 2000-6000 Hz" in plot["svg"] and "alert 2000-6000 Hz" in plot["svg"]


def test_an_alarm_past_danger_reads_danger_and_a_quiet_one_no_pass():
    values = BAND_VALUES[:-1] + [0.25]
    (p,) = trend_from_rows("M", _rows(values), SCALE, alarms=[ALARM])["points"]
    assert p["alarms"][0]["passed"][-1]["state"] == "danger" and p["alarms"][0]["latest_state"] == "danger"
    (p,) = trend_from_rows("M", _rows([0.01] * 6), SCALE, alarms=[ALARM])["points"]
    assert p["alarms"][0]["passed"] == [] and p["alarms"][0]["latest_state"] == "within"


def test_an_alarm_at_another_point_is_not_shown_here():
    (p,) = trend_from_rows("M", _rows(BAND_VALUES), SCALE, alarms=[{**ALARM, "point": "P2V"}])["points"]
    assert p["alarms"] == [] and not any(x["indicator"] == BAND for x in p["projections"])


@pytest.fixture
def store(tmp_path):
    from engine.history.store import Store

    path = tmp_path / "h.sqlite"
    with Store(path) as s:
        for i, v in enumerate(BAND_VALUES):
            s.add({"content_hash": f"h{i}", "machine": "M", "machine_file": None, "source": f"r{i}.wav",
                   "taken_at": f"2026-01-{1 + i:02d}T08:00:00", "time_from": "route", "speed_rpm": 1485.0,
                   "elapsed_s": 0.1, "fs_hz": 25600.0, "duration_s": 4.0,
                   "verdict": {"urgency": "none", "urgency_label": "no action", "worst_zone": "A", "withheld": False,
                               "summary": "s"},
                   "top": None, "hypotheses": [],
                   "channels": [{"channel": "P1H", "point": "P1H", "direction": "horizontal", "location": "pump_de",
                                 "zone": "A"}],
                   "indicators": [{"channel": "P1H", "name": "velocity_rms_mm_s", "value": 1.0},
                                  {"channel": "P1H", "name": BAND, "value": v}]})
    return path


@pytest.mark.parametrize("written", ["band[2000-6000 Hz]_g=0.3", "band[2000-6000 Hz]=0.3"],
                         ids=["stored-name", "without-unit"])
def test_a_band_is_a_limit(store, capsys, written):
    from engine.cli import main

    assert main(["trend", "M", "--store", str(store), "--limit", written, "--format", "json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    proj = next(x for x in doc["points"][0]["projections"] if x["limit_label"].startswith("limit"))
    assert proj["indicator"] == BAND and proj["limit"] == 0.3 and proj["projected"]
    # a limit above the last reading (0.148) is reached later
    assert np.isfinite(proj["days"]) and proj["days"] > 0


def test_a_misspelt_band_lists_the_stored_bands(store, capsys):
    err = one_error_line(capsys, 2, ["trend", "M", "--store", store, "--limit", "band[2000-600 Hz]=0.15"])
    assert "no stored site alarm band of that name" in err
    assert "band[2000-6000 Hz]_g (band 2000-6000 Hz, g RMS)" in err and str(store) in err, err


def test_diagnose_with_history_projects_a_band_to_its_danger_level_and_acts_sooner(tmp_path):
    """diagnose --store: the reading's band value ends the band's trend, the alarm's danger level is its
    limit, and a crossing projected within days makes a quiet diagnosis 'act now', saying why."""
    from engine.advice import load_advice, zone_scale
    from engine.history.store import Store
    from engine.machine import load_machine
    from engine.pipeline import diagnose
    from engine.simulation import as_reading, simulate
    from engine.trend.diagnosis import HistoryLink

    from support import RW2, reasoner

    machine_file = tmp_path / "rw2.yaml"
    text = RW2.read_text().split("\nalarms:")[0]
    rules = reasoner()
    reading = as_reading(simulate(load_machine(RW2), "healthy", None, 1, None, 12800.0, 3.0, 5))
    machine_file.write_text(text + "\nalarms:\n  - {point: P1H, band: 2000-6000 Hz, quantity: acceleration_g_rms, "
                                   "alert: 1.0, danger: 2.0}\n")
    probe = diagnose(reading, load_machine(machine_file), rules)
    (now,) = [a["value"] for a in probe.alarms if a["point"] == "P1H"]
    assert probe.advice.urgency.id == "none"
    # the alarm's levels set from this reading's value: danger 1.6 times it, a little more than one
    # reading's rise of the invented daily series below (40 % a day after ten steady days)
    machine_file.write_text(text + "\nalarms:\n  - {point: P1H, band: 2000-6000 Hz, quantity: acceleration_g_rms, "
                                   f"alert: {0.5 * now:.6g}, danger: {1.6 * now:.6g}}}\n")
    machine = load_machine(machine_file)
    earlier = [now / 1.4 ** 9] * 10 + [now / 1.4 ** k for k in range(8, 0, -1)]
    with Store(tmp_path / "h.sqlite") as store:
        for i, v in enumerate(earlier):
            store.add({"content_hash": f"h{i}", "machine": machine.name, "machine_file": None, "source": f"r{i}.wav",
                       "taken_at": f"2026-01-{1 + i:02d}T08:00:00", "time_from": "route", "speed_rpm": 1485.0,
                       "elapsed_s": 0.1, "fs_hz": 12800.0, "duration_s": 3.0,
                       "verdict": {"urgency": "none", "urgency_label": "no action", "worst_zone": "A",
                                   "withheld": False, "summary": "s"},
                       "top": None, "hypotheses": [],
                       "channels": [{"channel": "P1H", "point": "P1H", "direction": "horizontal",
                                     "location": "pump_de", "zone": "A"}],
                       "indicators": [{"channel": "P1H", "name": "band[2000-6000 Hz]_g", "value": v}]})
        link = HistoryLink(store, machine, zone_scale(machine, load_advice()), content_hash="now",
                           taken_at="2026-01-19T08:00:00", plots=False)
        d = diagnose(reading, machine, rules, more_facts=link)
    (p,) = [p for p in link.doc["points"] if p["point"] == "P1H"]
    proj = next(x for x in p["projections"] if x["indicator"] == "band[2000-6000 Hz]_g")
    assert proj["projected"] and proj["limit_label"].startswith("alarm danger level 2000-6000 Hz")
    assert d.advice.urgency.id == "act-now", (proj, d.advice.urgency)
    (why,) = d.advice.raised_by
    assert why.point == "P1H" and "band 2000-6000 Hz, g RMS at P1H projects alarm danger level" in why.because


# A weekly pump's 2000-6000 Hz band (invented, demo data, shaped like a simulated growing inner race): seven
# healthy weeks scattered +-12 % about 0.007 g, the defect from week 8 (too small to show), then steps up at
# weeks 10 and 13 as the damage spreads. The point's acceleration RMS is held flat, so only the band's own
# readings can tell that it degrades.
WEEKLY_BAND = [0.0071, 0.0067, 0.0061, 0.0077, 0.0075, 0.0071, 0.0072, 0.0080, 0.0084,
               0.0248, 0.0308, 0.0307, 0.0921, 0.0952, 0.0966]


def _weekly(values):
    from datetime import datetime, timedelta

    start = datetime(2026, 1, 5, 9)
    return [{"id": i + 1, "taken_at": (start + timedelta(days=7 * i)).isoformat(), "channel": "PDEH",
             "point": "PDEH", "direction": "horizontal",
             "indicators": {"accel_rms_g": 0.0225, "velocity_rms_mm_s": 1.0, BAND: v}} for i, v in enumerate(values)]


def test_an_acceleration_band_grows_as_damage_does_and_dates_its_own_start():
    from engine.trend.report import growth_of

    # impacts ring in an acceleration band: the exponential model; a velocity band (1X) creeps: auto
    assert growth_of(BAND) == "exponential" and growth_of("band[1X]_mm_s") == "auto"
    alarm = {**ALARM, "point": "PDEH"}
    for weeks in (13, 14, 15):
        doc = trend_from_rows("M", _weekly(WEEKLY_BAND[:weeks]), SCALE, alarms=[alarm])
        (p,) = doc["points"]
        proj = next(x for x in p["projections"] if x["indicator"] == BAND)
        # its start is the first week of the rise (week 10), never the healthy scatter of weeks 4 to 7
        assert proj["onset"] == "2026-03-09T09:00" and proj["readings_since_onset"] == weeks - 9, (weeks, proj)
        assert proj["method"].startswith("first predicting time"), proj["method"]
        # the band passed 0.2 g within three weeks of week 13 in the run it is shaped like: the early end of the
        # interval lies inside the act-now window (under 14 days, rulebooks/advice/severity.yaml)
        assert proj["projected"] and 0 <= proj["low_days"] < 14, (weeks, proj)
        fact = next(f for f in trend_facts(doc) if f["indicator"] == BAND)
        assert fact["degradation_began"] and fact["projection_boundary"] == "limit"
        assert fact["readings_since_onset"] == weeks - 9
