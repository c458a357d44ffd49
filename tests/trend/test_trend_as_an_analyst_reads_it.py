"""What a new analyst read wrong in `tellwave trend` on the demo plant's monthly routes (invented data): a bearing
line not found in the latest surveys (the bearing was replaced) showed its last value as the latest, rising."""

from __future__ import annotations

from datetime import datetime, timedelta

from engine.advice import ZoneScale
from engine.report import render
from engine.trend.report import trend_from_rows

SCALE = ZoneScale(2, "rigid", 1.4, 2.8, 4.5, False, "ISO 20816-3 (from memory)")


def _rows():
    # five monthly readings at P1H: the BPFI line in the spectrum found in the first three only
    t0 = datetime(2026, 1, 12, 8, 30)
    out = []
    for i in range(5):
        ind = {"velocity_rms_mm_s": 0.6 + 0.01 * i, "accel_rms_g": 0.03}
        if i < 3:
            ind["tone_BPFI_g"] = [0.004, 0.01, 0.026][i]
        out.append({"id": i + 1, "taken_at": (t0 + timedelta(days=30 * i)).isoformat(), "channel": "P1H",
                    "point": "P1H", "direction": "horizontal", "indicators": ind})
    return out


def test_a_line_not_found_lately_says_its_latest_value_is_older():
    doc = {**trend_from_rows("RW-2 raw water pump", _rows(), SCALE, plots=True), "store": "h.sqlite"}
    (p,) = doc["points"]
    tone = next(i for i in p["indicators"] if i["name"] == "tone_BPFI_g")
    assert tone["not_found_since"] == 2 and tone["latest_at"].startswith("2026-03-13")
    velocity = next(i for i in p["indicators"] if i["name"] == "velocity_rms_mm_s")
    assert velocity["not_found_since"] == 0
    assert "(not found in the 2 latest reading(s): latest from 2026-03-13)" in render(doc, "text", "trend")
    for fmt in ("md", "html"):
        assert "(from 2026-03-13: not found in the 2 latest reading(s))" in render(doc, fmt, "trend"), fmt


def test_a_level_past_c_d_says_why_there_is_no_projection_in_every_format():
    # BW-1's blower end on the demo's sixth survey: velocity in zone D (past C/D = 4.5 mm/s for group 2 rigid,
    # ISO 20816-3, from memory) and no --limit: text said why nothing was projected, Markdown and HTML said nothing
    t0 = datetime(2026, 1, 12, 8, 36)
    rows = [{"id": i + 1, "taken_at": (t0 + timedelta(days=30 * i)).isoformat(), "channel": "BDEH", "point": "BDEH",
             "direction": "horizontal", "indicators": {"velocity_rms_mm_s": v}}
            for i, v in enumerate([2.5, 2.6, 3.4, 2.1, 2.1, 4.6])]
    doc = {**trend_from_rows("BW-1 backwash blower", rows, SCALE, plots=True), "store": "h.sqlite"}
    assert doc["points"][0]["projections"] == []
    for fmt in ("text", "md", "html"):
        assert "past the last zone boundary (C/D), so there is no boundary left to project to" in render(doc, fmt,
                                                                                                          "trend"), fmt


def test_too_few_healthy_readings_for_any_limit_says_how_many_levels_it_left_out(tmp_path, capsys):
    # `alarms derive` on the demo pump (months 1 to 6, its inner race called from the first survey): the one-line
    # error named three levels of M2H and not that nine more had too few healthy readings too
    from engine.cli import main
    from engine.history.store import Store

    with Store(tmp_path / "h.sqlite") as store:
        for i in range(2):
            store.add({"content_hash": f"h{i}", "machine": "RW-2 raw water pump", "machine_file": None,
                       "source": f"r{i}.wav", "taken_at": f"2026-0{i + 1}-12T08:30:00", "time_from": "route",
                       "speed_rpm": 1486.0, "elapsed_s": 0.1, "fs_hz": 25600.0, "duration_s": 2.0,
                       "verdict": {"urgency": "none", "urgency_label": "no action", "worst_zone": "A",
                                   "withheld": False, "summary": "s"}, "top": None, "hypotheses": [],
                       "channels": [{"channel": p, "point": p, "direction": "horizontal", "location": "",
                                     "zone": "A"} for p in ("P1H", "P2H", "M2H", "M1H")],
                       "indicators": [{"channel": p, "name": n, "value": 0.5} for p in ("P1H", "P2H", "M2H", "M1H")
                                      for n in ("velocity_rms_mm_s", "accel_rms_g", "accel_peak_g")]})
    assert main(["alarms", "derive", "RW-2 raw water pump", "--store", str(tmp_path / "h.sqlite")]) == 2
    err = capsys.readouterr().err
    assert "too few healthy readings" in err and err.count("2 healthy reading(s), 6 needed") == 3
    assert "; and 9 more)" in err and len(err.strip().splitlines()) == 1
