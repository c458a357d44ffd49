"""Site alarms end to end: a crossed alarm is flagged in every report format and in the route summary,
never changes a certainty, its band value is stored as an indicator, and ``alarms derive`` sets limits
of mean + k sd from a store of simulated healthy readings (seeded)."""

from __future__ import annotations

import json
import tempfile
from dataclasses import replace
from pathlib import Path

import jsonschema
import numpy as np
import pytest
import yaml
from routes import PUMP

from engine.cli import main
from engine.common.yamlfile import load_schema
from engine.history.store import Store
from engine.machine import load_machine
from engine.machine.alarms import load_alarm_file, with_site_alarms
from engine.pipeline import diagnose, document_of
from engine.report import render
from engine.simulation import as_reading, simulate, write_simulation

from support import MADE_AT, one_error_line, reasoner

MACHINE = "RW-2 raw water pump"
# a bearing-band limit set low enough that the reading crosses it (the flag is what is checked here), and
# 1X and overall limits that no simulated pump reaches
ALARMS = {"machines": {MACHINE: [
    {"point": "P2H", "band": "bearing rates", "quantity": "acceleration_g_rms", "alert": 0.002, "danger": 0.004},
    {"point": "P2H", "band": "1X", "quantity": "velocity_mm_s_rms", "alert": 40.0, "danger": 80.0},
    {"point": "P2H", "band": "overall", "quantity": "velocity_mm_s_rms", "alert": 40.0, "danger": 80.0},
]}}


@pytest.fixture(scope="module")
def site(tmp_path_factory):
    path = tmp_path_factory.mktemp("alarms") / "alarms.yaml"
    path.write_text(yaml.safe_dump(ALARMS, sort_keys=False))
    return path


@pytest.fixture(scope="module")
def outer_race(site):
    machine = replace(load_machine(PUMP), alarms=())        # the site file's alarms only, not the demo file's
    sim = simulate(machine, "outer-race", "pump_nde", 3, fs_hz=12800.0, duration_s=2.0, seed=11, points=["P2H"])
    reading = as_reading(sim, "or.wav")
    return (diagnose(reading, with_site_alarms(machine, [site]), reasoner()),
            diagnose(reading, machine, reasoner()))


def test_a_crossed_alarm_is_flagged_in_every_report_format(outer_race):
    with_alarms, _ = outer_race
    doc = document_of(with_alarms, made_at=MADE_AT)
    jsonschema.validate(doc, load_schema("report.schema.json"))
    states = {(a["band"], a["quantity"]): a["state"] for a in doc["alarms"]["results"]}
    assert states[("bearing rates", "acceleration_g_rms")] == "danger"
    assert states[("1X", "velocity_mm_s_rms")] == "within"
    assert doc["alarms"]["crossed"] == 1 and doc["alarms"]["results"][0]["band"] == "bearing rates"
    assert "!! DANGER: P2H bearing rates g RMS" in render(doc, "text")
    assert "| **danger** | P2H | bearing rates, g RMS |" in render(doc, "md")
    assert '<tr class="alarm-danger"><td><strong>danger</strong></td><td>P2H</td>' in render(doc, "html")
    assert json.loads(render(doc, "json"))["alarms"]["danger"] == 1


def test_alarms_never_change_the_reasoning(outer_race):
    with_alarms, without = outer_race
    assert [(h.fault, h.component, h.certainty) for h in with_alarms.reasoning.hypotheses] == \
        [(h.fault, h.component, h.certainty) for h in without.reasoning.hypotheses]
    assert without.alarms == () and document_of(without, made_at=MADE_AT)["alarms"]["results"] == []


def _route(folder, n: int, fault=None):
    """``n`` seeded readings of P2H, a month apart: healthy unless ``fault`` (fault, component, stage)."""
    machine = load_machine(PUMP)
    folder.mkdir(parents=True, exist_ok=True)
    readings = []
    for i in range(n):
        what = fault or ("healthy", None, 1)
        sim = simulate(machine, what[0], what[1], what[2], fs_hz=12800.0, duration_s=1.0, seed=100 + i,
                       points=["P2H"])
        write_simulation(sim, folder / f"r{i}.wav")
        readings.append({"file": f"r{i}.wav", "machine": "rw2", "points": {"P2H": "P2H"},
                         "time": f"2026-{1 + i:02d}-05T08:00:00"})
    path = folder / "route.yaml"
    path.write_text(yaml.safe_dump({"route": "alarms", "machines": {"rw2": str(PUMP)}, "readings": readings}))
    return path


def _run(route, tmp_path, *more):
    return main(["route", str(route), "--store", str(tmp_path / "h.sqlite"), "--out", str(tmp_path / route.parent.name),
                 "--workers", "1", "--quiet", "--format", "json", *map(str, more)])


