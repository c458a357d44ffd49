"""Findings in the history store: the schema step that adds them, a round trip, which readings a machine
and date judge, and a forgotten reading taking its findings with it."""

from __future__ import annotations

import os

import pytest
from test_store import record

from engine.history.findings import Finding, FindingError, add, make, read_csv
from engine.history.store import SCHEMA_VERSION, Store

from support import ROOT

PUMP = "RW-2 raw water pump"
FAULTS = {"unbalance", "outer-race"}


def at_point(n: int, point: str, when: str) -> dict:
    r = record(n, when=when)
    r["channels"] = [dict(r["channels"][0], channel=point, point=point)]
    r["indicators"] = [dict(i, channel=point) for i in r["indicators"]]
    return r


def test_a_store_of_the_previous_schema_migrates_and_keeps_its_readings(tmp_path):
    path = tmp_path / "h.sqlite"
    with Store(path, migrate_to=4) as old:      # schema 5 added the findings
        rid = old.db.execute("INSERT INTO readings (content_hash, machine, source, taken_at, time_from, stored_at)"
                             " VALUES ('h1', ?, 'r1.wav', '2026-01-12T08:30:00', 'route', 'now')", (PUMP,)).lastrowid
        assert "findings" not in [r[0] for r in old.db.execute("SELECT name FROM sqlite_master")]
    with Store(path) as new:
        assert new.version == SCHEMA_VERSION
        assert [r["id"] for r in new.readings(PUMP)] == [rid]
        add(new, [(None, Finding(component="pump", fault="unbalance", found_on="2026-01-20", reading_id=rid))], FAULTS)
        assert [f["fault"] for f in new.findings(PUMP)] == ["unbalance"]


def test_a_finding_comes_back_whole(tmp_path):
    with Store(tmp_path / "h.sqlite") as s:
        rid = s.add(record(1))
        f = make(component="pump", fault="outer-race", date_text="2026-01-20", reading=str(rid), stage="3",
                 work_order=" WO-118 ", notes="spall on the outer race, load zone")
        (fid,) = add(s, [(None, f)], FAULTS)
        (back,) = s.findings()
        assert back == {"id": fid, "reading_id": rid, "machine": PUMP, "taken_at": "2026-01-12T08:30:00",
                        "source": "r1.wav", "component": "pump", "fault": "outer-race", "stage": 3,
                        "found_on": "2026-01-20", "work_order": "WO-118",
                        "notes": "spall on the outer race, load zone"}
        assert s.delete_finding(fid) and s.findings() == [] and not s.delete_finding(fid)


def test_a_machine_and_date_judge_the_latest_reading_at_each_point_on_or_before_that_day(tmp_path):
    with Store(tmp_path / "h.sqlite") as s:
        old_p1 = s.add(at_point(1, "P1H", "2026-01-05T08:00:00"))
        p2 = s.add(at_point(2, "P2H", "2026-01-06T08:00:00"))
        new_p1 = s.add(at_point(3, "P1H", "2026-02-05T08:00:00"))
        later = s.add(at_point(4, "P1H", "2026-03-05T08:00:00"))
        ids = add(s, [(None, make(component="pump", fault="unbalance", date_text="2026-02-05", machine=PUMP))],
                  FAULTS)
        judged = sorted(f["reading_id"] for f in s.findings())
        assert len(ids) == 2 and judged == sorted([p2, new_p1])     # the same day counts; old_p1 and later do not
        assert old_p1 not in judged and later not in judged


def test_forgetting_a_reading_forgets_its_findings(tmp_path):
    with Store(tmp_path / "h.sqlite") as s:
        keep, gone = s.add(record(1)), s.add(record(2, when="2026-01-13T08:30:00"))
        add(s, [(None, make(component="pump", fault="unbalance", date_text="2026-01-20", reading=str(r)))
                for r in (keep, gone)], FAULTS)
        s.delete(gone)
        assert [f["reading_id"] for f in s.findings()] == [keep]


def test_a_failing_finding_leaves_the_ones_before_it_unwritten(tmp_path):
    with Store(tmp_path / "h.sqlite") as s:
        rid = s.add(record(1))
        good = make(component="pump", fault="unbalance", date_text="2026-01-20", reading=str(rid))
        with pytest.raises(FindingError, match="already records"):
            add(s, [(2, good), (3, good)], FAULTS, path="f.csv")      # the second is the first again
        assert s.findings() == []


