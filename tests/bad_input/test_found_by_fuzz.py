"""Reproducers of what ``python -m bench.fuzz`` found over 10,000 inputs after the hostile-use
fixes landed together: each was a traceback, and each is now one line and a clean exit."""

from __future__ import annotations

import shutil
import sqlite3

import numpy as np
import pytest
import yaml

from engine.cli import main

from support import CASES

PUMP = CASES / "machines" / "rw2-raw-water-pump.yaml"
NAME = "RW-2 raw water pump"


def _one_line(capsys) -> str:
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "Traceback" not in err, err
    return err


@pytest.fixture(scope="module")
def stored(tmp_path_factory):
    from engine.machine import load_machine
    from engine.simulation import simulate, write_simulation

    folder = tmp_path_factory.mktemp("found")
    sim = simulate(load_machine(PUMP), "unbalance", "pump", 2, fs_hz=12800.0, duration_s=1.0, seed=5, points=["P1H"])
    write_simulation(sim, folder / "r.wav")
    assert main(["diagnose", str(folder / "r.wav"), "--machine", str(PUMP), "--store", str(folder / "h.sqlite"),
                 "--format", "json", "-o", str(folder / "first.json")]) in (0, 7)
    return folder


@pytest.mark.parametrize("argv", [
    ["plan", PUMP, "--no-proof", "--fmax", "1000", "--lines", "400", "-o", "{d}/nul\0.txt"],
    ["trend", NAME, "--store", "{d}/h.sqlite", "--format", "json", "-o", "{d}/nul\0.txt"],
    ["diagnose", "{d}/r.wav", "--machine", PUMP, "--format", "md", "-o", "{d}/nul\0.md"],
    ["synth", PUMP, "--duration", "0.5", "-o", "{d}/nul\0.wav"],
], ids=["plan", "trend", "diagnose", "synth"])
def test_an_output_name_holding_a_nul_is_a_usage_error(stored, capsys, argv):
    argv = [str(a).replace("{d}", str(stored)) for a in argv]
    assert main(argv) == 2
    assert "NUL" in _one_line(capsys)


def test_a_route_output_folder_holding_a_nul_is_a_usage_error(tmp_path, capsys):
    route = tmp_path / "route.yaml"
    route.write_text(yaml.safe_dump({"route": "r", "machines": {"rw2": str(PUMP)},
                                     "readings": [{"file": "r.wav", "machine": "rw2"}]}))
    assert main(["route", str(route), "--out", str(tmp_path / "out\0x"), "--store", str(tmp_path / "s.sqlite"),
                 "--quiet"]) == 2
    assert "NUL" in _one_line(capsys)
    assert not (tmp_path / "s.sqlite").exists()


def test_a_stored_time_that_is_not_iso_is_a_damaged_store(stored, tmp_path, capsys):
    store = tmp_path / "h.sqlite"
    shutil.copy(stored / "h.sqlite", store)
    with sqlite3.connect(store) as db:
        db.execute("UPDATE readings SET taken_at = 'x'")
    db.close()
    assert main(["trend", NAME, "--store", str(store), "--format", "json"]) == 8
    line = _one_line(capsys)
    assert "'x'" in line and "--delete" in line


@pytest.mark.parametrize("name", ["route", "plant"])
def test_a_machine_file_whose_name_the_system_cannot_hold_is_a_route_error(tmp_path, capsys, name):
    long = "a" * 400 + ".yaml"
    if name == "route":
        np.save(tmp_path / "p1h.npy", np.zeros(16))
        route = tmp_path / "route.yaml"
        route.write_text(yaml.safe_dump({"route": "r", "machines": {"rw2": long},
                                         "readings": [{"file": "p1h.npy", "machine": "rw2"}]}))
        argv = ["route", str(route)]
    else:
        (tmp_path / "readings").mkdir()
        np.save(tmp_path / "readings" / "p1h.npy", np.zeros(16))
        plant = tmp_path / "plant.yaml"
        plant.write_text(yaml.safe_dump({"machines": [{"file": long, "patterns": ["*.npy"]}]}))
        argv = ["route", str(tmp_path / "readings"), "--plant", str(plant)]
    code = main([*argv, "--out", str(tmp_path / "out"), "--store", str(tmp_path / "s.sqlite"), "--quiet"])
    assert code == 2
    _one_line(capsys)


