"""Store schema 6: each stored diagnosis keeps its rule firings (what the learning counts), written with
the reading in one transaction; readings stored before say so instead of reading as "nothing fired"."""

from __future__ import annotations

import pytest
from test_store import record

from engine.common.errors import StoreError
from engine.history.store import SCHEMA_VERSION, Store

PUMP = "RW-2 raw water pump"
FIRINGS = [
    {"rule_id": "unbalance.one-x", "fault": "unbalance", "component": "pump", "certainty": 0.5,
     "hypothesis_certainty": 0.6},
    {"rule_id": "unbalance.steady-phase", "fault": "unbalance", "component": "pump", "certainty": 0.2,
     "hypothesis_certainty": 0.6},
    {"rule_id": "looseness.not-harmonics", "fault": "looseness", "component": "pump", "certainty": -0.3,
     "hypothesis_certainty": 0.1},
]


def with_firings(n: int, firings) -> dict:
    return dict(record(n), firings=firings)


def _finding(store, rid, fault="unbalance", component="pump"):
    store.db.execute("INSERT INTO findings (reading_id, component, fault, found_on, stored_at)"
                     " VALUES (?, ?, ?, '2026-02-01', 'now')", (rid, component, fault))


def test_schema_5_migrates_to_6_and_its_readings_read_as_stored_before_firings_were_kept(tmp_path):
    path = tmp_path / "h.sqlite"
    with Store(path, migrate_to=5) as old:
        assert old.version == 5
        rid = old.db.execute("INSERT INTO readings (content_hash, machine, source, taken_at, time_from, stored_at)"
                             " VALUES ('h0', ?, 'a.wav', '2026-01-01T00:00:00', 'route', 'now')", (PUMP,)).lastrowid
        _finding(old, rid)
        assert "firings" not in [r[0] for r in old.db.execute("SELECT name FROM sqlite_master")]
    with Store(path, migrate_to=6) as new:
        assert new.version == 6 < SCHEMA_VERSION
        (judged,) = new.judged()
        assert judged["id"] == rid and judged["firings_kept"] is False and judged["firings"] == []
        assert judged["findings"] == [{"component": "pump", "fault": "unbalance"}]


def test_the_firings_come_back_with_the_reading_and_its_findings(tmp_path):
    with Store(tmp_path / "h.sqlite") as s:
        rid = s.add(with_firings(1, FIRINGS))
        s.add(with_firings(2, FIRINGS))              # no finding: not judged, not listed
        assert s.judged() == []
        _finding(s, rid)
        (judged,) = s.judged()
        assert judged["firings_kept"] is True
        assert judged["firings"] == sorted(FIRINGS, key=lambda f: (f["rule_id"], f["fault"], f["component"]))
        assert s.judged(["another machine"]) == [] and len(s.judged([PUMP])) == 1


def test_a_diagnosis_with_no_firing_is_kept_as_none_not_as_unknown(tmp_path):
    with Store(tmp_path / "h.sqlite") as s:
        rid = s.add(with_firings(1, []))
        _finding(s, rid, fault="nothing-found")
        (judged,) = s.judged()
        assert judged["firings_kept"] is True and judged["firings"] == []


def test_a_failing_firing_leaves_no_reading_behind(tmp_path):
    bad = [dict(FIRINGS[0], rule_id=None)]           # NOT NULL: the insert fails after the reading's row
    with Store(tmp_path / "h.sqlite") as s:
        with pytest.raises(StoreError, match="nothing of it was stored"):
            s.add(with_firings(1, bad))
        assert not s.has("hash-1")
        assert s.db.execute("SELECT COUNT(*) FROM firings").fetchone()[0] == 0


def test_forgetting_a_reading_forgets_its_firings(tmp_path):
    with Store(tmp_path / "h.sqlite") as s:
        rid = s.add(with_firings(1, FIRINGS))
        assert s.db.execute("SELECT COUNT(*) FROM firings").fetchone()[0] == 3
        s.delete(rid)
        assert s.db.execute("SELECT COUNT(*) FROM firings").fetchone()[0] == 0


def test_a_damaged_certainty_is_left_out_not_counted(tmp_path):
    with Store(tmp_path / "h.sqlite") as s:
        rid = s.add(with_firings(1, FIRINGS))
        _finding(s, rid)
        s.db.execute("UPDATE firings SET certainty = 'lots' WHERE rule_id = 'unbalance.one-x'")
        (judged,) = s.judged()
        assert [f["rule_id"] for f in judged["firings"]] == ["looseness.not-harmonics", "unbalance.steady-phase"]
