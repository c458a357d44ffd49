"""The history store: round trip, forward migration, refusal of newer files, transactions,
two writers at once, deletion."""

from __future__ import annotations

import subprocess
import sys

import pytest

from engine.common.errors import StoreError
from engine.history.store import SCHEMA_VERSION, Store


def record(n: int, machine="RW-2 raw water pump", when="2026-01-12T08:30:00", velocity=1.0) -> dict:
    return {"content_hash": f"hash-{n}", "machine": machine, "machine_file": None, "source": f"r{n}.wav",
            "taken_at": when, "time_from": "route", "speed_rpm": 1486.0, "elapsed_s": 0.1, "fs_hz": 25600.0,
            "duration_s": 2.0,
            "verdict": {"urgency": "watch", "urgency_label": "watch", "worst_zone": "B", "withheld": False,
                        "summary": "s"},
            "top": None,
            "channels": [{"channel": "P1H", "point": "P1H", "direction": "horizontal", "location": "pump_de",
                          "zone": "B"}],
            "indicators": [{"channel": "P1H", "name": "velocity_rms_mm_s", "value": velocity},
                           {"channel": "P1H", "name": "accel_peak_g", "value": 0.5}],
            "hypotheses": [{"rank": 1, "fault": "unbalance", "fault_name": "unbalance", "component": "pump",
                            "certainty": 0.6, "urgency": "plan"}]}


def test_a_record_comes_back_whole(tmp_path):
    with Store(tmp_path / "h.sqlite") as s:
        rid = s.add(record(1, velocity=2.5))
        assert s.has("hash-1") and not s.has("hash-2")
        assert s.machines() == ["RW-2 raw water pump"]
        (row,) = s.readings("RW-2 raw water pump")
        assert row["id"] == rid and row["top_fault"] == "unbalance" and row["points"] == ["P1H"]
        (h,) = s.history("RW-2 raw water pump", "P1H")
        assert h["indicators"] == {"velocity_rms_mm_s": 2.5, "accel_peak_g": 0.5}
        assert s.db.execute("PRAGMA journal_mode").fetchone()[0] == "wal"
        assert s.version == SCHEMA_VERSION


def test_a_stored_hash_is_kept_unless_replaced(tmp_path):
    with Store(tmp_path / "h.sqlite") as s:
        first = s.add(record(1, velocity=1.0))
        assert s.add(record(1, velocity=9.0)) == first
        assert s.history("RW-2 raw water pump")[0]["indicators"]["velocity_rms_mm_s"] == 1.0
        s.add(record(1, velocity=9.0), replace=True)
        (h,) = s.history("RW-2 raw water pump")
        assert h["indicators"]["velocity_rms_mm_s"] == 9.0


def test_a_failed_write_leaves_nothing_behind(tmp_path):
    bad = record(1)
    bad["hypotheses"] = bad["hypotheses"] * 2          # the same rank twice: the insert fails midway
    with Store(tmp_path / "h.sqlite") as s:
        with pytest.raises(StoreError, match="UNIQUE constraint failed.*nothing of it was stored"):
            s.add(bad)
        assert not s.has("hash-1")
        assert s.db.execute("SELECT COUNT(*) FROM channels").fetchone()[0] == 0


def test_delete_takes_everything_of_the_reading(tmp_path):
    with Store(tmp_path / "h.sqlite") as s:
        rid = s.add(record(1))
        s.add(record(2))
        assert s.delete(rid) and not s.delete(rid)
        for table in ("channels", "indicators", "hypotheses"):
            assert s.db.execute(f"SELECT COUNT(*) FROM {table} WHERE reading_id = ?", (rid,)).fetchone()[0] == 0
        assert len(s.readings()) == 1


def test_an_old_store_migrates_forward_and_keeps_its_readings(tmp_path):
    path = tmp_path / "h.sqlite"
    with Store(path, migrate_to=1) as old:
        assert old.version == 1
        old.db.execute("INSERT INTO readings (content_hash, machine, source, taken_at, time_from, stored_at)"
                       " VALUES ('h0', 'M', 'a.wav', '2026-01-01T00:00:00', 'route', 'now')")
        assert "route_id" not in [r[1] for r in old.db.execute("PRAGMA table_info(readings)")]
    with Store(path) as new:
        assert new.version == SCHEMA_VERSION
        assert new.has("h0")
        assert "route_id" in [r[1] for r in new.db.execute("PRAGMA table_info(readings)")]
        assert new.start_route("r", None) > 0