def test_the_route_summary_flags_the_machine_and_reading(tmp_path, site, capsys):
    route = _route(tmp_path / "faulty", 1, ("outer-race", "pump_nde", 3))
    assert _run(route, tmp_path, "--alarms", site) == 0
    summary = json.loads((tmp_path / "faulty" / "summary.json").read_text())
    jsonschema.validate(summary, load_schema("route-summary.schema.json"))
    [m] = summary["machines"]
    # the site file's bearing band (danger) and the demo machine file's own P2H peak limit (alert or more)
    assert m["alarms_crossed"] == 2 and m["alarm_state"] == "danger"
    a, peak = m["readings"][0]["alarms"]
    assert (a["point"], a["band"], a["state"]) == ("P2H", "bearing rates", "danger")
    assert (peak["point"], peak["band"], peak["unit"]) == ("P2H", "overall", "g peak")
    text = (tmp_path / "faulty" / "summary.txt").read_text()
    assert f"!! {m['alarms_crossed']} site alarm(s) crossed, worst danger" in text
    assert "!! site alarms: DANGER P2H bearing rates" in text
    html = (tmp_path / "faulty" / "summary.html").read_text()
    assert f'<strong class="alarm-danger">{m["alarms_crossed"]} crossed (danger)</strong>' in html
    with Store(tmp_path / "h.sqlite", create=False) as s:
        [row] = s.history(MACHINE, "P2H")
        judged = s.reading_alarms(row["id"])
    assert row["indicators"]["band[bearing rates]_g"] == pytest.approx(a["value"], rel=1e-3)
    # the summary's flags are the alarms the stored diagnosis judged by, kept with the reading
    assert judged is not None
    assert {("P2H", "bearing rates"), ("P2H", "overall")} <= {(j["point"], j["band"]) for j in judged}
    # a faulty reading is no healthy one: no limit from it
    capsys.readouterr()
    err = one_error_line(capsys, 2, ["alarms", "derive", MACHINE, "--store", tmp_path / "h.sqlite"])
    assert "0 healthy of 1; every stored reading has a confident hypothesis" in err, err


def test_derived_limits_are_mean_plus_k_sd_of_the_healthy_readings(tmp_path, site, capsys):
    route = _route(tmp_path / "healthy", 8)
    assert _run(route, tmp_path, "--alarms", site) == 0
    out = tmp_path / "derived.yaml"
    assert main(["alarms", "derive", MACHINE, "--store", str(tmp_path / "h.sqlite"), "--k", "3", "-o", str(out)]) == 0
    derived = {(a.point, a.band, a.quantity): a for a in load_alarm_file(out)[MACHINE]}   # a valid site file
    with Store(tmp_path / "h.sqlite", create=False) as s:
        rows = s.history(MACHINE, "P2H")
    assert len(rows) == 8
    for (band, quantity, name) in (("bearing rates", "acceleration_g_rms", "band[bearing rates]_g"),
                                   ("1X", "velocity_mm_s_rms", "band[1X]_mm_s"),
                                   ("overall", "velocity_mm_s_rms", "velocity_rms_mm_s")):
        v = np.array([r["indicators"][name] for r in rows])
        a = derived[("P2H", band, quantity)]
        # mean + 3 sd and mean + 6 sd of the eight healthy readings (common practice), to 4 figures, the sd
        # at least 10 % of the mean (the repeatability of route readings, common practice)
        sd = max(v.std(ddof=1), 0.10 * v.mean())
        assert a.alert == pytest.approx(v.mean() + 3 * sd, rel=1e-3)
        assert a.danger == pytest.approx(v.mean() + 6 * sd, rel=1e-3)
        assert a.alert >= 1.3 * v.mean() * (1 - 1e-3)
        assert "8 healthy readings" in a.source
    # the next survey's trend ends at its own reading: its site bands are judged before the trend is made,
    # so each band's trend ends at this reading's own value (never at the survey before's)
    later = tmp_path / "later"
    later.mkdir()
    sim = simulate(load_machine(PUMP), "healthy", None, 1, fs_hz=12800.0, duration_s=1.0, seed=200, points=["P2H"])
    write_simulation(sim, later / "r9.wav")
    (later / "route.yaml").write_text(yaml.safe_dump({"route": "later", "machines": {"rw2": str(PUMP)}, "readings": [
        {"file": "r9.wav", "machine": "rw2", "points": {"P2H": "P2H"}, "time": "2026-10-05T08:00:00"}]}))
    assert _run(later / "route.yaml", tmp_path, "--alarms", site) == 0
    [report] = [json.loads(p.read_text()) for p in (tmp_path / "later").rglob("r9.wav.json")]
    [p2h] = [p for p in report["trend"]["points"] if p["point"] == "P2H"]
    latest = {i["name"]: i["latest"] for i in p2h["indicators"]}
    for a in report["alarms"]["results"]:
        if a["point"] == "P2H" and a["value"] is not None:
            assert latest[a["indicator"]] == pytest.approx(a["value"], rel=1e-3, abs=1e-4), a["indicator"]  # 4 decimals
    assert "velocity_rms_mm_s" in latest and any(n.startswith("band[") for n in latest)
    capsys.readouterr()
    # too few healthy readings for the limits asked: one line, exit 2
    err = one_error_line(capsys, 2, ["alarms", "derive", MACHINE, "--store", tmp_path / "h.sqlite", "--least", "10"])
    assert "too few healthy readings" in err and "9 healthy reading(s), 10 needed" in err


