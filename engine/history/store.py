"""The history store: every diagnosed reading of every machine, in one SQLite file.

One reading is written in one transaction (``BEGIN IMMEDIATE``), so a process
killed mid-route leaves every reading it stored whole and nothing half
written. The journal is in WAL mode and every connection waits for the write
lock (``busy_timeout``), so two routes writing at once queue instead of
failing or corrupting the file. The schema carries its version in
``schema_version`` and is migrated forward, one step at a time, when an older
file is opened; a file written by a newer tellwave is refused.

Opening checks the file before anything is written to it: SQLite's
``quick_check``, the tables and columns its schema version should have, and the
version itself (one whole number). A damaged file, another program's database
or a newer tellwave's store is refused with a ``StoreError`` (exit 8) saying
what is wrong and what to do; nothing is added to it. Every SQLite error after
that becomes a ``StoreError`` too, and a number SQLite holds but Python cannot
use (``inf``, ``nan``) is read as missing (None). Commands that only read open
the store with ``create=False``: a missing file stays missing.
"""

from __future__ import annotations

import math
import random
import sqlite3
import time
from datetime import UTC, datetime
from functools import cache
from pathlib import Path

from ..common.errors import StoreError
from .record import is_level

BUSY_TIMEOUT_S = 60.0
ID_MAX = 2 ** 63 - 1          # SQLite's largest integer: no reading id lies above it

# Each step takes the schema from version i to i + 1; never edit a released step, add one.
MIGRATIONS: tuple[str, ...] = (
    # 1: readings, their channels, key indicators and hypotheses
    """
    CREATE TABLE readings (
        id INTEGER PRIMARY KEY,
        content_hash TEXT NOT NULL UNIQUE,
        machine TEXT NOT NULL,
        machine_file TEXT,
        source TEXT NOT NULL,
        taken_at TEXT NOT NULL,
        time_from TEXT NOT NULL,
        speed_rpm REAL,
        elapsed_s REAL,
        fs_hz REAL,
        duration_s REAL,
        urgency TEXT,
        worst_zone TEXT,
        withheld INTEGER NOT NULL DEFAULT 0,
        summary TEXT,
        report TEXT,
        stored_at TEXT NOT NULL
    );
    CREATE INDEX readings_by_machine ON readings (machine, taken_at);
    CREATE TABLE channels (
        reading_id INTEGER NOT NULL REFERENCES readings (id) ON DELETE CASCADE,
        channel TEXT NOT NULL,
        point TEXT,
        direction TEXT,
        location TEXT,
        zone TEXT,
        PRIMARY KEY (reading_id, channel)
    );
    CREATE TABLE indicators (
        reading_id INTEGER NOT NULL REFERENCES readings (id) ON DELETE CASCADE,
        channel TEXT NOT NULL,
        name TEXT NOT NULL,
        value REAL NOT NULL,
        PRIMARY KEY (reading_id, channel, name)
    );
    CREATE TABLE hypotheses (
        reading_id INTEGER NOT NULL REFERENCES readings (id) ON DELETE CASCADE,
        rank INTEGER NOT NULL,
        fault TEXT NOT NULL,
        fault_name TEXT,
        component TEXT,
        certainty REAL NOT NULL,
        urgency TEXT,
        PRIMARY KEY (reading_id, rank)
    );
    """,
    # 2: routes, so that a summary can say which survey a reading came in with
    """
    CREATE TABLE routes (
        id INTEGER PRIMARY KEY,
        name TEXT NOT NULL,
        file TEXT,
        started_at TEXT NOT NULL
    );
    ALTER TABLE readings ADD COLUMN route_id INTEGER REFERENCES routes (id) ON DELETE SET NULL;
    """,
    # 3: whether each channel's scale (unit, sensitivity, gain) was trusted: 1 yes, 0 no (its levels
    # are not stored), NULL not known (stored before). Earlier versions gave a channel whose level was
    # impossible for its unit no zone but stored its levels: those channels are flagged, and the
    # history leaves their levels out (nothing is deleted).
    """
    ALTER TABLE channels ADD COLUMN scale_trusted INTEGER;
    UPDATE channels SET scale_trusted = 0 WHERE zone IS NULL AND EXISTS (
        SELECT 1 FROM indicators i WHERE i.reading_id = channels.reading_id AND i.channel = channels.channel
        AND i.name = 'velocity_rms_mm_s');
    """,
    # 4: the files a diagnosis read (``record.content_hash``) beside its key, which also covers the machine,
    # how the files were read and the rulebooks (``record.reading_key``); a diagnosis of the same files of
    # the same machine made another way supersedes the earlier one. Earlier keys were the files' hash.
    """
    ALTER TABLE readings ADD COLUMN recording_hash TEXT;
    UPDATE readings SET recording_hash = content_hash;
    CREATE INDEX readings_by_recording ON readings (recording_hash, machine);
    """,
    # 5: findings, the as-found condition at repair, each judging one stored reading: the component opened,
    # the fault found (a rulebook fault id, 'nothing-found' or 'other' with words in ``notes``), the damage
    # stage seen (1 to 4, NULL not stated), the date found, a work-order reference. A reading forgotten
    # takes its findings with it. One finding per reading, component and fault.
    """
    CREATE TABLE findings (
        id INTEGER PRIMARY KEY,
        reading_id INTEGER NOT NULL REFERENCES readings (id) ON DELETE CASCADE,
        component TEXT NOT NULL,
        fault TEXT NOT NULL,
        stage INTEGER,
        found_on TEXT NOT NULL,
        work_order TEXT,
        notes TEXT,
        stored_at TEXT NOT NULL,
        UNIQUE (reading_id, component, fault)
    );
    CREATE INDEX findings_by_reading ON findings (reading_id);
    """,
    # 6: the rule firings of each stored diagnosis, as the learning counts them
    # (``engine.reasoning.learning.firings_of``): the rule, the fault hypothesis and component it is for or
    # against, the certainty it lent (signed) and the hypothesis's final certainty. ``firings_kept`` is 1 on
    # a reading stored since (it may have none: a withheld diagnosis or nothing fired), NULL on one stored
    # before, whose firings are not known until it is diagnosed again.
    """
    CREATE TABLE firings (
        reading_id INTEGER NOT NULL REFERENCES readings (id) ON DELETE CASCADE,
        rule_id TEXT NOT NULL,
        fault TEXT NOT NULL,
        component TEXT NOT NULL,
        certainty REAL NOT NULL,
        hypothesis_certainty REAL NOT NULL
    );
    CREATE INDEX firings_by_reading ON firings (reading_id);
    ALTER TABLE readings ADD COLUMN firings_kept INTEGER;
    """,
    # 7: a compact spectrum per stored channel (``analysis.compact``: the velocity spectrum reduced by the
    # peak of each group of lines, at most 1600 float32 lines, little-endian, line i covering i * step_hz to
    # (i + 1) * step_hz) and the forcing frequencies of each reading as the analysis names them (1X, BPFO,
    # GMF, ... of a component on a shaft). ``spectra_kept`` is 1 on a reading stored since, NULL on one
    # stored before, whose spectra are not known until it is diagnosed again.
    """
    CREATE TABLE spectra (
        reading_id INTEGER NOT NULL REFERENCES readings (id) ON DELETE CASCADE,
        channel TEXT NOT NULL,
        quantity TEXT NOT NULL,
        unit TEXT NOT NULL,
        step_hz REAL NOT NULL,
        resolution_hz REAL NOT NULL,
        shaft TEXT,
        at TEXT,
        amplitudes BLOB NOT NULL,
        PRIMARY KEY (reading_id, channel, quantity)
    );
    CREATE TABLE forcing (
        reading_id INTEGER NOT NULL REFERENCES readings (id) ON DELETE CASCADE,
        name TEXT NOT NULL,
        component TEXT NOT NULL,
        family TEXT NOT NULL,
        shaft TEXT NOT NULL,
        frequency_hz REAL NOT NULL
    );
    CREATE INDEX forcing_by_reading ON forcing (reading_id);
    ALTER TABLE readings ADD COLUMN spectra_kept INTEGER;
    """,
    # 8: the site alarms each stored diagnosis judged its reading by, as applied (``engine.alarms``: the machine
    # file's with any ``--alarms`` file laid over): point, band, quantity, unit, the indicator it trends, the
    # alert and danger levels, the source the site gave and where it was set (file:line). ``alarms_kept`` is 1
    # on a reading stored since (it may have none), NULL on one stored before, whose alarms are those of its
    # machine file as that file reads now.
    """
    CREATE TABLE alarms (
        reading_id INTEGER NOT NULL REFERENCES readings (id) ON DELETE CASCADE,
        point TEXT NOT NULL,
        band TEXT NOT NULL,
        quantity TEXT NOT NULL,
        unit TEXT NOT NULL,
        indicator TEXT NOT NULL,
        alert REAL NOT NULL,
        danger REAL NOT NULL,
        source TEXT,
        set_at TEXT,
        PRIMARY KEY (reading_id, point, band, quantity)
    );
    ALTER TABLE readings ADD COLUMN alarms_kept INTEGER;
    """,
)
SCHEMA_VERSION = len(MIGRATIONS)