def test_the_component_must_be_in_the_machine_file_the_reading_was_diagnosed_with(tmp_path):
    machine_file = str(ROOT / "cases" / "machines" / "rw2-raw-water-pump.yaml")
    with Store(tmp_path / "h.sqlite") as s:
        rid = s.add(dict(record(1), machine_file=machine_file))
        with pytest.raises(FindingError, match="'gearbox' is not in the machine file.*pump_de") as err:
            add(s, [(None, make(component="gearbox", fault="unbalance", date_text="2026-01-20", reading=str(rid)))],
                FAULTS)
        assert "coupling" in str(err.value).split("its components are ")[1].split(", ")   # couplings are components
        add(s, [(None, make(component="pump_de", fault="outer-race", date_text="2026-01-20", reading=str(rid)))],
            FAULTS)
        assert [f["component"] for f in s.findings()] == ["pump_de"]


@pytest.mark.parametrize("kwargs, problem", [
    (dict(date_text="2999-01-01"), "in the future"),
    (dict(date_text="20.01.2026"), "expected a date"),
    (dict(stage="5"), "damage stage"),
    (dict(stage="two"), "damage stage"),
    (dict(fault="other"), "say what was found"),
    (dict(component=" "), "component: empty"),
    (dict(reading=None), "either a reading id or a machine"),
    (dict(machine=PUMP), "either a reading id or a machine"),
    (dict(reading="0"), "a reading id is a whole number"),
])
def test_a_finding_given_wrongly_is_refused_before_the_store_is_asked(kwargs, problem):
    given = dict(component="pump", fault="unbalance", date_text="2026-01-20", reading="1") | kwargs
    with pytest.raises(FindingError, match=problem):
        make(**given)


@pytest.mark.parametrize("text, line, problem", [
    ("", 1, "empty"),
    ("reading,date,component,fault,colour\n", 1, "unknown column"),
    ("date,component,fault\n2026-01-20,pump,unbalance\n", 1, "reading or machine"),
    ("reading,date,component,fault\n1,2026-01-20,pump\n", 2, "3 cells"),
    ("reading,date,component,fault\n", None, "no finding"),
])
def test_a_csv_file_that_cannot_be_findings_names_its_line(tmp_path, text, line, problem):
    path = tmp_path / "f.csv"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(FindingError, match=problem) as caught:
        read_csv(path)
    assert caught.value.path == str(path) and caught.value.line == line


def test_a_file_that_is_no_text_or_no_file_is_one_error_naming_it(tmp_path):
    latin = tmp_path / "latin.csv"
    latin.write_bytes("reading,date,component,fault,notes\n1,2026-01-20,pump,other,d\xe9g\xe2t\n".encode("latin-1"))
    nul = tmp_path / "nul.csv"
    nul.write_bytes(b"reading,date,component,fault\n1,2026-01-20,pump\0,unbalance\n")
    for path, problem in ((latin, "not UTF-8"), (nul, "NUL"), (tmp_path, "is a folder"),
                          (tmp_path / "none.csv", "no such file")):
        with pytest.raises(FindingError, match=problem) as caught:
            read_csv(path)
        assert caught.value.path == str(path)


def test_a_pipe_given_as_the_csv_is_refused_before_it_is_read(tmp_path):
    fifo = tmp_path / "export.csv"
    os.mkfifo(fifo)                 # a read would wait for a writer that never comes
    with pytest.raises(FindingError, match="is not a regular file"):
        read_csv(fifo)


def test_a_header_in_capitals_with_a_byte_order_mark_and_blank_lines_is_read(tmp_path):
    path = tmp_path / "export.csv"
    path.write_text("\ufeffReading,Date,Component,Fault\n\n1,2026-01-20,pump,unbalance\n\n", encoding="utf-8")
    assert read_csv(path) == [(3, {"reading": "1", "date": "2026-01-20", "component": "pump", "fault": "unbalance"})]


def test_a_note_over_two_lines_is_one_row_and_each_row_is_named_by_the_line_it_starts_on(tmp_path):
    path = tmp_path / "export.csv"
    path.write_text('reading,date,component,fault,notes\r\n1,2026-01-20,pump,other,"rub on the\r\nwear ring"\r\n'
                    "2,2026-01-21,pump,unbalance,\r\n", encoding="utf-8")
    rows = read_csv(path)
    assert [line for line, _ in rows] == [2, 4] and rows[0][1]["notes"] == "rub on the\nwear ring"