@pytest.mark.parametrize("argv, words", [
    (["--k", "3", "--danger-k", "2"], "--danger-k (2) must be above --k (3)"),
    (["--k", "-1"], "--k must be above 0"),
])
def test_derive_bad_options_are_one_line(tmp_path, capsys, argv, words):
    err = one_error_line(capsys, 2, ["alarms", "derive", MACHINE, "--store", tmp_path / "none.sqlite", *argv])
    assert words in err, err


def test_derive_for_a_machine_not_stored(tmp_path, capsys):
    with Store(tmp_path / "h.sqlite"):
        pass
    err = one_error_line(capsys, 2, ["alarms", "derive", "No such pump", "--store", tmp_path / "h.sqlite"])
    assert "no stored reading of 'No such pump'" in err


def test_a_band_partly_beyond_fmax_says_it_was_measured_up_to_fmax_only():
    # nu25 item 5: a band reaching past Fmax read a plain "within" from its part below Fmax
    machine = replace(load_machine(PUMP), alarms=())
    site = [{"point": "P2H", "band": band, "quantity": "acceleration_g_rms", "alert": 5.0, "danger": 9.0}
            for band in ("5000-9000 Hz", "5000-6400 Hz", "7000-9000 Hz", "1000-2000 Hz")]
    path = Path(tempfile.mkdtemp()) / "alarms.yaml"
    path.write_text(yaml.safe_dump({"machines": {MACHINE: site}}))
    sim = simulate(machine, "outer-race", "pump_nde", 3, fs_hz=12800.0, duration_s=1.0, seed=11, points=["P2H"])
    d = diagnose(as_reading(sim, "or.wav"), with_site_alarms(machine, [path]), reasoner())
    fmax = 12800.0 / 2                        # the analysed spectrum's last line: half the sample rate
    doc = document_of(d, made_at=MADE_AT)
    jsonschema.validate(doc, load_schema("report.schema.json"))
    rows = {a["band"]: a for a in doc["alarms"]["results"]}
    assert rows["5000-9000 Hz"]["measured_to_hz"] == pytest.approx(fmax)
    assert rows["5000-9000 Hz"]["value"] == rows["5000-6400 Hz"]["value"] is not None   # the same lines
    assert rows["5000-6400 Hz"]["measured_to_hz"] is None and rows["1000-2000 Hz"]["measured_to_hz"] is None
    beyond = rows["7000-9000 Hz"]
    assert beyond["value"] is None and beyond["why_no_value"] == "band above the analysed spectrum"
    for fmt in ("text", "md", "html"):
        out = render(doc, fmt)
        assert out.count("5000-9000 Hz") == 1, fmt
        assert out.count(f"partly beyond the analysed spectrum: measured up to {fmax:g} Hz only") == 1, fmt


def test_a_route_stops_on_a_site_file_naming_no_machine_of_it(tmp_path, capsys):
    # nu25 item 4: a misspelt machine name was silently ignored; the route stops before any work
    route = _route(tmp_path / "typo", 1)
    typo = tmp_path / "typo.yaml"
    typo.write_text(yaml.safe_dump({"machines": {"RW-2 raw-water pump": ALARMS["machines"][MACHINE]}}))
    err = one_error_line(capsys, 3, ["route", route, "--store", tmp_path / "h.sqlite", "--out", tmp_path / "out",
                                     "--workers", "1", "--quiet", "--alarms", typo])
    assert f"{typo}:2: machines: no machine 'RW-2 raw-water pump' in this run; did you mean '{MACHINE}'?" in err, err
    assert not (tmp_path / "h.sqlite").exists() and not (tmp_path / "out").exists()


def test_a_reading_stored_before_its_alarms_were_kept_has_none_to_give(tmp_path):
    """Schema 8 keeps a reading's alarms; one stored before (alarms_kept NULL) says it has none known,
    and the route summary then judges it by the alarm files as they are now."""
    route = _route(tmp_path / "old", 1, ("outer-race", "pump_nde", 3))
    assert _run(route, tmp_path) == 0
    with Store(tmp_path / "h.sqlite", create=False) as s:
        [row] = s.history(MACHINE, "P2H")
        assert s.reading_alarms(row["id"]) is not None
        s.db.execute("UPDATE readings SET alarms_kept = NULL WHERE id = ?", (row["id"],))
        assert s.reading_alarms(row["id"]) is None
        assert s.reading_alarms(10**6) is None
