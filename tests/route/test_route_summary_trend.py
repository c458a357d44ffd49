"""The route summary's change column shows the point at the top finding's component (else the point that
changed most, relatively), and each machine links to its trend page, which the route writes."""

from __future__ import annotations

import json

import jsonschema
import pytest
import yaml
from routes import PUMP

from engine.cli import main
from engine.common.yamlfile import load_schema
from engine.history.store import Store
from engine.machine import load_machine
from engine.route.summary import _change, _points_of_top
from engine.simulation import simulate, write_simulation


def _record(n: int, when: str, velocities: dict[str, float], accelerations: dict[str, float] | None = None) -> dict:
    return {"content_hash": f"hash-{n}", "machine": "RW-2 raw water pump", "machine_file": str(PUMP),
            "source": f"r{n}.wav", "taken_at": when, "time_from": "route", "speed_rpm": 1486.0, "elapsed_s": 0.1,
            "fs_hz": 25600.0, "duration_s": 2.0,
            "verdict": {"urgency": "plan", "urgency_label": "plan", "worst_zone": "B", "withheld": False,
                        "summary": "s"},
            "top": None,
            "channels": [{"channel": p, "point": p, "direction": "horizontal", "location": "", "zone": "B"}
                         for p in velocities],
            "indicators": [{"channel": p, "name": "velocity_rms_mm_s", "value": v} for p, v in velocities.items()]
            + [{"channel": p, "name": "accel_rms_g", "value": a} for p, a in (accelerations or {}).items()],
            "hypotheses": [{"rank": 1, "fault": "inner-race", "fault_name": "inner-race defect",
                            "component": "pump_de", "certainty": 0.9, "urgency": "plan"}]}


@pytest.fixture
def store(tmp_path):
    # P1H sits at pump_de (the faulty bearing: a small velocity change), M2H at the motor's drive end carries
    # a larger velocity that scatters by more mm/s; P2H rose the most relative to its level
    with Store(tmp_path / "h.sqlite") as s:
        s.add(_record(1, "2026-01-10T08:00:00", {"P1H": 0.60, "M2H": 2.00, "P2H": 0.20}))
        now = s.add(_record(2, "2026-02-10T08:00:00", {"P1H": 0.66, "M2H": 2.50, "P2H": 0.40}))
        yield s, now


def test_the_change_column_shows_the_point_at_the_top_findings_component(store):
    s, now = store
    top_points = _points_of_top(str(PUMP), "pump_de")
    assert set(top_points) == {"P1H", "P1A"}
    change = _change(s, "RW-2 raw water pump", {now}, top_points)
    assert change["point"] == "P1H" and change["chosen"] == "the point at the top finding's component"


def test_without_a_top_finding_the_point_that_changed_most_relatively(store):
    s, now = store
    change = _change(s, "RW-2 raw water pump", {now}, None)
    # P2H doubled (+100 %); M2H rose 0.5 mm/s but by 25 %: the relative change ranks the points
    assert change["point"] == "P2H" and change["change_pct"] == pytest.approx(100.0)
    assert change["chosen"] == "the point whose velocity or acceleration changed most"
    assert change["accel_now_g"] is None                   # none stored: none shown


def test_a_bearing_whose_acceleration_rose_outranks_a_velocity_that_scattered(tmp_path):
    # a bearing's damage raises acceleration RMS long before overall velocity (common practice): P1H's
    # velocity is flat while its acceleration rose 70-fold; P2H's velocity doubled
    with Store(tmp_path / "h.sqlite") as s:
        s.add(_record(1, "2026-01-10T08:00:00", {"P1H": 0.73, "P2H": 0.20}, {"P1H": 0.01, "P2H": 0.02}))
        now = s.add(_record(2, "2026-02-10T08:00:00", {"P1H": 0.74, "P2H": 0.40}, {"P1H": 0.70, "P2H": 0.03}))
        change = _change(s, "RW-2 raw water pump", {now}, None)
    assert change["point"] == "P1H"
    assert (change["accel_then_g"], change["accel_now_g"], change["accel_change_pct"]) == (0.01, 0.7, 6900.0)