def test_plan_refuses_a_sample_rate_no_reading_may_have(capsys):
    assert main(["plan", str(PUMP), "--rpm", "2000", "--fmax", "1e-3", "--lines", "1", "--no-proof",
                 "--format", "json"]) == 2
    assert "less than a reading may have" in _one_line(capsys)


def test_plan_draws_an_impact_with_a_setting_that_leaves_it_a_few_samples(tmp_path, capsys):
    """Fmax 10 Hz: a 0.3 s impact window holds 8 samples, fewer than the anti-alias filter's padding."""
    out = tmp_path / "plan.html"
    assert main(["plan", str(PUMP), "--fmax", "10", "--lines", "12800", "--no-proof", "--format", "html",
                 "-o", str(out)]) == 0
    assert "<svg" in out.read_text()


def test_text_that_is_not_utf8_in_a_store_is_a_damaged_store(stored, tmp_path, capsys):
    """Random bytes written over a page can leave a text value that is not UTF-8."""
    store = tmp_path / "h.sqlite"
    shutil.copy(stored / "h.sqlite", store)
    with sqlite3.connect(store) as db:
        db.execute("UPDATE channels SET point = CAST(X'ff41fe' AS TEXT)")
    db.close()
    assert main(["trend", NAME, "--store", str(store), "--format", "html", "-o", str(tmp_path / "t.html")]) == 8
    assert "not a usable history store" in _one_line(capsys)


def test_values_no_reading_gives_are_no_values_in_history_and_trend(stored, tmp_path, capsys):
    """An indicator of 1e308 (finite, but its median overflows) and a certainty stored as text."""
    store = tmp_path / "h.sqlite"
    shutil.copy(stored / "h.sqlite", store)
    with sqlite3.connect(store) as db:
        db.execute("UPDATE indicators SET value = 1e308")
        db.execute("UPDATE hypotheses SET certainty = 'high'")
    db.close()
    assert main(["history", NAME, "--store", str(store)]) == 0
    assert "high" not in capsys.readouterr().out
    code = main(["trend", NAME, "--store", str(store), "--format", "text"])
    out, err = capsys.readouterr()
    assert code in (0, 2) and "Traceback" not in err and "1e+308" not in out


def test_a_route_reading_named_root_is_a_failed_reading_not_a_traceback(tmp_path, capsys):
    route = tmp_path / "route.yaml"
    route.write_text(yaml.safe_dump({"route": "r", "machines": {"rw2": str(PUMP)},
                                     "readings": [{"file": "/", "machine": "rw2", "points": {"ch1": "P1H"}}]}))
    code = main(["route", str(route), "--out", str(tmp_path / "out"), "--store", str(tmp_path / "s.sqlite"),
                 "--quiet", "--workers", "1"])
    assert code in (2, 9)
    assert "Traceback" not in capsys.readouterr().err


def test_plan_proof_of_a_record_shorter_than_the_analysis_needs_says_so(capsys):
    """100 samples (1 s at 100 Hz) is less than MIN_SAMPLES: the proof's trial cannot be analysed."""
    assert main(["plan", str(PUMP), "--rpm", "1486", "--duration", "1", "--sample-rate", "100", "--point", "P1H",
                 "--format", "json"]) == 0
    assert "cannot be analysed" in capsys.readouterr().out


# ``tellwave findings`` (bench.fuzz categories "findings csv", "findings options", "findings store")

def _store_with_a_finding(stored, tmp_path, capsys) -> str:
    from datetime import date

    store = str(tmp_path / "h.sqlite")
    shutil.copy(stored / "h.sqlite", store)
    assert main(["findings", "add", "--reading", "1", "--date", date.today().isoformat(), "--component", "pump_de",
                 "--fault", "outer-race", "--store", store]) == 0
    capsys.readouterr()
    return store