def default_store_path() -> Path:
    """The store under the user's data folder (platformdirs), used when no --store is given."""
    from platformdirs import user_data_path

    return user_data_path("tellwave", appauthor=False) / "history.sqlite"


def _now() -> str:
    return datetime.now(UTC).isoformat(timespec="seconds")


class Store:
    """A connection to one history file. Use as a context manager, or call ``close``."""

    def __init__(self, path, *, migrate_to: int = SCHEMA_VERSION, read_only: bool = False, create: bool = True):
        """Open (and create or migrate) the store; ``read_only`` opens an existing, current one for
        reading only (route workers looking up history while the parent writes); ``create=False``
        opens an existing one only (commands that just read: nothing is made for a mistyped path).

        Two processes opening a new store at the same moment both succeed: every lock they meet is
        waited for (``BUSY_TIMEOUT_S`` in all), and the schema is made or migrated once, in one
        transaction, by whichever takes the write lock first."""
        self.path = Path(path)
        self.db: _Connection       # set once the file is open; every method after __init__ uses it
        deadline = time.monotonic() + BUSY_TIMEOUT_S
        try:
            if self.path.is_dir():
                raise StoreError("is a folder, not a history store: name a file with --store", path=str(self.path))
            if (read_only or not create) and not self.path.exists():
                raise StoreError("no history store there (commands that only read create none): check the path, "
                                 "or start one with `tellwave route ... --store PATH` or `tellwave diagnose ... "
                                 "--store PATH`", path=str(self.path))
            if not read_only:
                self.path.parent.mkdir(parents=True, exist_ok=True)
            while True:
                db = None
                try:
                    self.db = db = _Connection(self.path, read_only=read_only, create=create)
                    self._open(migrate_to, read_only=read_only, create=create)
                    return
                except StoreError as exc:
                    if db is not None:
                        db.close()
                    if not exc.busy or time.monotonic() > deadline:
                        raise
                    time.sleep(random.uniform(0.01, 0.1))     # a lock SQLite would not wait for: try again
        except OSError as exc:
            raise StoreError(f"cannot open the history store ({exc.strerror})", path=str(self.path)) from None

    # schema ---------------------------------------------------------------
    def _open(self, target: int, *, read_only: bool, create: bool) -> None:
        found = self._check(quick=not read_only)
        if read_only:
            if found != SCHEMA_VERSION:
                raise StoreError(f"schema {found}, expected {SCHEMA_VERSION}: open it for writing once "
                                 "to migrate it", path=str(self.path))
            return
        if found is None and not create:
            raise StoreError("an empty file, not a history store yet (commands that only read create none): "
                             "check the path, or start one with `tellwave route ... --store PATH`", path=str(self.path))
        self.db.execute("PRAGMA journal_mode=WAL")
        self.db.execute("PRAGMA foreign_keys=ON")
        self.db.execute("PRAGMA synchronous=NORMAL")
        if found is None or found < target:
            with self.transaction():           # under the write lock: another process may just have made it
                self._migrate(self._check(quick=False), target)

    def _check(self, *, quick: bool) -> int | None:
        """The schema version of a sound store, None for an empty file; a StoreError for anything else."""
        fix = "restore it from a copy, or name another store with --store"
        if quick:
            self.db.execute("SELECT COUNT(*) FROM sqlite_master")      # a file that is no database fails here
            page_bytes = self.db.execute("PRAGMA page_size").fetchone()[0]
            if self.path.stat().st_size % page_bytes:          # SQLite writes whole pages only
                raise StoreError(f"damaged: cut short ({self.path.stat().st_size} bytes, not a whole number of "
                                 f"{page_bytes}-byte pages); {fix}", path=str(self.path))
            found = [r[0] for r in self.db.execute("PRAGMA quick_check")]
            if found != ["ok"]:
                more = f" (and {len(found) - 1} more problem(s))" if len(found) > 1 else ""
                raise StoreError(f"damaged: SQLite's check finds {found[0]!r}{more}; {fix}", path=str(self.path))
        tables = [r[0] for r in self.db.execute("SELECT name FROM sqlite_master WHERE type = 'table'"
                                                " AND name NOT LIKE 'sqlite_%' ORDER BY name")]
        if not tables:
            return None
        if "schema_version" not in tables:
            shown = ", ".join(tables[:4]) + (", ..." if len(tables) > 4 else "")
            raise StoreError(f"not a tellwave history store (another program's database, tables {shown}); tellwave "
                             "adds nothing to it: name another store with --store", path=str(self.path))
        rows = self.db.execute("SELECT version, typeof(version) FROM schema_version").fetchall()
        if len(rows) != 1 or rows[0][1] != "integer" or rows[0][0] < 0:
            what = f"{len(rows)} rows" if len(rows) != 1 else f"{rows[0][0]!r} ({rows[0][1]})"
            raise StoreError(f"damaged: its schema version is {what}, not one whole number; {fix}", path=str(self.path))
        version = rows[0][0]
        if version > SCHEMA_VERSION:
            raise StoreError(f"written by a newer tellwave (schema {version}, this one knows "
                             f"{SCHEMA_VERSION}); upgrade tellwave", path=str(self.path))
        for table, columns in _expected_tables(version).items():
            if table not in tables:
                raise StoreError(f"damaged: table {table} is missing (schema {version} has it); {fix}",
                                 path=str(self.path))
            have = {r[0] for r in self.db.execute("SELECT name FROM pragma_table_info(?)", (table,))}
            if not columns <= have:
                raise StoreError(f"damaged: table {table} lacks column(s) {', '.join(sorted(columns - have))}; {fix}",
                                 path=str(self.path))
            key = self.db.execute("SELECT pk FROM pragma_table_info(?) WHERE name = 'id'", (table,)).fetchone()
            if "id" in columns and not (key and key[0]):     # rebuilt by another program: ids no longer unique
                raise StoreError(f"damaged: table {table} has lost its key (column id); {fix}", path=str(self.path))
        return version

    def _migrate(self, version: int | None, target: int) -> None:
        if version is None:
            self.db.execute("CREATE TABLE schema_version (version INTEGER NOT NULL)")
            self.db.execute("INSERT INTO schema_version VALUES (0)")
            version = 0
        for step in range(version, target):
            for statement in MIGRATIONS[step].split(";"):
                if statement.strip():
                    self.db.execute(statement)
            self.db.execute("UPDATE schema_version SET version = ?", (step + 1,))

    @property
    def version(self) -> int:
        """The schema version the store holds."""
        return self.db.execute("SELECT version FROM schema_version").fetchone()[0]

    def transaction(self):
        """A write transaction (BEGIN IMMEDIATE ... COMMIT, ROLLBACK on any exception); nests."""
        return _Transaction(self.db)

    def close(self) -> None:
        """Close the connection; a closed store is not used again."""
        if self.db is not None:
            self.db.close()

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()

    # writing ---------------------------------------------------------------
    def start_route(self, name: str, file: str | None) -> int:
        """Record the start of a route run; its id, which the readings it stores refer to."""
        with self.transaction():
            cur = self.db.execute("INSERT INTO routes (name, file, started_at) VALUES (?, ?, ?)",
                                  (name, file, _now()))
            return cur.lastrowid

    def add(self, record: dict, *, route_id: int | None = None, replace: bool = False) -> int:
        """Store one reading's record (see ``history.record``) whole, in one transaction.

        A reading already stored (same key, ``content_hash``) is kept unless ``replace``. A diagnosis of
        the same files (``recording_hash``) of the same machine made another way (another unit, point
        mapping, speed or rulebook) replaces the earlier one, so a correction leaves no stale result.
        The findings that judged a replaced reading judge the new one (same finding ids): a diagnosis
        made again must not forget what was found. So do the findings found on or after the new reading's
        day that judge an earlier reading at its points (``_findings_move_to``). Returns the reading's id.
        """
        recording = record.get("recording_hash") or record["content_hash"]
        with self.transaction():
            old = self.db.execute("SELECT id FROM readings WHERE content_hash = ?",
                                  (record["content_hash"],)).fetchone()
            if old is not None and not replace:
                return old[0]
            replaced = [r[0] for r in self.db.execute(
                "SELECT id FROM readings WHERE content_hash = ? OR (recording_hash = ? AND machine = ?)",
                (record["content_hash"], recording, record["machine"]))]
            kept = [tuple(r) for i in replaced for r in self.db.execute(
                "SELECT id, component, fault, stage, found_on, work_order, notes, stored_at FROM findings"
                " WHERE reading_id = ?", (i,))]
            self.db.executemany("DELETE FROM readings WHERE id = ?", [(i,) for i in replaced])
            v = record["verdict"]
            cur = self.db.execute(
                "INSERT INTO readings (content_hash, machine, machine_file, source, taken_at, time_from,"
                " speed_rpm, elapsed_s, fs_hz, duration_s, urgency, worst_zone, withheld, summary, report,"
                " stored_at, route_id, recording_hash, firings_kept, spectra_kept, alarms_kept)"
                " VALUES (?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?)",
                (record["content_hash"], record["machine"], record.get("machine_file"), record["source"],
                 record["taken_at"], record["time_from"], record.get("speed_rpm"), record.get("elapsed_s"),
                 record.get("fs_hz"), record.get("duration_s"), v["urgency"], v["worst_zone"],
                 int(v["withheld"]), v["summary"], record.get("report"), _now(), route_id, recording,
                 None if record.get("firings") is None else 1, None if record.get("spectra") is None else 1,
                 None if record.get("alarms") is None else 1))
            rid = cur.lastrowid
            self.db.executemany(
                "INSERT OR IGNORE INTO alarms VALUES (?,?,?,?,?,?,?,?,?,?)",
                [(rid, a["point"], a["band"], a["quantity"], a["unit"], a["indicator"], float(a["alert"]),
                  float(a["danger"]), a.get("source"), a.get("set_at")) for a in record.get("alarms") or ()
                 if math.isfinite(float(a["alert"])) and math.isfinite(float(a["danger"]))])
            self.db.executemany(
                "INSERT INTO spectra VALUES (?,?,?,?,?,?,?,?,?)",
                [(rid, sp["channel"], sp["quantity"], sp["unit"], float(sp["step_hz"]), float(sp["resolution_hz"]),
                  sp.get("shaft"), sp.get("at"), sp["amplitudes"]) for sp in record.get("spectra") or ()])
            self.db.executemany(
                "INSERT INTO forcing VALUES (?,?,?,?,?,?)",
                [(rid, f["name"], f["component"], f["family"], f["shaft"], float(f["frequency_hz"]))
                 for f in record.get("forcing") or () if math.isfinite(float(f["frequency_hz"]))])
            self.db.executemany(
                "INSERT INTO firings VALUES (?,?,?,?,?,?)",
                [(rid, f["rule_id"], f["fault"], f["component"], float(f["certainty"]),
                  float(f["hypothesis_certainty"])) for f in record.get("firings") or ()])
            self.db.executemany(
                "INSERT INTO channels (reading_id, channel, point, direction, location, zone, scale_trusted)"
                " VALUES (?,?,?,?,?,?,?)",
                [(rid, c["channel"], c.get("point"), c.get("direction"), c.get("location"), c.get("zone"),
                  int(c.get("scale_trusted", True))) for c in record["channels"]])
            self.db.executemany(
                "INSERT INTO indicators VALUES (?,?,?,?)",
                [(rid, i["channel"], i["name"], float(i["value"])) for i in record["indicators"]
                 if math.isfinite(float(i["value"]))])         # an infinite level is no measurement
            self.db.executemany(
                "INSERT INTO hypotheses VALUES (?,?,?,?,?,?,?)",
                [(rid, h["rank"], h["fault"], h.get("fault_name"), h.get("component"), h["certainty"],
                  h.get("urgency")) for h in record["hypotheses"]])
            self.db.executemany(
                "INSERT OR IGNORE INTO findings (id, reading_id, component, fault, stage, found_on, work_order, notes,"
                " stored_at)"
                " VALUES (?,?,?,?,?,?,?,?,?)", [(f[0], rid, *f[1:]) for f in kept])
            self._findings_move_to(rid, record["machine"], record["taken_at"])
            return rid

    def _findings_move_to(self, rid: int, machine: str, taken_at: str) -> None:
        """The findings of ``machine`` found on or after the day of reading ``rid`` (taken at ``taken_at``) that
        judge an earlier reading whose every point ``rid`` also has, judge ``rid`` instead (same finding ids;
        one already judging ``rid`` for that component and fault takes the place of the other). A finding judges
        the latest reading at each point on or before the day found (``latest_readings``), whether that
        reading was stored before the finding or after it: the order of storing changes nothing."""
        points = {r[0] for r in self.db.execute("SELECT point FROM channels WHERE reading_id = ?", (rid,))}
        earlier = self.db.execute(
            "SELECT f.id, f.reading_id, f.component, f.fault FROM findings f JOIN readings r ON r.id = f.reading_id"
            " WHERE r.machine = ? AND r.id != ? AND r.taken_at < ? AND f.found_on >= ? ORDER BY f.id",
            (machine, rid, taken_at, taken_at[:10])).fetchall()
        for fid, old, component, fault in earlier:
            at = {r[0] for r in self.db.execute("SELECT point FROM channels WHERE reading_id = ?", (old,))}
            if not at or not at <= points:
                continue
            if self.finding_of(rid, component, fault) is not None:
                self.db.execute("DELETE FROM findings WHERE id = ?", (fid,))
            else:
                self.db.execute("UPDATE findings SET reading_id = ? WHERE id = ?", (rid, fid))

    def set_report(self, reading_id: int, report: str) -> None:
        """Remember where a stored reading's report was written."""
        with self.transaction():
            self.db.execute("UPDATE readings SET report = ? WHERE id = ?", (report, reading_id))

    def delete(self, reading_id: int) -> bool:
        """Forget one reading (its channels, indicators and hypotheses go with it)."""
        if not 0 < reading_id <= ID_MAX:
            return False
        with self.transaction():
            return self.db.execute("DELETE FROM readings WHERE id = ?", (reading_id,)).rowcount > 0

    # reading ---------------------------------------------------------------
    def has(self, content_hash: str) -> bool:
        """Whether a diagnosis with this key (``record.reading_key``) is stored: a route skips it."""
        return self.db.execute("SELECT 1 FROM readings WHERE content_hash = ?", (content_hash,)).fetchone() is not None

    def machines(self) -> list[str]:
        """The names of the machines with stored readings, sorted."""
        return [r[0] for r in self.db.execute("SELECT DISTINCT machine FROM readings ORDER BY machine")]

    def readings(self, machine: str | None = None) -> list[dict]:
        """Stored readings (of ``machine``), oldest first, each with its top hypothesis."""
        sql = ("SELECT r.*, h.fault AS top_fault, h.fault_name AS top_fault_name, h.component AS top_component,"
               " h.certainty AS top_certainty FROM readings r"
               " LEFT JOIN hypotheses h ON h.reading_id = r.id AND h.rank = 1")
        args: tuple = ()
        if machine is not None:
            sql += " WHERE r.machine = ?"
            args = (machine,)
        rows = [dict(r) for r in self.db.execute(sql + " ORDER BY r.taken_at, r.id", args)]
        points: dict[int, list[str]] = {}
        for r in self.db.execute("SELECT reading_id, point FROM channels ORDER BY reading_id, channel"):
            points.setdefault(r[0], []).append(str(r[1] or ""))
        for r in rows:
            r["points"] = points.get(r["id"], [])
            if not (_number(r["top_certainty"]) and -1.0 <= r["top_certainty"] <= 1.0):    # damaged: no certainty
                r["top_certainty"] = None
        return rows

    def reading(self, reading_id: int) -> dict | None:
        """One stored reading's row by its id, or None (an id no row can have included)."""
        if not 0 < reading_id <= ID_MAX:
            return None
        row = self.db.execute("SELECT * FROM readings WHERE id = ?", (reading_id,)).fetchone()
        return dict(row) if row else None

    def reading_id_of(self, key: str) -> int | None:
        """The id of the reading stored under the diagnosis key ``key`` (``record.reading_key``), or None."""
        row = self.db.execute("SELECT id FROM readings WHERE content_hash = ?", (key,)).fetchone()
        return row[0] if row else None

    def stored_time(self, key: str, recording: str, machine: str) -> tuple[str, str] | None:
        """(taken_at, where that time came from) of the same diagnosis, else of the same files of
        ``machine`` diagnosed another way; None when neither is stored."""
        row = self.db.execute("SELECT taken_at, time_from FROM readings WHERE content_hash = ? OR"
                              " (recording_hash = ? AND machine = ?) ORDER BY content_hash = ? DESC",
                              (key, recording, machine, key)).fetchone()
        return (row[0], row[1]) if row else None

    def top_hypothesis(self, reading_id: int) -> dict | None:
        """The first-ranked hypothesis of a stored reading (fault, fault_name, component, certainty);
        a certainty the store cannot give (damaged: text, inf, outside -1..1) reads as None."""
        row = self.db.execute("SELECT fault, fault_name, component, certainty FROM hypotheses"
                              " WHERE reading_id = ? AND rank = 1", (reading_id,)).fetchone()
        if row is None:
            return None
        top = dict(row)
        if not (_number(top["certainty"]) and -1.0 <= top["certainty"] <= 1.0):
            top["certainty"] = None
        return top

    def confident_calls(self, machine: str, at_least: float) -> list[dict]:
        """Every hypothesis of ``machine``'s stored readings at a certainty of ``at_least`` or more that names a
        component, oldest reading first: reading_id, taken_at, fault, fault_name, component, certainty (a
        damaged certainty, text or outside -1..1, is no call)."""
        rows = self.db.execute("SELECT r.id AS reading_id, r.taken_at, h.fault, h.fault_name, h.component, h.certainty"
                               " FROM hypotheses h JOIN readings r ON r.id = h.reading_id WHERE r.machine = ?"
                               " AND h.component IS NOT NULL ORDER BY r.taken_at, r.id, h.rank", (machine,))
        return [dict(r) for r in rows if _number(r["certainty"]) and at_least <= r["certainty"] <= 1.0
                and _iso_time(r["taken_at"])]

    def channels_of(self, reading_id: int) -> list[dict]:
        """The stored channels of a reading: channel, point, scale_trusted (0: levels not kept)."""
        return [dict(r) for r in self.db.execute("SELECT channel, point, scale_trusted FROM channels"
                                                 " WHERE reading_id = ?", (reading_id,))]

    def _check_time(self, row) -> None:
        """A stored reading's time must be ISO 8601 (tellwave writes no other); one that is not was
        damaged or written by another program, and a trend through it would be a guess."""
        if not _iso_time(row["taken_at"]):
            raise StoreError(f"damaged: reading {row['id']} is stored with the time {row['taken_at']!r}, not an "
                             f"ISO 8601 time; forget it with `tellwave history --delete {row['id']}`, or restore "
                             "the store from a copy", path=str(self.path))

    def history(self, machine: str, point: str | None = None) -> list[dict]:
        """One row per stored channel of ``machine`` (at ``point``), oldest first, with every
        indicator of that channel under ``indicators``; a channel whose scale was not trusted
        (``scale_trusted`` 0) has no level among them (crest factor, kurtosis, dB stay)."""
        sql = ("SELECT r.id, r.taken_at, r.speed_rpm, r.route_id, c.channel, c.point, c.direction, c.location, c.zone,"
               " c.scale_trusted FROM readings r JOIN channels c ON c.reading_id = r.id WHERE r.machine = ?")
        args: list = [machine]
        if point is not None:
            sql += " AND c.point = ?"
            args.append(point)
        rows = [dict(r) for r in self.db.execute(sql + " ORDER BY r.taken_at, r.id", args)]
        for r in rows:
            self._check_time(r)
        values: dict = {}
        ids = {r["id"] for r in rows}
        for r in self.db.execute("SELECT i.reading_id, i.channel, i.name, i.value FROM indicators i"
                                 " JOIN readings r ON r.id = i.reading_id WHERE r.machine = ?", (machine,)):
            if r[0] in ids and _number(r[3]):          # a damaged value (text, inf) is no value
                values.setdefault((r[0], r[1]), {})[r[2]] = r[3]
        for r in rows:
            r["indicators"] = values.get((r["id"], r["channel"]), {})
            if r["scale_trusted"] == 0:
                r["indicators"] = {k: v for k, v in r["indicators"].items() if not is_level(k)}
        return rows

    def alarms(self, machine: str) -> dict[str, dict]:
        """The site alarms the latest diagnosis at each point of ``machine`` judged its reading by (schema 8 on):
        point -> {"reading": its id, "taken_at", "alarms": rows (point, band, quantity, unit, indicator, alert,
        danger, source, set_at), sorted}. A point whose latest reading was stored before schema 8
        (``alarms_kept`` NULL) is left out: its alarms are not known here. A row a damaged store cannot give
        (a level that is not a number, an alert above its danger, text that is not text) is left out."""
        latest = self.db.execute(
            "SELECT point, id, taken_at, alarms_kept FROM (SELECT c.point, r.id, r.taken_at, r.alarms_kept,"
            " ROW_NUMBER() OVER (PARTITION BY c.point ORDER BY r.taken_at DESC, r.id DESC) AS n"
            " FROM readings r JOIN channels c ON c.reading_id = r.id WHERE r.machine = ? AND c.point IS NOT NULL)"
            " WHERE n = 1", (machine,)).fetchall()
        out: dict[str, dict] = {}
        for point, rid, taken_at, kept in latest:
            if kept is None:
                continue
            out[str(point)] = {"reading": rid, "taken_at": taken_at, "alarms": self._alarm_rows(rid, point)}
        return out

    def reading_alarms(self, reading_id: int) -> list[dict] | None:
        """The site alarms the stored diagnosis of ``reading_id`` judged it by, every point's, as ``alarms``
        gives them; None for a reading stored before schema 8 (``alarms_kept`` NULL) or not stored."""
        kept = self.db.execute("SELECT alarms_kept FROM readings WHERE id = ?", (reading_id,)).fetchone()
        if kept is None or kept[0] is None:
            return None
        return self._alarm_rows(reading_id)

    def _alarm_rows(self, reading_id: int, point: str | None = None) -> list[dict]:
        """The stored alarm rows of a reading (at ``point``, or every point), sorted; a row a damaged store
        cannot give (a level that is not a number, an alert above its danger, text that is not text) is left out."""
        rows = []
        for a in self.db.execute("SELECT point, band, quantity, unit, indicator, alert, danger, source, set_at"
                                 " FROM alarms WHERE reading_id = ? AND (? IS NULL OR point = ?)"
                                 " ORDER BY point, band, quantity", (reading_id, point, point)):
            row = dict(a)
            text = all(isinstance(row[k], str) for k in ("point", "band", "quantity", "unit", "indicator"))
            if text and _number(row["alert"]) and _number(row["danger"]) and row["alert"] <= row["danger"]:
                rows.append(row)
        return rows

    def spectra(self, machine: str, point: str, reading_ids=None) -> list[dict]:
        """The stored readings of ``machine`` at ``point`` (of ``reading_ids``, when given), oldest first: id,
        taken_at, channel, ``spectra_kept`` (False: stored before schema 7, no spectrum), and with a spectrum its
        quantity, unit, step_hz, resolution_hz, shaft, at, ``amplitudes`` (float32 numpy array) and the reading's
        ``forcing`` (dicts: name, component, family, shaft, frequency_hz). A blob that is not whole float32
        lines, or a step that is not a positive number, was damaged: that reading has no spectrum (``damaged``)."""
        import numpy as np

        sql = ("SELECT r.id, r.taken_at, r.spectra_kept, c.channel, s.quantity, s.unit, s.step_hz, s.resolution_hz,"
               " s.shaft, s.at, s.amplitudes FROM readings r JOIN channels c ON c.reading_id = r.id"
               " LEFT JOIN spectra s ON s.reading_id = r.id AND s.channel = c.channel AND s.quantity = 'velocity'"
               " WHERE r.machine = ? AND c.point = ?")
        args: list = [machine, point]
        if reading_ids is not None:
            ids = sorted({int(i) for i in reading_ids if 0 < int(i) <= ID_MAX})
            sql += f" AND r.id IN ({','.join('?' * len(ids))})"
            args += ids
        rows = []
        for r in self.db.execute(sql + " ORDER BY r.taken_at, r.id, c.channel", args):
            row = dict(r)
            self._check_time(row)
            blob, step = row.pop("amplitudes"), row["step_hz"]
            row["spectra_kept"] = row["spectra_kept"] is not None
            row["damaged"], row["amplitudes"] = False, None
            if blob is not None:
                whole = (isinstance(blob, bytes) and len(blob) % 4 == 0 and blob and _number(step) and step > 0
                         and _number(row["resolution_hz"]))
                amplitudes = np.frombuffer(blob, dtype="<f4").astype(np.float32) if whole else None
                if amplitudes is None or not np.all(np.isfinite(amplitudes)) or amplitudes.min() < 0:
                    row["damaged"] = True
                else:
                    row["amplitudes"] = amplitudes
            rows.append(row)
        forcing: dict[int, list[dict]] = {}
        ids = sorted({r["id"] for r in rows})
        for i in range(0, len(ids), 500):
            part = ids[i:i + 500]
            for f in self.db.execute("SELECT reading_id, name, component, family, shaft, frequency_hz FROM forcing"
                                     f" WHERE reading_id IN ({','.join('?' * len(part))})"
                                     " ORDER BY reading_id, frequency_hz, name, component", part):
                if _number(f[5]) and f[5] > 0:
                    forcing.setdefault(f[0], []).append({"name": str(f[1]), "component": str(f[2]),
                                                         "family": str(f[3]), "shaft": str(f[4]),
                                                         "frequency_hz": float(f[5])})
        for r in rows:
            r["forcing"] = forcing.get(r["id"], [])
        return rows

    def previous(self, machine: str, before: str, exclude_route: int | None = None) -> dict | None:
        """The latest reading of ``machine`` taken before ``before`` (ISO time), outside a route."""
        sql = "SELECT * FROM readings WHERE machine = ? AND taken_at < ?"
        args: list = [machine, before]
        if exclude_route is not None:
            sql += " AND (route_id IS NULL OR route_id != ?)"
            args.append(exclude_route)
        row = self.db.execute(sql + " ORDER BY taken_at DESC, id DESC LIMIT 1", args).fetchone()
        return dict(row) if row else None

    # findings ----------------------------------------------------------------
    def latest_readings(self, machine: str, until: str) -> list[dict]:
        """The readings a finding on ``machine`` dated ``until`` (ISO date) judges: at each point, the latest
        reading taken on or before that day (one reading often covers every point), oldest first. The day of
        a stored time is its first ten characters (ISO 8601, as ``_check_time`` holds every stored time to)."""
        rows = [dict(r) for r in self.db.execute(
            "SELECT * FROM readings WHERE id IN (SELECT id FROM (SELECT r.id, ROW_NUMBER() OVER (PARTITION BY"
            " c.point ORDER BY r.taken_at DESC, r.id DESC) AS n FROM readings r JOIN channels c ON c.reading_id = r.id"
            " WHERE r.machine = ? AND substr(r.taken_at, 1, 10) <= ?) WHERE n = 1) ORDER BY taken_at, id",
            (machine, until))]
        for r in rows:
            self._check_time(r)
        return rows

    def components_of(self, reading_id: int) -> set[str]:
        """The components the stored hypotheses of a reading name."""
        return {r[0] for r in self.db.execute("SELECT DISTINCT component FROM hypotheses WHERE reading_id = ?"
                                              " AND component IS NOT NULL", (reading_id,))}

    def finding_of(self, reading_id: int, component: str, fault: str) -> int | None:
        """The id of the finding stored for this reading, component and fault, or None."""
        row = self.db.execute("SELECT id FROM findings WHERE reading_id = ? AND component = ? AND fault = ?",
                              (reading_id, component, fault)).fetchone()
        return row[0] if row else None

    def judged(self, machines=None) -> list[dict]:
        """Every stored reading with a finding (of ``machines``, names; None: every machine), oldest first:
        its id, machine, time, whether its firings were kept (``firings_kept``: False when it was stored
        before schema 6), its ``firings`` (dicts as ``learning.firings_of`` gives them, sorted) and its
        ``findings`` (component and fault, sorted). A firing a damaged store cannot give (a certainty that
        is not a number in -1..1) is left out."""
        sql = ("SELECT r.id, r.machine, r.taken_at, r.firings_kept FROM readings r"
               " WHERE EXISTS (SELECT 1 FROM findings f WHERE f.reading_id = r.id)")
        args: list = []
        if machines is not None:
            names = sorted(set(machines))
            sql += f" AND r.machine IN ({','.join('?' * len(names))})"
            args = names
        rows = [dict(r) for r in self.db.execute(sql + " ORDER BY r.taken_at, r.id", args)]
        ids = {r["id"] for r in rows}
        firings: dict[int, list[dict]] = {}
        for f in self.db.execute("SELECT reading_id, rule_id, fault, component, certainty, hypothesis_certainty"
                                 " FROM firings WHERE reading_id IN (SELECT reading_id FROM findings)"
                                 " ORDER BY reading_id, rule_id, fault, component, certainty"):
            if f[0] in ids and all(_number(c) and -1.0 <= c <= 1.0 for c in (f[4], f[5])):
                firings.setdefault(f[0], []).append({"rule_id": str(f[1]), "fault": str(f[2]),
                                                     "component": str(f[3]), "certainty": f[4],
                                                     "hypothesis_certainty": f[5]})
        found: dict[int, list[dict]] = {}
        for f in self.db.execute("SELECT reading_id, component, fault FROM findings"
                                 " ORDER BY reading_id, component, fault"):
            if f[0] in ids:
                found.setdefault(f[0], []).append({"component": str(f[1]), "fault": str(f[2])})
        for r in rows:
            r["firings_kept"] = r["firings_kept"] is not None
            r["firings"] = firings.get(r["id"], [])
            r["findings"] = found.get(r["id"], [])
        return rows

    def add_finding(self, finding: dict) -> int:
        """Store one checked finding (``engine.history.findings``); its id. Inside a caller's transaction
        it is part of that transaction (an import writes every row or none)."""
        with self.transaction():
            cur = self.db.execute(
                "INSERT INTO findings (reading_id, component, fault, stage, found_on, work_order, notes, stored_at)"
                " VALUES (?,?,?,?,?,?,?,?)",
                (finding["reading_id"], finding["component"], finding["fault"], finding.get("stage"),
                 finding["found_on"], finding.get("work_order"), finding.get("notes"), _now()))
            return cur.lastrowid

    def findings(self, machine: str | None = None) -> list[dict]:
        """Stored findings (of ``machine``), by date found, each with its reading's machine, time and source."""
        sql = ("SELECT f.id, f.reading_id, r.machine, r.taken_at, r.source, f.component, f.fault, f.stage,"
               " f.found_on, f.work_order, f.notes FROM findings f JOIN readings r ON r.id = f.reading_id")
        args: tuple = ()
        if machine is not None:
            sql += " WHERE r.machine = ?"
            args = (machine,)
        return [self._check_finding(dict(r)) for r in self.db.execute(sql + " ORDER BY f.found_on, f.id", args)]

    def _check_finding(self, row: dict) -> dict:
        """A stored finding as tellwave writes it (text, a stage 1 to 4 or none, an ISO date found); one that
        is not was damaged or written by another program, and nothing read from it would be right."""
        bad = [k for k in ("component", "fault", "found_on") if not isinstance(row[k], str)]
        bad += [k for k in ("work_order", "notes") if row[k] is not None and not isinstance(row[k], str)]
        if row["stage"] is not None and (type(row["stage"]) is not int or not 1 <= row["stage"] <= 4):
            bad.append("stage")
        if "found_on" not in bad and not _iso_time(row["found_on"]):
            bad.append("found_on")
        if bad:
            raise StoreError(f"damaged: finding {row['id']} holds {', '.join(bad)} of a kind tellwave does not write; "
                             f"forget it with `tellwave findings delete {row['id']}`, or restore the store from a copy",
                             path=str(self.path))
        return row

    def finding(self, finding_id: int) -> dict | None:
        """One stored finding by its id, or None."""
        if not 0 < finding_id <= ID_MAX:
            return None
        rows = [f for f in self.db.execute(
            "SELECT f.id, f.reading_id, r.machine, f.component, f.fault, f.found_on FROM findings f"
            " JOIN readings r ON r.id = f.reading_id WHERE f.id = ?", (finding_id,))]
        return dict(rows[0]) if rows else None

    def delete_finding(self, finding_id: int) -> bool:
        """Forget one finding; whether there was one."""
        if not 0 < finding_id <= ID_MAX:
            return False
        with self.transaction():
            return self.db.execute("DELETE FROM findings WHERE id = ?", (finding_id,)).rowcount > 0

    def integrity(self) -> str:
        """SQLite's integrity check of the whole file: "ok" or what is damaged."""
        return self.db.execute("PRAGMA integrity_check").fetchone()[0]


