"""Findings in the trend and the baseline a repair resets, on a store built from simulated readings of the
demo pump: an inner-race defect at pump_de grows for four months, the bearing is replaced on the day of the
fourth reading (a finding), four healthy months follow; a nothing-found finding comes later."""

from __future__ import annotations

import hashlib
import json

import jsonschema
import numpy as np
import pytest
import yaml

from engine.cli import main
from engine.common.yamlfile import load_schema
from engine.history.store import Store
from engine.machine import load_machine
from engine.simulation import simulate, write_simulation
from engine.trend.change import baseline_count
from engine.trend.repairs import points_reset, points_seeing, repairs_of
from engine.trend.report import trend_from_rows

from support import CASES

PUMP = "RW-2 raw water pump"
PUMP_FILE = CASES / "machines" / "rw2-raw-water-pump.yaml"
PLAN = [("inner-race", 1), ("inner-race", 2), ("inner-race", 3), ("inner-race", 4)] + [("healthy", 2)] * 4
REPAIRED = "2026-04-10"          # the day of the fourth reading: it is the as-found condition


@pytest.fixture(scope="module")
def store(tmp_path_factory) -> str:
    root = tmp_path_factory.mktemp("repairs")
    machine = load_machine(PUMP_FILE)
    readings = []
    for i, (fault, stage) in enumerate(PLAN):
        sim = simulate(machine, fault, "pump_de" if fault != "healthy" else None, stage, fs_hz=12800.0,
                       duration_s=1.0, seed=i, points=["P1H", "P2H"])
        write_simulation(sim, root / f"r{i}.wav")
        readings.append({"file": f"r{i}.wav", "machine": "rw2", "time": f"2026-{1 + i:02d}-10T08:00:00"})
    (root / "route.yaml").write_text(yaml.safe_dump({"route": "repairs", "machines": {"rw2": str(PUMP_FILE)},
                                                     "readings": readings}, sort_keys=False))
    path = str(root / "h.sqlite")
    assert main(["route", str(root / "route.yaml"), "--store", path, "--quiet", "--workers", "1"]) == 0
    assert main(["findings", "add", "--machine", PUMP, "--date", REPAIRED, "--component", "pump_de",
                 "--fault", "inner-race", "--stage", "3", "--work-order", "WO-41", "--store", path]) == 0
    assert main(["findings", "add", "--machine", PUMP, "--date", "2026-06-12", "--component", "impeller",
                 "--fault", "nothing-found", "--store", path]) == 0
    return path


def _trend(store, capsys, *more) -> dict:
    capsys.readouterr()
    assert main(["trend", PUMP, "--store", store, "--format", "json", *more]) == 0
    doc = json.loads(capsys.readouterr().out)
    jsonschema.validate(doc, load_schema("trend.schema.json"))
    return doc


def test_a_repair_resets_the_baseline_at_the_points_that_see_the_bearing(store, capsys):
    doc = _trend(store, capsys)
    points = {p["point"]: p for p in doc["points"]}
    with Store(store, create=False) as s:
        rows = s.history(PUMP)

    def velocities(point, after=None):
        return [r["indicators"]["velocity_rms_mm_s"] for r in rows
                if r["point"] == point and (after is None or r["taken_at"][:10] > after)]

    p1, p2 = points["P1H"], points["P2H"]              # P1H sits at pump_de; P2H at pump_nde, on the same shaft
    assert p1["reset"]["found_on"] == REPAIRED and p1["reset"]["readings_before"] == 4
    assert p1["reset"]["readings_after"] == 4
    # the bearing's repair reset every point of its shaft: the rotor came out, and P2H read the defect too
    assert (p2["reset"]["found_on"], p2["reset"]["readings_before"], p2["reset"]["readings_after"]) == (REPAIRED, 4, 4)
    after = velocities("P1H", REPAIRED)
    v1 = next(i for i in p1["indicators"] if i["name"] == "velocity_rms_mm_s")
    assert v1["readings"] == 4 and v1["readings_before_repair"] == 4
    assert v1["baseline"] == pytest.approx(np.median(after[:baseline_count(4)]), abs=1e-4)
    assert v1["latest"] == pytest.approx(after[-1], abs=1e-4)
    assert p1["iso_change"]["baseline_mm_s"] == pytest.approx(v1["baseline"], abs=1e-3)
    # the damaged readings stay out of P1H: the envelope BPFI of the healthy months is all it judges
    before_bpfi = [r["indicators"].get("env_BPFI_db") for r in rows if r["point"] == "P1H"
                   and r["taken_at"][:10] <= REPAIRED]
    bpfi = next(i for i in p1["indicators"] if i["name"] == "env_BPFI_db")
    assert bpfi["last_before_repair"] == pytest.approx(before_bpfi[-1], abs=1e-3)
    assert bpfi["baseline"] < min(b for b in before_bpfi[1:] if b is not None)
    v2 = next(i for i in p2["indicators"] if i["name"] == "velocity_rms_mm_s")
    assert v2["readings"] == 4 and v2["readings_before_repair"] == 4
    assert v2["baseline"] == pytest.approx(np.median(velocities("P2H", REPAIRED)[:baseline_count(4)]), abs=1e-4)