def _sql(store: str, *statements: str) -> None:
    db = sqlite3.connect(store, isolation_level=None)
    try:
        db.execute("PRAGMA foreign_keys=OFF")
        for s in statements:
            db.execute(s)
        db.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    finally:
        db.close()


def _bytes(store: str) -> bytes:
    from pathlib import Path

    return Path(store).read_bytes()


def test_a_findings_table_rebuilt_without_its_key_is_a_damaged_store(stored, tmp_path, capsys):
    """The rows were kept but not the primary key: a new finding got no id (KeyError printing it) and
    deleting one id deleted every row copied twice."""
    store = _store_with_a_finding(stored, tmp_path, capsys)
    _sql(store, "CREATE TABLE f2 AS SELECT * FROM findings", "DROP TABLE findings",
         "CREATE TABLE findings (id INTEGER, reading_id INTEGER, component TEXT, fault TEXT, stage INTEGER,"
         " found_on TEXT, work_order TEXT, notes TEXT, stored_at TEXT)",
         "INSERT INTO findings SELECT * FROM f2", "INSERT INTO findings SELECT * FROM f2", "DROP TABLE f2")
    before = _bytes(store)
    assert main(["findings", "add", "--reading", "1", "--date", "2026-12-01", "--component", "pump_nde", "--fault",
                 "nothing-found", "--store", store]) == 8
    assert "table findings has lost its key" in _one_line(capsys)
    assert main(["findings", "delete", "1", "--store", store]) == 8
    assert "lost its key" in _one_line(capsys)
    assert _bytes(store) == before


def test_a_stored_finding_of_a_kind_tellwave_does_not_write_is_a_damaged_store(stored, tmp_path, capsys):
    """A component stored as bytes made ``findings list --json`` a TypeError; now the list says which
    finding is damaged, and deleting it (which reads only its id) mends the store."""
    store = _store_with_a_finding(stored, tmp_path, capsys)
    for damage in ("UPDATE findings SET component = x'00ff1b5b33316d'", "UPDATE findings SET stage = 'two'",
                   "UPDATE findings SET found_on = 'x'", "UPDATE findings SET stage = 9"):
        copy = str(tmp_path / "damaged.sqlite")
        shutil.copy(store, copy)
        _sql(copy, damage)
        for json_flag in ([], ["--json"]):
            assert main(["findings", "list", "--store", copy] + json_flag) == 8, damage
            assert "damaged: finding 1 holds" in _one_line(capsys)
        assert main(["findings", "delete", "1", "--store", copy]) == 0
        capsys.readouterr()
        assert main(["findings", "list", "--store", copy, "--json"]) == 0
        assert capsys.readouterr().out.strip() == "[]"


def test_a_finding_on_a_reading_whose_stored_time_is_damaged_is_a_damaged_store(stored, tmp_path, capsys):
    """A reading named by id was not checked on its way out of the store: its time 'x' was a ValueError."""
    store = _store_with_a_finding(stored, tmp_path, capsys)
    _sql(store, "UPDATE readings SET taken_at = 'x'")
    before = _bytes(store)
    assert main(["findings", "add", "--reading", "1", "--date", "2026-12-04", "--component", "pump_nde",
                 "--fault", "nothing-found", "--store", store]) == 8
    assert "damaged: reading 1 is stored with the time 'x'" in _one_line(capsys)
    assert _bytes(store) == before


def test_adding_a_finding_beside_a_damaged_one_stores_it_and_says_so(stored, tmp_path, capsys):
    """The command listed every finding to print the new one: a damaged earlier finding made it exit 8
    after the new finding was stored. It reads back only what it stored now."""
    store = _store_with_a_finding(stored, tmp_path, capsys)
    from datetime import date

    _sql(store, "UPDATE findings SET stage = 'two'")
    today = date.today().isoformat()
    assert main(["findings", "add", "--reading", "1", "--date", today, "--component", "pump_nde",
                 "--fault", "nothing-found", "--store", store]) == 0
    assert capsys.readouterr().out.startswith(f"finding 2: nothing-found on pump_nde ({today}) judges reading 1")
    with sqlite3.connect(store) as db:
        assert db.execute("SELECT count(*) FROM findings").fetchone()[0] == 2
    db.close()
