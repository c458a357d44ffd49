"""The demo plant surveyed three months running: summary with change, trend with projection,
history listing and deletion, and a single diagnosis that shows its trend."""

from __future__ import annotations

import json
from pathlib import Path

import jsonschema
import pytest

from engine.cli import main
from engine.common.yamlfile import load_schema

from support import CASES

pytestmark = pytest.mark.slow         # three simulated months of the demo plant are diagnosed first: about 15 s

PUMP = "RW-2 raw water pump"


@pytest.fixture(scope="module")
def surveyed(tmp_path_factory):
    root = tmp_path_factory.mktemp("months")
    store = str(root / "h.sqlite")
    assert main(["demo-route", "--out", str(root), "--months", "3"]) == 0
    for month in (1, 2, 3):
        assert main(["route", str(root / f"month-0{month}" / "route.yaml"), "--store", store, "--quiet",
                     "--workers", "1"]) == 0
    return root, store


def test_the_third_summary_shows_the_change_since_the_last_survey(surveyed):
    root, _ = surveyed
    doc = json.loads((root / "month-03" / "route-reports" / "summary.json").read_text())
    jsonschema.validate(doc, load_schema("route-summary.schema.json"))
    assert doc["counts"]["diagnosed"] == 7 and doc["counts"]["failed"] == 0
    first = doc["machines"][0]
    assert first["urgency"]["rank"] <= min(m["urgency"]["rank"] for m in doc["machines"])
    changes = {m["machine"]: m["change"] for m in doc["machines"]}
    assert all(c is not None and c["since"].startswith("2026-02-11") for c in changes.values())