def _run_route(tmp_path, name: str, readings: list[dict]) -> tuple:
    """Run a route of RW-2 ``readings`` into tmp_path/out; its output folder and the one machine of its
    summary.json, checked against the summary schema."""
    route = tmp_path / "route.yaml"
    route.write_text(yaml.safe_dump({"route": name, "machines": {"rw2": str(PUMP)}, "readings": readings}))
    out = tmp_path / "out"
    assert main(["route", str(route), "--store", str(tmp_path / "h.sqlite"), "--out", str(out), "--workers", "1",
                 "--quiet"]) == 0
    doc = json.loads((out / "summary.json").read_text())
    jsonschema.validate(doc, load_schema("route-summary.schema.json"))
    (m,) = doc["machines"]
    return out, m


def test_each_machine_links_to_its_trend_page(tmp_path):
    machine = load_machine(PUMP)
    readings = []
    for i, when in enumerate(("2026-01-10T08:00:00", "2026-02-10T08:00:00")):
        sim = simulate(machine, "inner-race", "pump_de", 2 + i, fs_hz=12800.0, duration_s=1.0, seed=i,
                       points=["P1H", "P2H"])
        write_simulation(sim, tmp_path / f"r{i}.wav")
        readings.append({"file": f"r{i}.wav", "machine": "rw2", "time": when})
    out, m = _run_route(tmp_path, "links", readings)
    assert m["trend_page"] == "trends/rw-2-raw-water-pump.html"
    page = (out / m["trend_page"]).read_text()
    assert "Trend: RW-2 raw water pump" in page and page.count("<svg") >= 3
    assert 'href="trends/rw-2-raw-water-pump.html"' in (out / "summary.html").read_text()
    assert "](trends/rw-2-raw-water-pump.html)" in (out / "summary.md").read_text()
    assert "trend: trends/rw-2-raw-water-pump.html" in (out / "summary.txt").read_text()


def _one_point(n: int, when: str, point: str, velocity: float, certainty: float) -> dict:
    rec = _record(n, when, {point: velocity})
    rec["hypotheses"][0]["certainty"] = certainty
    return rec


def test_the_top_finding_then_is_the_points_own_and_a_repair_between_is_named(tmp_path):
    # one reading per point, as a route takes them: P1H (at pump_de) 90 %, then M2H 64 % the same morning;
    # the top finding then at P1H is P1H's own (90 %), not the survey's last reading's
    with Store(tmp_path / "h.sqlite") as s:
        p1 = s.add(_one_point(1, "2026-03-13T08:30:00", "P1H", 0.60, 0.90))
        s.add(_one_point(2, "2026-03-13T08:34:00", "M2H", 2.00, 0.64))
        now = {s.add(_one_point(3, "2026-04-12T08:30:00", "P1H", 0.66, 0.86)),
               s.add(_one_point(4, "2026-04-12T08:34:00", "M2H", 2.10, 0.70))}
        change = _change(s, "RW-2 raw water pump", now, ("P1A", "P1H"))
        assert change["point"] == "P1H" and change["top_then"] == "inner-race defect on pump_de (90 %)"
        assert change["repairs"] == []
        # a repair found between the surveys is named; one on the day of the later survey is its as-found
        # condition (engine.trend.repairs), so it is not between; nothing found repairs nothing
        for day, fault in (("2026-03-19", "unbalance"), ("2026-04-12", "inner-race"), ("2026-03-20", "nothing-found")):
            s.add_finding({"reading_id": p1, "component": "pump_de", "fault": fault, "found_on": day})
        change = _change(s, "RW-2 raw water pump", now, ("P1A", "P1H"))
        assert change["repairs"] == [{"found_on": "2026-03-19", "component": "pump_de", "fault": "unbalance",
                                      "fault_name": "unbalance"}]