LARGEST_INDICATOR = 1e12    # kurtosis of one spike in 2^22 samples is about 4e6; no mm/s, g or dB comes near


def _number(value) -> bool:
    """Whether a stored indicator value is one a reading can give (a damaged store holds text, inf, 1e308)."""
    return (isinstance(value, (int, float)) and not isinstance(value, bool) and math.isfinite(value)
            and abs(value) <= LARGEST_INDICATOR)


@cache
def _expected_tables(version: int) -> dict[str, frozenset]:
    """table -> its columns, in a store of schema ``version`` (the migrations run on an empty database)."""
    db = sqlite3.connect(":memory:")
    try:
        for step in MIGRATIONS[:version]:
            db.executescript(step)
        names = [r[0] for r in db.execute("SELECT name FROM sqlite_master WHERE type = 'table'")]
        return {n: frozenset(r[1] for r in db.execute(f"PRAGMA table_info({n})")) for n in names}
    finally:
        db.close()


def _iso_time(value) -> bool:
    try:
        datetime.fromisoformat(value)
    except (TypeError, ValueError):
        return False
    return True


def _finite_row(cursor, row):
    """A row whose non-finite numbers (``inf``, ``nan``: no measurement gives them) read as None."""
    return sqlite3.Row(cursor, tuple(None if isinstance(v, float) and not math.isfinite(v) else v for v in row))


