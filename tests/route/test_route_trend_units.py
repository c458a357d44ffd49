"""A trend section in a diagnosis report (``diagnose --store``) and a route's trend pages follow the
chosen units: the velocity indicators, the ISO 20816-3 change and its criterion, the overall velocity plot
and its zone boundaries; the trend facts the reasoning reads keep mm/s RMS (the certainty is the same)."""

from __future__ import annotations

import json
import re

import pytest
from routes import monthly_pump_route

from engine.cli import main
from engine.history.store import Store

from support import CASES

MACHINE = CASES / "machines" / "rw2-raw-water-pump.yaml"
INCH_MM = 25.4          # 1 in = 25.4 mm exactly (international yard and pound agreement, 1959)


@pytest.fixture(scope="module")
def months(tmp_path_factory):
    base = tmp_path_factory.mktemp("trend-units")
    for month, seed in ((1, 5), (2, 6), (3, 7)):
        monthly_pump_route(base, month, seed)
    return base


def test_a_diagnosis_with_history_shows_its_trend_in_inches(months, tmp_path, capsys):
    store = tmp_path / "h.sqlite"
    for month in (1, 2):
        assert main(["diagnose", str(months / f"m{month}.wav"), "--machine", str(MACHINE), "--store", str(store),
                     "--taken-at", f"2026-0{month}-01T08:00", "--format", "json"]) == 0
    capsys.readouterr()
    argv = ["diagnose", str(months / "m3.wav"), "--machine", str(MACHINE), "--store", str(store),
            "--taken-at", "2026-03-01T08:00"]
    assert main(argv + ["--format", "json"]) == 0
    plain = json.loads(capsys.readouterr().out)
    assert main(argv + ["--format", "json", "--velocity-unit", "in/s-peak"]) == 0
    shown = json.loads(capsys.readouterr().out)
    (p0,), (p1,) = plain["trend"]["points"], shown["trend"]["points"]
    a = {i["name"]: i for i in p0["indicators"]}
    b = {i["name"]: i for i in p1["indicators"]}
    # the overall velocity is broadband: RMS in inches, never sqrt(2) x RMS
    assert b["velocity_rms_mm_s"]["latest"] == pytest.approx(a["velocity_rms_mm_s"]["latest"] / INCH_MM)
    assert b["velocity_rms_mm_s"]["label"] == "velocity, in/s RMS"
    # a line: peak = sqrt(2) x RMS (a sine, handbook formula)
    assert b["x1_mm_s"]["latest"] == pytest.approx(2 ** 0.5 * a["x1_mm_s"]["latest"] / INCH_MM)
    assert p1["iso_change"]["latest_mm_s"] == p0["iso_change"]["latest_mm_s"]     # the _mm_s field keeps mm/s
    assert float(p1["iso_change"]["shown"]["latest"]) == pytest.approx(p0["iso_change"]["latest_mm_s"] / INCH_MM,
                                                                       rel=0.01)
    assert [h["certainty"] for h in shown["hypotheses"]] == [h["certainty"] for h in plain["hypotheses"]]
    assert main(argv + ["--velocity-unit", "in/s-peak"]) == 0
    trend = capsys.readouterr().out.split("TREND")[1]
    assert "in/s" in trend and "mm/s" not in trend
    out = tmp_path / "r.html"
    assert main(argv + ["--format", "html", "-o", str(out), "--velocity-unit", "in/s-rms"]) == 0
    section = out.read_text().split('<section id="trend">')[1].split("</section>")[0]
    assert "in/s RMS" in section and "mm/s" not in section


def test_a_diagnosis_in_other_units_builds_its_trend_once(months, tmp_path, capsys, monkeypatch):
    # closing-stop29: a report in other units ran the trend a second time; now the one trend (in Hz and
    # mm/s RMS, which the reasoning read) is converted, its plots drawn in the report's units
    import engine.trend.diagnosis as link_module

    store = tmp_path / "h.sqlite"
    for month in (1, 2):
        assert main(["diagnose", str(months / f"m{month}.wav"), "--machine", str(MACHINE), "--store", str(store),
                     "--taken-at", f"2026-0{month}-01T08:00", "--format", "json"]) == 0
    capsys.readouterr()
    built = []
    real = link_module.trend_from_rows
    monkeypatch.setattr(link_module, "trend_from_rows", lambda *a, **k: built.append(k) or real(*a, **k))
    out = tmp_path / "r.html"
    assert main(["diagnose", str(months / "m3.wav"), "--machine", str(MACHINE), "--store", str(store),
                 "--taken-at", "2026-03-01T08:00", "--format", "html", "-o", str(out), "--velocity-unit", "in/s-rms",
                 "--plots", "all"]) == 0
    assert len(built) == 1
    section = out.read_text().split('<section id="trend">')[1].split("</section>")[0]
    assert "<svg" in section and "in/s RMS" in section and "mm/s" not in section


def test_a_routes_trend_pages_follow_the_units(months, tmp_path, capsys):
    store = tmp_path / "h.sqlite"
    for month in (1, 2, 3):
        out = tmp_path / f"out{month}"
        assert main(["route", str(months / f"m{month}.yaml"), "--store", str(store), "--out", str(out),
                     "--format", "html", "--workers", "1", "--quiet", "--velocity-unit", "in/s-rms"]) == 0
    capsys.readouterr()
    (page,) = (out / "trends").glob("*.html")
    html = page.read_text()
    assert "mm/s" not in html
    # the overall velocity plot's axis and its ISO 20816-3 boundary lines in in/s: B/C 2.8 mm/s (from memory,
    # group 2 rigid) = 0.110 in/s
    assert "in/s RMS" in html and re.search(r"B/C", html)
    with Store(store, create=False) as s:
        rows = s.history("RW-2 raw water pump", "P1H")
    assert all(r["indicators"]["velocity_rms_mm_s"] > 0.1 for r in rows)     # the store keeps mm/s RMS