def test_a_store_from_a_newer_tellwave_is_refused(tmp_path):
    path = tmp_path / "h.sqlite"
    with Store(path) as s:
        s.db.execute("UPDATE schema_version SET version = 99")
    with pytest.raises(StoreError, match="newer tellwave") as err:
        Store(path)
    assert err.value.exit_code == 8 and str(path) in str(err.value)


def test_a_file_that_is_not_a_store_is_one_error(tmp_path):
    path = tmp_path / "h.sqlite"
    path.write_bytes(b"this is not a database" * 100)
    with pytest.raises(StoreError, match="not a usable history store"):
        Store(path)


WRITER = """
import sys
sys.path.insert(0, {root!r})
from tests.history.test_store import record
from engine.history.store import Store
with Store(sys.argv[1]) as s:
    for i in range(int(sys.argv[2]), int(sys.argv[2]) + 40):
        s.add(record(i))
"""


def test_two_processes_writing_at_once_do_not_corrupt_it(tmp_path):
    from support import ROOT

    path = tmp_path / "h.sqlite"
    Store(path).close()
    script = WRITER.format(root=str(ROOT))
    procs = [subprocess.Popen([sys.executable, "-c", script, str(path), str(start)]) for start in (0, 1000)]
    assert [p.wait(timeout=120) for p in procs] == [0, 0]
    with Store(path) as s:
        assert s.integrity() == "ok"
        assert len(s.readings()) == 80
        assert s.db.execute("SELECT COUNT(*) FROM indicators").fetchone()[0] == 160


def test_a_diagnosis_becomes_a_record_with_its_key_indicators(tmp_path):
    from engine.history.record import content_hash, record_of
    from engine.machine import load_machine
    from engine.pipeline import diagnose, document_of
    from engine.readings import load_reading
    from engine.reasoning import Reasoner, load_rulebook
    from engine.simulation import simulate, write_simulation

    from support import CASES

    machine = load_machine(CASES / "machines" / "rw2-raw-water-pump.yaml")
    (tmp_path / "a").mkdir()
    path = write_simulation(simulate(machine, "inner-race", "pump_de", 3, fs_hz=12800.0, duration_s=1.0, seed=4,
                                     points=["P1H"]), tmp_path / "a" / "p1h.wav")[0]
    d = diagnose(load_reading(path), machine, Reasoner(load_rulebook()))
    rec = record_of(document_of(d), d.facts, content_hash=content_hash([path]), taken_at="2026-01-01T00:00:00",
                    time_from="route", machine_file=str(machine.source), elapsed_s=0.2)
    names = {i["name"] for i in rec["indicators"]}
    assert {"velocity_rms_mm_s", "accel_peak_g", "accel_rms_g", "crest_factor", "kurtosis", "x1_mm_s",
            "x2_mm_s", "env_BPFI_db"} <= names
    assert rec["channels"] == [{"channel": "P1H", "point": "P1H", "direction": "horizontal", "location": "pump_de",
                                "scale_trusted": True, "zone": rec["channels"][0]["zone"]}]
    assert rec["top"]["fault"] == "inner-race" and abs(rec["speed_rpm"] - 1486) < 15
    # the same bytes elsewhere hash alike; a changed sidecar does not
    other = tmp_path / "b"
    other.mkdir()
    for f in (path, path.with_name(path.name + ".yaml")):
        (other / f.name).write_bytes(f.read_bytes())
    assert content_hash([other / path.name]) == rec["content_hash"]
    (other / (path.name + ".yaml")).write_text((other / (path.name + ".yaml")).read_text() + "point: P2H\n")
    assert content_hash([other / path.name]) != rec["content_hash"]
    with Store(tmp_path / "h.sqlite") as s:
        s.add(rec)
        assert s.history(rec["machine"])[0]["indicators"]["x1_mm_s"] > 0


# ---------------------------------------------------------------- a scale that is not trusted