def _store_error(exc: Exception, path: Path) -> StoreError:
    """The one-line StoreError for an SQLite error met while using the store at ``path``."""
    text = str(exc) or exc.__class__.__name__
    busy = isinstance(exc, sqlite3.OperationalError) and ("locked" in text or "busy" in text)
    if busy:
        problem = (f"busy ({text}): another tellwave has been writing it for more than {BUSY_TIMEOUT_S:.0f} s; "
                   "run again when it has finished")
    elif "readonly" in text or "read-only" in text:
        problem = f"cannot be written ({text}): check the permissions of the file and its folder"
    elif "full" in text:
        problem = f"cannot be written ({text}): free some space and run again; what was stored is kept"
    elif "unable to open" in text:
        problem = f"cannot be opened ({text}): check the path and the permissions of its folder"
    elif isinstance(exc, sqlite3.IntegrityError):
        problem = f"refused a write ({text}); nothing of it was stored"
    elif isinstance(exc, OverflowError):
        problem = f"a number too large for SQLite ({text})"
    else:
        problem = (f"not a usable history store ({text}): damaged, or not tellwave's; restore it from a copy, "
                   "or name another store with --store")
    err = StoreError(problem, path=str(path))
    err.busy = busy
    return err


class _Result:
    """The rows of one statement, read whole (a damaged page met halfway through a query fails the query,
    not the caller's loop), with the cursor's ``lastrowid`` and ``rowcount``."""

    def __init__(self, rows: list, lastrowid, rowcount: int):
        self.rows, self.lastrowid, self.rowcount = rows, lastrowid, rowcount

    def fetchone(self):
        return self.rows[0] if self.rows else None

    def fetchall(self) -> list:
        return self.rows

    def __iter__(self):
        return iter(self.rows)


