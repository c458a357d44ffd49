"""Dates in a report: when it was made (local time with offset, to the minute) and when the reading
was taken (its sidecar, --taken-at, a route), in every format.

The tests named ``test_N_*`` reproduce issue 13's report defects and keep their names.
"""

from __future__ import annotations

import json
import re

import jsonschema

from engine.cli import main
from engine.common.yamlfile import load_schema
from engine.machine import load_machine
from engine.pipeline import document_of
from engine.pipeline.cases import load_case, simulation_of
from engine.report import render
from engine.simulation import write_simulation

from support import CASES, MADE_AT, case_diagnosis, doc_of
from support import REPORT_FORMATS as FORMATS


def test_2_the_report_says_when_it_was_made_local_time_with_offset_to_the_minute():
    doc = document_of(case_diagnosis("rw2-pump-nde-outer-race"))       # no time given: now
    assert re.fullmatch(r"\d{4}-\d{2}-\d{2}T\d{2}:\d{2}[+-]\d{2}:\d{2}", doc["made_at"]), doc["made_at"]
    jsonschema.Draft202012Validator(load_schema("report.schema.json")).validate(json.loads(render(doc, "json")))
    fixed = doc_of("rw2-pump-nde-outer-race")
    assert fixed["made_at"] == MADE_AT
    for fmt in FORMATS:
        assert MADE_AT in render(fixed, fmt), fmt


def _stamped_wav(tmp_path, taken: str | None):
    machine = load_machine(CASES / "machines/rw2-raw-water-pump.yaml")
    case = load_case(CASES / "demo/rw2-impeller-unbalance.case.yaml")
    return write_simulation(simulation_of(case, machine), tmp_path / "rw2.wav", timestamp=taken)[0]


def test_2_the_header_shows_when_the_reading_was_taken_from_its_sidecar(tmp_path, capsys):
    wav = _stamped_wav(tmp_path, "2026-03-02T08:34:00")
    assert "timestamp: '2026-03-02T08:34:00'" in (tmp_path / "rw2.wav.yaml").read_text()
    rw2 = CASES / "machines/rw2-raw-water-pump.yaml"
    assert main(["diagnose", str(wav), "--machine", str(rw2), "--format", "json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["reading"]["timestamp"] == "2026-03-02T08:34:00" and doc["reading"]["time_from"] == "file"
    for fmt in FORMATS:
        out = render(doc, fmt)
        header = out[:out.find("Answer") if fmt != "text" else out.find("ANSWER")]
        assert "2026-03-02T08:34" in header and doc["made_at"] in header, fmt


def test_2_taken_at_on_the_command_line_reaches_the_report(tmp_path, capsys):
    wav = _stamped_wav(tmp_path, None)
    rw2 = CASES / "machines/rw2-raw-water-pump.yaml"
    assert main(["diagnose", str(wav), "--machine", str(rw2), "--format", "json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["reading"]["timestamp"] is None and "not stated" in doc["reading"]["taken"]
    assert main(["diagnose", str(wav), "--machine", str(rw2), "--format", "json",
                 "--taken-at", "2026-03-02T08:34"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["reading"]["timestamp"] == "2026-03-02T08:34:00" and doc["reading"]["time_from"] == "command line"
    assert main(["diagnose", str(wav), "--machine", str(rw2), "--taken-at", "yesterday"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("tellwave: error:") and err.count("\n") == 1 and "--taken-at" in err


def test_2_a_combined_reading_keeps_the_time_of_whichever_file_states_one(tmp_path):
    from engine.readings import combine_readings, load_reading
    from engine.simulation import simulate

    machine = load_machine(CASES / "machines/rw2-raw-water-pump.yaml")
    one = write_simulation(simulate(machine, "healthy", None, 2, None, 12800.0, 2.0, 1, points=["P1H"]),
                           tmp_path / "p1h.wav")[0]
    two = write_simulation(simulate(machine, "healthy", None, 2, None, 12800.0, 2.0, 1, points=["P1A"]),
                           tmp_path / "p1a.wav", timestamp="2026-03-02T08:40:00")[0]
    assert combine_readings([load_reading(one), load_reading(two)]).timestamp == "2026-03-02T08:40:00"


def test_2_a_route_time_reaches_the_report_and_every_report_of_a_run_shares_its_time(tmp_path):
    from engine.history.store import Store
    from engine.route import load_route, run_route

    wav = _stamped_wav(tmp_path, None)
    route = tmp_path / "route.yaml"
    route.write_text(f"route: March survey\nmachines: {{rw2: {CASES / 'machines/rw2-raw-water-pump.yaml'}}}\n"
                     f"readings:\n  - {{file: {wav.name}, machine: rw2, time: '2026-03-02T08:50:00'}}\n")
    with Store(tmp_path / "h.sqlite") as store:
        run_route(load_route(route), store, tmp_path / "out", workers=1, fmt="json", made_at=MADE_AT)
    doc = json.loads(next((tmp_path / "out").rglob("*.json")).read_text())
    assert doc["reading"]["timestamp"] == "2026-03-02T08:50:00" and doc["reading"]["time_from"] == "route"
    assert doc["made_at"] == MADE_AT
