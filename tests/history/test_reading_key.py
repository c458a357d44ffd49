"""``diagnose --store`` keys a diagnosis by how the reading was read, and schema 4 keeps the files'
hash beside the key so a diagnosis made another way replaces the stale one."""

from __future__ import annotations

import sqlite3

from engine.cli import main
from engine.history.record import content_hash
from engine.history.store import Store

from support import CASES, diagnose_stored, pump_reading

PUMP = CASES / "machines" / "rw2-raw-water-pump.yaml"


def test_a_corrected_unit_replaces_the_stored_diagnosis(tmp_path):
    reading, store = pump_reading(tmp_path), tmp_path / "h.sqlite"
    diagnose_stored(reading, store, "--unit", "mm/s")         # the file holds g: a wrong unit
    with Store(store) as s:
        (wrong,) = s.readings()
    diagnose_stored(reading, store, "--unit", "g")
    with Store(store) as s:
        (right,) = s.readings()
    assert right["content_hash"] != wrong["content_hash"]
    assert right["recording_hash"] == wrong["recording_hash"] == content_hash([reading])
    diagnose_stored(reading, store, "--unit", "g")             # the same once more: still one
    with Store(store) as s:
        assert [r["content_hash"] for r in s.readings()] == [right["content_hash"]]


def test_another_machine_is_another_diagnosis(tmp_path):
    reading, store = pump_reading(tmp_path), tmp_path / "h.sqlite"
    other = tmp_path / "rw3.yaml"
    other.write_text(PUMP.read_text().replace("machine: RW-2 raw water pump", "machine: RW-3 raw water pump"))
    diagnose_stored(reading, store)
    main(["diagnose", str(reading), "--machine", str(other), "--store", str(store), "--format", "json",
          "-o", str(tmp_path / "out3.json")])
    with Store(store) as s:
        assert s.machines() == ["RW-2 raw water pump", "RW-3 raw water pump"]


def test_schema_4_keeps_the_files_hash_of_rows_stored_before(tmp_path):
    store = tmp_path / "h.sqlite"
    with Store(store, migrate_to=3):
        pass
    db = sqlite3.connect(store)
    db.execute("INSERT INTO readings (content_hash, machine, source, taken_at, time_from, stored_at)"
               " VALUES ('abc', 'M', 'r.wav', '2026-01-01T00:00:00', 'file', '2026-01-02T00:00:00')")
    db.commit()
    db.close()
    with Store(store) as s:
        (row,) = s.readings()
        assert s.version >= 4 and row["recording_hash"] == "abc"