def _gained_record(gain: float, when: str, n: int):
    """A stored record of a simulated RW-2 inner-race reading at P1H, its samples x ``gain``."""
    from engine.history.record import record_of
    from engine.machine import load_machine
    from engine.pipeline import diagnose, document_of
    from engine.reasoning import Reasoner, load_rulebook
    from engine.simulation import Simulation, as_reading, simulate

    from support import CASES

    machine = load_machine(CASES / "machines" / "rw2-raw-water-pump.yaml")
    sim = simulate(machine, "inner-race", "pump_de", 3, fs_hz=12800.0, duration_s=1.0, seed=4, points=["P1H"])
    sim = Simulation(sim.fs_hz, {k: x * gain for k, x in sim.channels.items()}, sim.points, sim.truth, sim.speed_rpm)
    d = diagnose(as_reading(sim), machine, Reasoner(load_rulebook()))
    return machine, d, record_of(document_of(d), d.facts, content_hash=f"gain-{n}", taken_at=when,
                                 time_from="route", machine_file=str(machine.source), elapsed_s=0.1)


def test_an_untrusted_scale_stores_no_level_and_is_flagged(tmp_path):
    _, _, rec = _gained_record(1000.0, "2026-02-01T00:00:00", 1)
    names = {i["name"] for i in rec["indicators"]}
    assert {"crest_factor", "kurtosis", "env_BPFI_db"} <= names      # scale-free: kept
    assert not {"velocity_rms_mm_s", "accel_peak_g", "accel_rms_g", "x1_mm_s", "x2_mm_s"} & names
    assert rec["channels"][0]["scale_trusted"] is False and rec["channels"][0]["zone"] is None
    with Store(tmp_path / "h.sqlite") as s:
        s.add(rec)
        (row,) = s.history(rec["machine"])
        assert row["scale_trusted"] == 0 and "kurtosis" in row["indicators"]


def test_migration_flags_channels_stored_with_an_untrusted_level_and_history_leaves_it_out(tmp_path):
    # stores written before step 3 gave such a channel no zone but kept its level
    path = tmp_path / "h.sqlite"
    with Store(path, migrate_to=2) as old:
        old.db.execute("INSERT INTO readings (id, content_hash, machine, source, taken_at, time_from, stored_at)"
                       " VALUES (1, 'h0', 'M', 'a.wav', '2026-01-01T00:00:00', 'route', 'now')")
        old.db.execute("INSERT INTO channels VALUES (1, 'A', 'P1', 'horizontal', 'de', NULL)")
        old.db.execute("INSERT INTO channels VALUES (1, 'B', 'P2', 'horizontal', 'nde', 'B')")
        for channel, name, value in (("A", "velocity_rms_mm_s", 4870.0), ("A", "kurtosis", 7.5),
                                     ("B", "velocity_rms_mm_s", 3.1), ("B", "kurtosis", 3.0)):
            old.db.execute("INSERT INTO indicators VALUES (1, ?, ?, ?)", (channel, name, value))
    with Store(path) as new:
        rows = {r["channel"]: r for r in new.history("M")}
        assert rows["A"]["scale_trusted"] == 0 and rows["A"]["indicators"] == {"kurtosis": 7.5}
        assert rows["B"]["scale_trusted"] is None and rows["B"]["indicators"]["velocity_rms_mm_s"] == 3.1
        assert new.db.execute("SELECT COUNT(*) FROM indicators").fetchone()[0] == 4     # nothing deleted


def test_a_point_whose_scale_is_not_trusted_now_trends_only_its_scale_free_indicators(tmp_path):
    from engine.advice import load_advice, zone_scale
    from engine.trend.diagnosis import HistoryLink

    with Store(tmp_path / "h.sqlite") as s:
        for i, month in enumerate(("01", "02", "03")):
            machine, _, rec = _gained_record(1.0, f"2026-{month}-01T00:00:00", i)
            s.add(rec)
        machine, d, _ = _gained_record(1000.0, "2026-04-01T00:00:00", 9)
        link = HistoryLink(s, machine, zone_scale(machine, load_advice()), content_hash="gain-9",
                           taken_at="2026-04-01T00:00:00", plots=False)
        trended = {f["indicator"] for f in link(d.facts)}
    assert {"kurtosis", "crest_factor", "env_BPFI_db"} <= trended
    assert not {"velocity_rms_mm_s", "accel_peak_g", "accel_rms_g", "x1_mm_s", "x2_mm_s"} & trended
    assert link.doc["points"][0]["iso_change"] is None
