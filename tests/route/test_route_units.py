"""A route's reports follow --velocity-unit and --frequency-unit (over a site's units:), while the
store keeps mm/s RMS: the trend of the stored readings is the same whatever a report showed."""

from __future__ import annotations

import json

import pytest
import yaml
from routes import monthly_pump_route

from engine.cli import main
from engine.history.store import Store
from engine.machine import load_machine
from engine.simulation import simulate, write_simulation

from support import CASES


@pytest.fixture(scope="module")
def route(tmp_path_factory):
    base = tmp_path_factory.mktemp("units")
    machine = CASES / "machines" / "rw2-raw-water-pump.yaml"
    sim = simulate(load_machine(machine), "unbalance", "pump", 3, fs_hz=12800.0, duration_s=1.0, seed=5,
                   points=["P1H"])
    write_simulation(sim, base / "r.wav")
    (base / "route.yaml").write_text(yaml.safe_dump({
        "route": "units", "machines": {"m": str(machine)},
        "readings": [{"file": "r.wav", "machine": "m", "time": "2026-03-01T08:00:00"}]}))
    site = base / "site"
    site.mkdir()
    (site / "units.yaml").write_text("rulebook: units\nunits: {frequency: cpm, velocity: mm/s-peak}\n")
    return base, site


def test_reports_follow_the_units_and_the_store_keeps_mm_s(route, capsys):
    base, site = route
    out, store = base / "out", base / "h.sqlite"
    assert main(["route", str(base / "route.yaml"), "--store", str(store), "--out", str(out), "--format", "json",
                 "--workers", "1", "--quiet", "--site", str(site), "--velocity-unit", "in/s-rms"]) == 0
    capsys.readouterr()
    (report,) = [p for p in out.rglob("*.json") if "summary" not in p.name]
    doc = json.loads(report.read_text())
    # the command line's velocity over the site's; the site's frequency unit kept
    assert (doc["units"]["frequency"], doc["units"]["velocity"]) == ("cpm", "in/s-rms")
    (point,) = [z for z in doc["zones"]["points"] if z["channel"] == "P1H"]
    # 1 in = 25.4 mm exactly (1959): the shown level is the stored one over 25.4, RMS both
    assert float(doc["units"]["point_levels"]["P1H"]) == pytest.approx(point["velocity_rms_mm_s"] / 25.4, rel=0.01)
    with Store(store, create=False) as s:
        (row,) = s.history("RW-2 raw water pump", "P1H")
    assert row["indicators"]["velocity_rms_mm_s"] == pytest.approx(point["velocity_rms_mm_s"], rel=1e-3)


def test_the_summary_shows_the_change_since_the_last_survey_in_the_chosen_unit(route, capsys):
    base, site = route
    store = base / "two.sqlite"
    for month, seed in ((3, 5), (4, 6)):
        route_file = monthly_pump_route(base, month, seed)
        out = base / f"out{month}"
        assert main(["route", str(route_file), "--store", str(store), "--out", str(out),
                     "--format", "text", "--workers", "1", "--quiet", "--velocity-unit", "in/s-peak"]) == 0
    capsys.readouterr()
    summary = json.loads((out / "summary.json").read_text())
    (m,) = summary["machines"]
    change = m["change"]
    # the overall velocity is broadband: RMS in inches (1 in = 25.4 mm exactly), never sqrt(2) x RMS
    assert float(change["shown"]["now"]) == pytest.approx(change["now_mm_s"] / 25.4, rel=0.01)
    text = (out / "summary.txt").read_text()
    assert f"{change['shown']['then']} -> {change['shown']['now']} in/s RMS" in text
