"""``diagnose --store`` edges: it says what it stored, where and as which time; a file's modification time is
stored to the second; a future --taken-at is refused; the same reading with another --taken-at is moved (and
said so), never past a finding that judges it; a diagnosis made again keeps the findings; a store in a folder
that does not exist is one line with exit 2, and nothing is made."""

from __future__ import annotations

import os
import re

from engine.cli import main
from engine.history.store import Store

from support import CASES, diagnose_stored, one_error_line, pump_reading

PUMP = CASES / "machines" / "rw2-raw-water-pump.yaml"
NAME = "RW-2 raw water pump"


def _times(store) -> list[str]:
    with Store(store, create=False) as s:
        return [r["taken_at"] for r in s.readings()]


def test_it_says_what_it_stored_and_a_file_time_is_to_the_second(tmp_path, capsys):
    reading, store = pump_reading(tmp_path), tmp_path / "h.sqlite"
    os.utime(reading, (1780000000.123456, 1780000000.123456))      # a modification time with a fraction
    capsys.readouterr()
    assert diagnose_stored(reading, store) == 0
    err = capsys.readouterr().err
    (when,) = _times(store)
    assert re.fullmatch(r"\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d", when)      # no microseconds
    assert f"stored reading 1 in {store}, taken {when} (from the file's modification time)" in err


def test_a_future_taken_at_is_refused_and_nothing_is_stored(tmp_path, capsys):
    reading, store = pump_reading(tmp_path), tmp_path / "h.sqlite"
    err = one_error_line(capsys, 2, ["diagnose", str(reading), "--machine", str(PUMP), "--store", str(store),
                                     "--taken-at", "2999-01-01T09:00"])
    assert "--taken-at 2999-01-01T09:00:00 is in the future" in err
    assert not store.exists()


def test_another_taken_at_moves_the_reading_and_says_so_keeping_its_findings(tmp_path, capsys):
    reading, store = pump_reading(tmp_path), tmp_path / "h.sqlite"
    assert diagnose_stored(reading, store, "--taken-at", "2026-03-01T08:00:00") == 0
    assert main(["findings", "add", "--reading", "1", "--component", "pump", "--fault", "unbalance",
                 "--date", "2026-03-05", "--store", str(store)]) == 0
    capsys.readouterr()
    assert diagnose_stored(reading, store, "--taken-at", "2026-03-02T08:00:00") == 0      # a corrected time
    assert "moved from 2026-03-01T08:00:00" in capsys.readouterr().err
    assert _times(store) == ["2026-03-02T08:00:00"]
    with Store(store, create=False) as s:
        (finding,) = s.findings(NAME)                 # made again: the finding still judges it
    assert (finding["id"], finding["taken_at"]) == (1, "2026-03-02T08:00:00")
    # past the day the machine was opened: refused, the reading and its finding stay
    err = one_error_line(capsys, 2, ["diagnose", str(reading), "--machine", str(PUMP), "--store", str(store),
                                     "--taken-at", "2026-03-09T08:00:00"])
    assert "judged by finding 1 (found 2026-03-05)" in err and "findings delete 1" in err
    assert _times(store) == ["2026-03-02T08:00:00"]
    # the same time again: nothing moves, nothing is said of it
    capsys.readouterr()
    assert diagnose_stored(reading, store, "--taken-at", "2026-03-02T08:00:00") == 0
    assert "moved" not in capsys.readouterr().err
    with Store(store, create=False) as s:
        assert len(s.findings(NAME)) == 1


def test_a_store_in_a_folder_that_does_not_exist_is_one_line(tmp_path, capsys):
    reading = pump_reading(tmp_path)
    store = tmp_path / "no" / "folder" / "h.sqlite"
    for argv in (["diagnose", str(reading), "--machine", str(PUMP), "--store", str(store)],
                 ["route", str(tmp_path / "none.yaml"), "--store", str(store)]):
        err = one_error_line(capsys, 2, argv)
        assert f"there is no folder {store.parent}" in err, argv
    assert not (tmp_path / "no").exists()