def test_the_summarys_repairs_are_the_trends_repairs(tmp_path):
    # closing-stop29: the summary grouped findings on its own beside repairs_of; now it reads repairs_of's
    # Repairs, so a finding judging two readings is one repair and names its fault as the trend does
    from engine.trend.repairs import repairs_of
    from engine.trend.report import fault_names

    with Store(tmp_path / "h.sqlite") as s:
        p1 = s.add(_one_point(1, "2026-03-13T08:30:00", "P1H", 0.60, 0.90))
        m2 = s.add(_one_point(2, "2026-03-13T08:34:00", "M2H", 2.00, 0.64))
        now = {s.add(_one_point(3, "2026-04-12T08:30:00", "P1H", 0.66, 0.86))}
        for rid in (p1, m2):
            s.add_finding({"reading_id": rid, "component": "pump_de", "fault": "other", "found_on": "2026-03-13",
                           "notes": "seal leak"})
        change = _change(s, "RW-2 raw water pump", now, ("P1A", "P1H"))
        trend = repairs_of(s.findings("RW-2 raw water pump"), {}, fault_names())
    assert len(trend) == 1 and trend[0].judged == ("2026-03-13T08:30:00", "2026-03-13T08:34:00")
    assert change["repairs"] == [{"found_on": "2026-03-13", "component": "pump_de", "fault": "other",
                                  "fault_name": trend[0].fault_name}]
    assert trend[0].fault_name == "other (see the notes)"


def _history(n: int, when: str, velocity: float, peak: float, rms: float) -> dict:
    """A stored P1H reading as `diagnose --store` keeps it: inner race on pump_de at 90 %, act now."""
    rec = _record(n, when, {"P1H": velocity}, {"P1H": rms})
    rec["indicators"].append({"channel": "P1H", "name": "accel_peak_g", "value": peak})
    rec["verdict"]["urgency"] = rec["hypotheses"][0]["urgency"] = "act-now"
    rec["channels"][0]["zone"] = rec["verdict"]["worst_zone"] = "A"
    return rec


def test_the_summary_says_which_time_governs_each_machine(tmp_path):
    # five monthly readings of a stage-4 inner race at P1H as the new analyst's trial saw them (invented demo data:
    # acceleration peak 0.09 to 12.9 g, RMS 0.03 to 2.5 g) with the velocity creeping in zone A, then this month's
    # route reading (the simulator's stage 4): the velocity's crossing of A/B is months away, the diagnosis says
    # act now, and the rise test's rule (rulebooks/time-to-act.yaml) plan soon; the summary says so, as the trend does
    peak = [0.0891, 0.1215, 0.5252, 2.6251, 12.8647]
    rms = [0.0320, 0.0333, 0.0817, 0.3607, 2.5385]
    with Store(tmp_path / "h.sqlite") as s:
        for i in range(5):
            s.add(_history(i, f"2026-0{i + 1}-03T09:00:00", 0.45 + 0.06 * i, peak[i], rms[i]))
    sim = simulate(load_machine(PUMP), "inner-race", "pump_de", 4, fs_hz=12800.0, duration_s=1.0, seed=3,
                   points=["P1H"])
    write_simulation(sim, tmp_path / "r.wav")
    out, m = _run_route(tmp_path, "governs", [{"file": "r.wav", "machine": "rw2", "time": "2026-06-10T08:00:00"}])
    g = m["governs"]
    assert g["point"] == "P1H" and g["by"] == "diagnosis" and g["urgency"]["id"] == "act-now"
    assert g["rules"] == ["trend.time-to-act.degradation-under-way"] and g["days"] > 91
    assert g["because"][0].startswith("the diagnosis of the latest reading says act now")
    assert g["because"][1].startswith("the trend says plan soon")
    page = (out / m["trend_page"]).read_text()
    assert "Which time governs" in page and "degradation is under way" in " ".join(page.split())
    for name, said in (("summary.txt", "which time governs at P1H: the diagnosis of the latest reading says act now"),
                       ("summary.md", "**Which time governs** at P1H: the diagnosis"),
                       ("summary.html", "<strong>Which time governs</strong> at P1H: the diagnosis")):
        text = (out / name).read_text()
        assert said in text and "which is not a time to wait" in text, name


def test_the_soonest_point_governs_the_machine():
    from engine.route.summary import machine_governs

    def point(name, opens, by="trend"):
        return {"point": name, "governs": {"by": by, "opens_days": opens, "days": 120.0}}
    trend = {"points": [point("P2H", 28.0), point("P1H", 14.0), point("M2H", 14.0, "diagnosis"),
                        {"point": "P1A", "governs": None}]}
    assert machine_governs(trend)["point"] == "M2H"      # the soonest; at a tie the diagnosis
    assert machine_governs({"points": [{"point": "P1A", "governs": None}]}) is None
    assert machine_governs(None) is None
