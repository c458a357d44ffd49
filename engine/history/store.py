"""The history store: every diagnosed reading of every machine, in one SQLite file.

One reading is written in one transaction (``BEGIN IMMEDIATE``), so a process
killed mid-route leaves every reading it stored whole and nothing half
written. The journal is in WAL mode and every connection waits for the write
lock (``busy_timeout``), so two routes writing at once queue instead of
failing or corrupting the file. The schema carries its version in
``schema_version`` and is migrated forward, one step at a time, when an older
file is opened; a file written by a newer tellwave is refused.
"""

from __future__ import annotations

import sqlite3
from datetime import datetime, timezone
from pathlib import Path

from ..errors import StoreError
from .record import is_level

BUSY_TIMEOUT_S = 60.0

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
)
SCHEMA_VERSION = len(MIGRATIONS)


def default_store_path() -> Path:
    """The store under the user's data folder (platformdirs), used when no --store is given."""
    from platformdirs import user_data_path

    return user_data_path("tellwave", appauthor=False) / "history.sqlite"


def _now() -> str:
    return datetime.now(timezone.utc).isoformat(timespec="seconds")


class Store:
    """A connection to one history file. Use as a context manager, or call ``close``."""

    def __init__(self, path, *, migrate_to: int = SCHEMA_VERSION, read_only: bool = False):
        """Open (and create or migrate) the store; ``read_only`` opens an existing, current one for
        reading only (route workers looking up history while the parent writes)."""
        self.path = Path(path)
        try:
            if read_only:
                self.db = sqlite3.connect(self.path.absolute().as_uri() + "?mode=ro", uri=True,
                                          timeout=BUSY_TIMEOUT_S, isolation_level=None)
                self.db.row_factory = sqlite3.Row
                if self.version != SCHEMA_VERSION:
                    raise StoreError(f"schema {self.version}, expected {SCHEMA_VERSION}: open it for writing once "
                                     "to migrate it", path=str(self.path))
                return
            self.path.parent.mkdir(parents=True, exist_ok=True)
            self.db = sqlite3.connect(self.path, timeout=BUSY_TIMEOUT_S, isolation_level=None)
            self.db.row_factory = sqlite3.Row
            self.db.execute("PRAGMA journal_mode=WAL")
            self.db.execute("PRAGMA foreign_keys=ON")
            self.db.execute("PRAGMA synchronous=NORMAL")
            self._migrate(migrate_to)
        except sqlite3.DatabaseError as exc:
            raise StoreError(f"not a usable history store ({exc})", path=str(self.path)) from None
        except OSError as exc:
            raise StoreError(f"cannot open the history store ({exc.strerror})", path=str(self.path)) from None

    # schema ---------------------------------------------------------------
    def _migrate(self, target: int) -> None:
        with self.transaction():
            self.db.execute("CREATE TABLE IF NOT EXISTS schema_version (version INTEGER NOT NULL)")
            row = self.db.execute("SELECT version FROM schema_version").fetchone()
            version = row[0] if row else 0
            if row is None:
                self.db.execute("INSERT INTO schema_version VALUES (0)")
            if version > SCHEMA_VERSION:
                raise StoreError(f"written by a newer tellwave (schema {version}, this one knows "
                                 f"{SCHEMA_VERSION}); upgrade tellwave", path=str(self.path))
            for step in range(version, target):
                for statement in MIGRATIONS[step].split(";"):
                    if statement.strip():
                        self.db.execute(statement)
                self.db.execute("UPDATE schema_version SET version = ?", (step + 1,))

    @property
    def version(self) -> int:
        return self.db.execute("SELECT version FROM schema_version").fetchone()[0]

    def transaction(self):
        return _Transaction(self.db)

    def close(self) -> None:
        self.db.close()

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()

    # writing ---------------------------------------------------------------
    def start_route(self, name: str, file: str | None) -> int:
        with self.transaction():
            cur = self.db.execute("INSERT INTO routes (name, file, started_at) VALUES (?, ?, ?)",
                                  (name, file, _now()))
            return cur.lastrowid

    def add(self, record: dict, *, route_id: int | None = None, replace: bool = False) -> int:
        """Store one reading's record (see ``history.record``) whole, in one transaction.

        A reading already stored (same key, ``content_hash``) is kept unless ``replace``. A diagnosis of
        the same files (``recording_hash``) of the same machine made another way (another unit, point
        mapping, speed or rulebook) replaces the earlier one, so a correction leaves no stale result.
        Returns the reading's id.
        """
        recording = record.get("recording_hash") or record["content_hash"]
        with self.transaction():
            old = self.db.execute("SELECT id FROM readings WHERE content_hash = ?",
                                  (record["content_hash"],)).fetchone()
            if old is not None:
                if not replace:
                    return old[0]
                self.db.execute("DELETE FROM readings WHERE id = ?", (old[0],))
            self.db.execute("DELETE FROM readings WHERE recording_hash = ? AND machine = ? AND content_hash != ?",
                            (recording, record["machine"], record["content_hash"]))
            v = record["verdict"]
            cur = self.db.execute(
                "INSERT INTO readings (content_hash, machine, machine_file, source, taken_at, time_from,"
                " speed_rpm, elapsed_s, fs_hz, duration_s, urgency, worst_zone, withheld, summary, report,"
                " stored_at, route_id, recording_hash) VALUES (?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?)",
                (record["content_hash"], record["machine"], record.get("machine_file"), record["source"],
                 record["taken_at"], record["time_from"], record.get("speed_rpm"), record.get("elapsed_s"),
                 record.get("fs_hz"), record.get("duration_s"), v["urgency"], v["worst_zone"],
                 int(v["withheld"]), v["summary"], record.get("report"), _now(), route_id, recording))
            rid = cur.lastrowid
            self.db.executemany(
                "INSERT INTO channels (reading_id, channel, point, direction, location, zone, scale_trusted)"
                " VALUES (?,?,?,?,?,?,?)",
                [(rid, c["channel"], c.get("point"), c.get("direction"), c.get("location"), c.get("zone"),
                  int(c.get("scale_trusted", True))) for c in record["channels"]])
            self.db.executemany(
                "INSERT INTO indicators VALUES (?,?,?,?)",
                [(rid, i["channel"], i["name"], float(i["value"])) for i in record["indicators"]])
            self.db.executemany(
                "INSERT INTO hypotheses VALUES (?,?,?,?,?,?,?)",
                [(rid, h["rank"], h["fault"], h.get("fault_name"), h.get("component"), h["certainty"],
                  h.get("urgency")) for h in record["hypotheses"]])
            return rid

    def set_report(self, reading_id: int, report: str) -> None:
        with self.transaction():
            self.db.execute("UPDATE readings SET report = ? WHERE id = ?", (report, reading_id))

    def delete(self, reading_id: int) -> bool:
        """Forget one reading (its channels, indicators and hypotheses go with it)."""
        with self.transaction():
            return self.db.execute("DELETE FROM readings WHERE id = ?", (reading_id,)).rowcount > 0

    # reading ---------------------------------------------------------------
    def has(self, content_hash: str) -> bool:
        return self.db.execute("SELECT 1 FROM readings WHERE content_hash = ?", (content_hash,)).fetchone() is not None

    def machines(self) -> list[str]:
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
        points = {}
        for r in self.db.execute("SELECT reading_id, point FROM channels ORDER BY reading_id, channel"):
            points.setdefault(r[0], []).append(r[1] or "")
        for r in rows:
            r["points"] = points.get(r["id"], [])
        return rows

    def reading(self, reading_id: int) -> dict | None:
        row = self.db.execute("SELECT * FROM readings WHERE id = ?", (reading_id,)).fetchone()
        return dict(row) if row else None

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
        values: dict = {}
        ids = {r["id"] for r in rows}
        for r in self.db.execute("SELECT i.reading_id, i.channel, i.name, i.value FROM indicators i"
                                 " JOIN readings r ON r.id = i.reading_id WHERE r.machine = ?", (machine,)):
            if r[0] in ids:
                values.setdefault((r[0], r[1]), {})[r[2]] = r[3]
        for r in rows:
            r["indicators"] = values.get((r["id"], r["channel"]), {})
            if r["scale_trusted"] == 0:
                r["indicators"] = {k: v for k, v in r["indicators"].items() if not is_level(k)}
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

    def integrity(self) -> str:
        return self.db.execute("PRAGMA integrity_check").fetchone()[0]


class _Transaction:
    """BEGIN IMMEDIATE ... COMMIT, or ROLLBACK on any exception (the write lock is taken at once,
    so two writers queue on ``busy_timeout`` instead of failing on a lock upgrade)."""

    def __init__(self, db: sqlite3.Connection):
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
            self.db.execute("ROLLBACK")
        return False