def test_the_trend_does_not_project_three_readings(surveyed, capsys):
    _, store = surveyed
    capsys.readouterr()
    assert main(["trend", PUMP, "--store", store, "--point", "P1H", "--limit", "accel_peak_g=5",
                 "--format", "json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    jsonschema.validate(doc, load_schema("trend.schema.json"))
    (point,) = doc["points"]
    assert point["readings"] == 3 and point["iso_change"]["bc_mm_s"] == 2.8
    peak = next(p for p in point["projections"] if p["indicator"] == "accel_peak_g")
    # three readings cannot carry the exponential model's three parameters: no projection, and why
    assert not peak["projected"] and "more readings than the 3 parameters" in peak["reason"]


def test_the_trend_renders_with_zone_lines(surveyed, tmp_path, capsys):
    _, store = surveyed
    out = tmp_path / "t.html"
    assert main(["trend", PUMP, "--store", store, "--format", "html", "-o", str(out)]) == 0
    html = out.read_text()
    assert html.count("<svg") >= 3 and "B/C" in html
    assert main(["trend", PUMP, "--store", store]) == 0
    assert "zone boundary" in capsys.readouterr().out


def test_history_lists_and_deletes(surveyed, capsys, tmp_path):
    _, store = surveyed
    capsys.readouterr()
    assert main(["history", PUMP, "--store", store, "--json"]) == 0
    rows = json.loads(capsys.readouterr().out)
    assert len(rows) == 9
    assert main(["history", "--store", store]) == 0
    assert PUMP in capsys.readouterr().out
    assert main(["history", "no such machine", "--store", store]) == 2
    assert main(["history", "--store", store, "--delete", "999999"]) == 2
    copy = tmp_path / "copy.sqlite"
    copy.write_bytes(Path(store).read_bytes())
    assert main(["history", "--store", str(copy), "--delete", str(rows[0]["id"])]) == 0
    assert main(["history", PUMP, "--store", str(copy), "--json"]) == 0
    assert len(json.loads(capsys.readouterr().out.split("\n", 1)[1])) == 8


def test_a_single_diagnosis_with_the_store_shows_its_trend(surveyed, capsys):
    root, store = surveyed
    reading = next((root / "month-03").glob("rw2-p1h-*.wav"))
    code = main(["diagnose", str(reading), "--machine", str(CASES / "machines" / "rw2-raw-water-pump.yaml"),
                 "--store", store, "--format", "json"])
    assert code in (0, 7)
    doc = json.loads(capsys.readouterr().out)
    assert doc["trend"]["points"][0]["point"] == "P1H" and doc["trend"]["points"][0]["readings"] == 3
    jsonschema.validate(doc, load_schema("report.schema.json"))


@pytest.mark.parametrize("which", ["summary", "trend"])
def test_route_and_trend_html_are_well_formed_and_escape_the_data(surveyed, which):
    from engine.history.store import Store
    from engine.report import render
    from engine.trend import trend_document

    from support import HtmlChecker

    root, store = surveyed
    if which == "summary":
        doc = json.loads((root / "month-03" / "route-reports" / "summary.json").read_text())
        doc["machines"][0]["machine"] = "<script>alert(1)</script>"
        html = render(doc, "html", "route")
    else:
        with Store(store) as s:
            doc = trend_document(s, PUMP, plots=True)
        doc["machine"] = "<script>alert(1)</script>"
        html = render(doc, "html", "trend")
    checker = HtmlChecker()
    checker.feed(html)
    assert not checker.errors and not checker.stack
    assert "<script>alert" not in html and "&lt;script&gt;" in html


def test_each_reading_report_of_a_later_survey_shows_its_trend(surveyed):
    root, _ = surveyed
    first = next((root / "month-01" / "route-reports" / "reports").rglob("rw2-p1h-*.html")).read_text()
    third = next((root / "month-03" / "route-reports" / "reports").rglob("rw2-p1h-*.html")).read_text()
    assert 'id="trend"' not in first                      # nothing stored before the first survey
    assert 'id="trend"' in third and "P1H: overall velocity" in third
    assert "3 readings since 2026-01-12" in third


def test_the_spectra_of_a_point_over_the_surveys(surveyed, tmp_path, capsys):
    """The README's commands: a waterfall of P1H's three surveys and an overlay of the first and last."""
    from support import HtmlChecker

    _, store = surveyed
    capsys.readouterr()
    assert main(["trend", PUMP, "--store", store, "--point", "P1H", "--waterfall", "--format", "json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    jsonschema.validate(doc, load_schema("trend.schema.json"))
    section = doc["points"][0]["spectra"]
    assert [r["has_spectrum"] for r in section["readings"]] == [True] * 3
    marks = {m["label"]: m["frequency_hz"] for m in section["marks"]}
    # the demo pump runs at 1486 r/min (its machine file); the drive-end bearing's inner race grows month by month
    assert marks["1X"] == pytest.approx(1486 / 60, rel=0.01) and marks["2X"] == pytest.approx(2 * marks["1X"])
    bpfi = next(c for c in section["changes"] if c["at"] == "BPFI")
    assert bpfi["change"] > 0 and abs(bpfi["frequency_hz"] - marks["BPFI"]) < 2 * section["readings"][0]["step_hz"]
    out = tmp_path / "w.html"
    assert main(["trend", PUMP, "--store", store, "--point", "P1H", "--waterfall", "--format", "html",
                 "-o", str(out)]) == 0
    html = out.read_text()
    checker = HtmlChecker()
    checker.feed(html)
    assert not checker.errors and "velocity spectra of 3 surveys" in html and ">BPFI<" in html
    ids = [r["id"] for r in section["readings"]]
    assert main(["trend", PUMP, "--store", store, "--point", "P1H", "--compare", f"{ids[0]},{ids[-1]}"]) == 0
    text = capsys.readouterr().out
    assert f"largest changes, reading {ids[0]} to {ids[-1]}" in text and "(BPFI)" in text


def test_the_pumps_site_alarms_are_flagged_once_its_bearing_band_rises(surveyed):
    root, _ = surveyed
    months = [json.loads((root / f"month-0{m}" / "route-reports" / "summary.json").read_text()) for m in (1, 3)]
    first, third = (next(m for m in doc["machines"] if m["machine"] == PUMP) for doc in months)
    # the demo pump's own limits (cases/machines/rw2-raw-water-pump.yaml): nothing crossed in the first month
    assert first["alarms_crossed"] == 0 and first["alarm_state"] is None
    crossed = {(a["point"], a["band"], a["unit"]) for r in third["readings"] for a in r["alarms"]}
    assert ("P1H", "bearing rates", "g RMS") in crossed and third["alarm_state"] in ("alert", "danger")
    assert "site alarm(s) crossed" in (root / "month-03" / "route-reports" / "summary.txt").read_text()