def test_every_format_shows_the_findings_beside_their_points(store, capsys, tmp_path):
    doc = _trend(store, capsys)
    (bearing, impeller) = doc["findings"]
    assert (bearing["found_on"], bearing["component"], bearing["fault_name"], bearing["stage"],
            bearing["work_order"]) == (REPAIRED, "pump_de", "inner-race defect", 3, "WO-41")
    assert bearing["resets_baseline"] and bearing["points"] == ["P1A", "P1H"]
    assert bearing["reset_points"] == ["P1A", "P1H", "P2H"]           # every point on the pump shaft
    assert bearing["judged"] == [f"{REPAIRED}T08:00:00"]
    assert not impeller["resets_baseline"] and impeller["fault_name"] == "nothing found"
    assert impeller["points"] == ["P1A", "P1H", "P2H"]        # every point on the pump shaft
    for fmt in ("text", "md", "html"):
        out = tmp_path / f"t.{fmt}"
        assert main(["trend", PUMP, "--store", store, "--format", fmt, "-o", str(out)]) == 0
        text = out.read_text().replace("\\_", "_")          # Markdown escapes the underscore
        for word in (REPAIRED, "inner-race defect", "pump_de", "WO-41", "stage 3", "2026-06-12", "nothing found",
                     "before the repair"):
            assert word in text, (fmt, word)
        # the points whose baseline the repair resets (every point on the pump shaft), not those that see it
        said = "resets the baseline at" if fmt == "text" else "reset at"
        assert f"{said} P1A, P1H, P2H" in text, fmt
    html = (tmp_path / "t.html").read_text()
    svgs = html.split("<svg")[1:]
    assert svgs and all("found 2026-06-12" in svg for svg in svgs)      # a marker in every plot of a point
    assert sum(f"found {REPAIRED}" in svg for svg in svgs) == sum(("P1H:" in svg or "P2H:" in svg) for svg in svgs) > 0


def test_a_nothing_found_finding_resets_nothing(store, capsys):
    with Store(store, create=False) as s:
        found = [f for f in s.findings(PUMP) if f["fault"] == "nothing-found"]
        readings = {r["id"]: r["machine_file"] for r in s.readings(PUMP)}
        rows = s.history(PUMP)
    from engine.advice import ZoneScale
    scale = ZoneScale(2, "rigid", 1.4, 2.8, 4.5, False, "ISO 20816-3 (from memory)")
    doc = trend_from_rows(PUMP, rows, scale, repairs=repairs_of(found, readings, {}))
    assert all(p["reset"] is None for p in doc["points"])
    assert next(p for p in doc["points"] if p["point"] == "P2H")["findings"][0]["fault"] == "nothing-found"


def test_the_trend_never_writes_the_store(store, capsys):
    def digest():
        with open(store, "rb") as f:
            return hashlib.sha256(f.read()).hexdigest()
    before = digest()
    _trend(store, capsys, "--limit", "accel_peak_g=5")
    assert digest() == before