class _Connection:
    """The store's SQLite connection: every SQLite error becomes a StoreError naming the file."""

    def __init__(self, path: Path, *, read_only: bool, create: bool):
        self.path = path
        mode = "ro" if read_only else "rwc" if create else "rw"      # "rw" never makes a file
        try:
            self.raw = sqlite3.connect(f"{path.absolute().as_uri()}?mode={mode}", uri=True, timeout=BUSY_TIMEOUT_S,
                                       isolation_level=None)
        except sqlite3.Error as exc:
            raise _store_error(exc, path) from None
        self.raw.row_factory = _finite_row

    @property
    def in_transaction(self) -> bool:
        return self.raw.in_transaction

    def execute(self, sql: str, args=()) -> _Result:
        try:
            cur = self.raw.execute(sql, args)
            return _Result(cur.fetchall(), cur.lastrowid, cur.rowcount)
        except (sqlite3.Error, OverflowError, UnicodeDecodeError) as exc:
            raise _store_error(exc, self.path) from None

    def executemany(self, sql: str, rows) -> _Result:
        try:
            cur = self.raw.executemany(sql, rows)
            return _Result([], cur.lastrowid, cur.rowcount)
        except (sqlite3.Error, OverflowError, UnicodeDecodeError) as exc:
            raise _store_error(exc, self.path) from None

    def close(self) -> None:
        try:
            self.raw.close()
        except sqlite3.Error:
            pass


class _Transaction:
    """BEGIN IMMEDIATE ... COMMIT, or ROLLBACK on any exception (the write lock is taken at once,
    so two writers queue on ``busy_timeout`` instead of failing on a lock upgrade)."""

    def __init__(self, db: _Connection):
        self.db = db
        self.outer = False

    def __enter__(self):
        self.outer = not self.db.in_transaction
        if self.outer:
            self.db.execute("BEGIN IMMEDIATE")
        return self.db

    def __exit__(self, exc_type, exc, tb):
        if not self.outer:
            return False
        if exc_type is None:
            self.db.execute("COMMIT")
        else:
            try:
                self.db.execute("ROLLBACK")
            except StoreError:
                pass        # SQLite rolled back already (or cannot): the error that got here says more
        return False