def test_a_machine_file_that_cannot_be_read_resets_every_point_and_says_so(tmp_path):
    findings = [{"reading_id": 1, "taken_at": "2026-01-10T08:00:00", "found_on": "2026-01-10",
                 "component": "pump_de", "fault": "outer-race", "stage": 2, "work_order": None, "notes": None}]
    (repair,) = repairs_of(findings, {1: str(tmp_path / "gone.yaml")}, {"outer-race": "outer-race defect"})
    assert repair.points is None and repair.sees("M1H") and "every point" in repair.shown()["points_from"]
    rows = [{"id": i, "taken_at": f"2026-0{m}-10T08:00:00", "channel": pt, "point": pt, "direction": "horizontal",
             "indicators": {"velocity_rms_mm_s": v}}
            for i, (m, pt, v) in enumerate([(1, "P1H", 3.0), (1, "M1H", 2.0), (2, "P1H", 1.0), (2, "M1H", 1.1)])]
    from engine.advice import ZoneScale
    doc = trend_from_rows(PUMP, rows, ZoneScale(2, "rigid", 1.4, 2.8, 4.5, False, "x"), repairs=[repair])
    assert [(p["point"], p["reset"]["readings_before"], p["reset"]["every_point"]) for p in doc["points"]] == [
        ("M1H", 1, True), ("P1H", 1, True)]


@pytest.mark.parametrize("component, points", [
    ("pump_de", ("P1A", "P1H")),                 # a bearing: the points that sit at it
    ("motor_de", ("M2A", "M2H", "M2V")),
    ("impeller", ("P1A", "P1H", "P2H")),         # a rotor: every point on its shaft
    ("M-RW2", ("M1H", "M2A", "M2H", "M2V")),     # the motor: every point on the motor shaft
    ("pump", ("P1A", "P1H", "P2H")),             # a shaft
    ("gearbox", None),                           # not in the machine file: not known
])
def test_which_points_see_a_component(component, points):
    # the demo pump's own machine file (invented plant data) names the points and where they sit
    seen = points_seeing(load_machine(PUMP_FILE), component)
    assert (None if seen is None else tuple(sorted(seen))) == points


@pytest.mark.parametrize("component, points", [
    ("pump_de", ("P1A", "P1H", "P2H")),          # a bearing: every point on its shaft (the rotor came out)
    ("motor_de", ("M1H", "M2A", "M2H", "M2V")),  # the motor shaft's points; the pump's stay (beyond the coupling)
    ("impeller", ("P1A", "P1H", "P2H")),         # a rotor: as the points that see it
    ("gearbox", None),                           # not in the machine file: not known, every point
])
def test_which_points_a_repair_resets(component, points):
    # the demo pump's own machine file (invented plant data) names the points and their shafts
    reset = points_reset(load_machine(PUMP_FILE), component)
    assert (None if reset is None else tuple(sorted(reset))) == points


def test_a_diagnosis_with_the_store_trends_from_the_repair_on(store, tmp_path, capsys):
    import shutil
    copy = tmp_path / "copy.sqlite"
    shutil.copy(store, copy)                      # diagnose --store adds its reading: not to the shared store
    sim = simulate(load_machine(PUMP_FILE), "healthy", None, 2, fs_hz=12800.0, duration_s=1.0, seed=99,
                   points=["P1H", "P2H"])
    write_simulation(sim, tmp_path / "now.wav")
    capsys.readouterr()
    code = main(["diagnose", str(tmp_path / "now.wav"), "--machine", str(PUMP_FILE), "--store", str(copy),
                 "--taken-at", "2026-09-10T08:00:00", "--format", "json"])
    assert code in (0, 7)
    doc = json.loads(capsys.readouterr().out)
    points = {p["point"]: p for p in doc["trend"]["points"]}
    assert points["P1H"]["reset"]["found_on"] == REPAIRED and points["P1H"]["reset"]["readings_after"] == 5
    assert points["P2H"]["reset"]["found_on"] == REPAIRED and points["P2H"]["reset"]["readings_after"] == 5
    assert [f["found_on"] for f in points["P1H"]["findings"]] == [REPAIRED, "2026-06-12"]
    jsonschema.validate(doc, load_schema("report.schema.json"))
