"""Findings: what was found when a machine was opened, checked before the store keeps it.

A finding judges a stored reading: by its id, or by a machine and the date found, which judges that
machine's latest readings on or before that date (at each point, the latest reading). It names the
component opened, the fault found (a fault id of the loaded rulebooks, ``nothing-found``, or ``other``
with words in the notes), the damage stage seen (1 to 4, or none), the date found, a work-order
reference and free notes. Every check that fails is one ``FindingError`` line naming the file (the CSV
file and its line, or the store) and the problem; the caller writes nothing then (``add`` runs every
check and every write of one command in one transaction).

The CSV form is described by ``engine/common/schemas/findings.schema.json``, the one home of its columns
(``CSV_COLUMNS``, ``CSV_NEEDED``) and text limit: a header line naming the columns, in any order;
``component``, ``fault`` and ``date`` are needed, and ``reading`` or ``machine`` on each row. The cells
are checked here one by one, so that each problem is said in the words of a maintenance log.
"""

from __future__ import annotations

import csv
import io
from dataclasses import dataclass
from datetime import date, datetime
from pathlib import Path

from ..common.errors import StoreError, UsageError
from ..common.infile import regular_file
from ..common.yamlfile import load_schema

NOTHING_FOUND = "nothing-found"
OTHER = "other"
STAGES = (1, 2, 3, 4)
MAX_CSV_BYTES = 64 << 20      # a maintenance export of findings is far smaller; a bigger file is not one
_ROW = load_schema("findings.schema.json")
CSV_COLUMNS = tuple(_ROW["properties"])
CSV_NEEDED = tuple(_ROW["required"])
TEXT_MAX = _ROW["properties"]["notes"]["maxLength"]      # characters of a work order or notes: a paragraph
CSV_ROWS_MAX = 100_000


class FindingError(UsageError):
    """A finding that cannot be stored (exit 2): unknown reading, machine, component or fault, a date in the
    future or before the reading, a duplicate, or a CSV file that cannot be read."""


@dataclass(frozen=True)
class Finding:
    """One finding as given, before it is matched to stored readings."""

    component: str
    fault: str
    found_on: str                 # ISO date
    reading_id: int | None = None
    machine: str | None = None
    stage: int | None = None
    work_order: str | None = None
    notes: str | None = None


def parse_date(text: str, where: str) -> str:
    """``text`` (an ISO 8601 date, or a time whose day is taken) as an ISO date; a FindingError if it is
    none or lies in the future."""
    text = (text or "").strip()
    try:
        day = date.fromisoformat(text) if len(text) == 10 else datetime.fromisoformat(text).date()
    except ValueError:
        raise FindingError(f"{where} {text!r}: expected a date as YYYY-MM-DD") from None
    if day > date.today():
        raise FindingError(f"{where} {day.isoformat()} is in the future: a finding records what was found")
    return day.isoformat()


def parse_stage(text: str | None, where: str) -> int | None:
    """A damage stage, 1 to 4; empty or "none" is None (not stated or no damage)."""
    if text is None or text.strip().lower() in ("", "none"):
        return None
    try:
        value = int(text.strip())
    except ValueError:
        value = 0
    if value not in STAGES:
        raise FindingError(f"{where} {text!r}: a damage stage is 1, 2, 3, 4 or none")
    return value


def parse_reading_id(text: str, where: str) -> int:
    """A reading id: a whole number above 0."""
    try:
        value = int(text.strip())
    except ValueError:
        value = 0
    if value <= 0:
        raise FindingError(f"{where} {text!r}: a reading id is a whole number (tellwave history MACHINE lists them)")
    return value


def _text(value: str | None, where: str) -> str | None:
    value = (value or "").strip()
    if len(value) > TEXT_MAX:
        raise FindingError(f"{where}: {len(value)} characters, at most {TEXT_MAX}")
    return value or None


def make(*, component: str, fault: str, date_text: str, reading: str | None = None, machine: str | None = None,
         stage: str | None = None, work_order: str | None = None, notes: str | None = None) -> Finding:
    """A Finding from the words a user gave (options or one CSV row); the fields are checked one by one."""
    if (reading is None or not reading.strip()) == (machine is None or not machine.strip()):
        raise FindingError("give either a reading id or a machine (with the date found), not both or neither")
    component, fault = (component or "").strip(), (fault or "").strip()
    if not component:
        raise FindingError("component: empty; name the component opened (a bearing, shaft, gear... of the machine)")
    if not fault:
        raise FindingError(f"fault: empty; give a fault id of the rulebooks, {NOTHING_FOUND} or {OTHER}")
    notes_text = _text(notes, "notes")
    if fault == OTHER and not notes_text:
        raise FindingError(f"fault {OTHER}: say what was found in the notes")
    return Finding(component=component, fault=fault, found_on=parse_date(date_text, "date"),
                   reading_id=parse_reading_id(reading, "reading") if reading and reading.strip() else None,
                   machine=machine.strip() if machine and machine.strip() else None,
                   stage=parse_stage(stage, "stage"), work_order=_text(work_order, "work order"), notes=notes_text)


def read_csv(path) -> list[tuple[int, dict]]:
    """(line, row) of every row of a findings CSV file; a FindingError naming the file and line for a file
    that cannot be read, a header without the needed columns or with unknown ones, or a ragged row."""
    path = Path(path)
    info = regular_file(str(path), FindingError, "CSV file")       # not a pipe or device a read would hang on
    if info.st_size > MAX_CSV_BYTES:
        raise FindingError(f"larger than {MAX_CSV_BYTES >> 20} MiB: not a findings CSV", path=str(path))
    try:
        text = path.read_text(encoding="utf-8-sig")
    except UnicodeDecodeError as exc:
        raise FindingError(f"not UTF-8 text (byte {exc.start}); save the CSV as UTF-8", path=str(path)) from None
    except OSError as exc:
        raise FindingError(f"cannot be read ({exc.strerror})", path=str(path)) from None
    if "\0" in text:
        raise FindingError("holds NUL bytes: not a CSV text file", path=str(path))
    reader = csv.reader(io.StringIO(text, newline=""))       # a quoted note may hold line breaks
    try:
        header = next(reader, None)
        if header is None:
            raise FindingError("empty: expected a header line naming the columns "
                               f"({', '.join(CSV_COLUMNS)})", path=str(path), line=1)
        names = [h.strip().lower() for h in header]
        unknown = [n for n in names if n not in CSV_COLUMNS]
        if unknown:
            raise FindingError(f"unknown column(s) {', '.join(map(repr, unknown))}; columns are "
                               f"{', '.join(CSV_COLUMNS)}", path=str(path), line=1)
        if len(set(names)) != len(names):
            raise FindingError("a column is named twice in the header", path=str(path), line=1)
        missing = [n for n in CSV_NEEDED if n not in names]
        if "reading" not in names and "machine" not in names:
            missing.append("reading or machine")
        if missing:
            raise FindingError(f"the header lacks {', '.join(missing)}", path=str(path), line=1)
        rows = []
        end = reader.line_num
        for cells in reader:
            line, end = end + 1, reader.line_num          # the line the row starts on (a note may go on)
            if not any(c.strip() for c in cells):
                continue
            if len(cells) != len(names):
                raise FindingError(f"{len(cells)} cells, the header names {len(names)}", path=str(path), line=line)
            rows.append((line, dict(zip(names, cells))))
            if len(rows) > CSV_ROWS_MAX:
                raise FindingError(f"more than {CSV_ROWS_MAX} rows: split the file", path=str(path), line=line)
    except csv.Error as exc:
        raise FindingError(f"not a CSV file ({exc})", path=str(path), line=reader.line_num) from None
    if not rows:
        raise FindingError("no finding below the header", path=str(path))
    return rows


def from_row(row: dict) -> Finding:
    """The Finding of one CSV row (``read_csv``)."""
    return make(component=row.get("component", ""), fault=row.get("fault", ""), date_text=row.get("date", ""),
                reading=row.get("reading"), machine=row.get("machine"), stage=row.get("stage"),
                work_order=row.get("work_order"), notes=row.get("notes"))


def components_of_machine(machine_file: str | None, known: dict | None = None) -> set[str] | None:
    """The components of the machine file a reading was diagnosed with (shafts, bearings, gears, belts,
    rotors, motors), or None when the file is not known or can no longer be read (then nothing is checked)."""
    from ..common.errors import TellwaveError
    from ..machine import load_machine

    if known is not None and machine_file in known:
        return known[machine_file]
    parts = None
    if machine_file and Path(machine_file).is_file():
        try:
            m = load_machine(machine_file)
            parts = (set(m.shaft_speeds_hz) | {b.id for b in m.bearings} | {g.id for g in m.gears}
                     | {b.id for b in m.belts} | {r.id for r in m.rotors} | {x.id for x in m.motors}
                     | {c.id for c in m.couplings})
        except TellwaveError:
            pass
    if known is not None:
        known[machine_file] = parts
    return parts


def resolve(store, finding: Finding, fault_ids, machines: dict | None = None) -> list[dict]:
    """The rows to store for ``finding``: one per reading it judges, each checked against the store (the
    reading or machine exists, the component is the machine's, the fault is known, the date is not before
    the reading, no same finding is stored). A FindingError for the first check that fails. ``machines``
    keeps the components of each machine file read, for the next finding of the same command."""
    if finding.fault not in fault_ids and finding.fault not in (NOTHING_FOUND, OTHER):
        raise FindingError(f"fault {finding.fault!r} is no fault id of the loaded rulebooks (nor {NOTHING_FOUND} "
                           f"or {OTHER}); `tellwave rulebook list` lists them")
    if finding.reading_id is not None:
        row = store.reading(finding.reading_id)
        if row is None:
            raise FindingError(f"no stored reading has id {finding.reading_id} (tellwave history MACHINE lists them)")
        readings = [row]
    else:
        if finding.machine not in store.machines():
            known = ", ".join(store.machines()) or "none"
            raise FindingError(f"no stored reading of machine {finding.machine!r}; machines stored: {known}")
        readings = store.latest_readings(finding.machine, finding.found_on)
        if not readings:
            raise FindingError(f"machine {finding.machine!r} has no stored reading on or before {finding.found_on}")
    out = []
    for r in readings:
        try:
            taken = datetime.fromisoformat(r["taken_at"]).date().isoformat()
        except (TypeError, ValueError):     # a reading by id is not checked on its way out of the store
            raise StoreError(f"damaged: reading {r['id']} is stored with the time {r['taken_at']!r}, not an ISO 8601 "
                             f"time; forget it with `tellwave history --delete {r['id']}`, or restore the store from "
                             "a copy", path=str(store.path)) from None
        if finding.found_on < taken:
            raise FindingError(f"date {finding.found_on} is before reading {r['id']} ({taken}): a finding judges "
                               "a reading taken before the machine was opened")
        parts = components_of_machine(r.get("machine_file"), machines)
        named = store.components_of(r["id"]) if parts is not None else set()
        if parts is not None and finding.component not in parts | named:
            raise FindingError(f"component {finding.component!r} is not in the machine file of reading {r['id']} "
                               f"({r['machine_file']}); its components are {', '.join(sorted(parts | named))}")
        earlier = store.finding_of(r["id"], finding.component, finding.fault)
        if earlier is not None:
            raise FindingError(f"finding {earlier} already records {finding.fault} on {finding.component} for "
                               f"reading {r['id']}; delete it first to replace it")
        out.append({"reading_id": r["id"], "component": finding.component, "fault": finding.fault,
                    "stage": finding.stage, "found_on": finding.found_on, "work_order": finding.work_order,
                    "notes": finding.notes})
    return out


def not_yet_surveyed(store, findings) -> list[str]:
    """Notes for the findings given by machine and date (``findings``: (line, Finding) pairs) whose machine has
    no stored reading after the day found: a finding judges the latest readings stored on or before its day,
    and a survey taken before the repair but stored after the finding takes their place at its points
    (``Store.add``). The note names the readings judged now and says so."""
    notes, done = [], set()
    for line, f in findings:
        if f.reading_id is not None or (f.machine, f.found_on) in done:
            continue
        done.add((f.machine, f.found_on))
        if any(r["taken_at"][:10] > f.found_on for r in store.readings(f.machine)):
            continue
        judged = store.latest_readings(f.machine, f.found_on)
        if not judged:
            continue
        last = max(r["taken_at"] for r in judged)[:10]
        where = f"line {line}: " if line is not None else ""
        notes.append(f"{where}no reading of {f.machine} after {f.found_on} is stored yet (the last taken {last}); "
                     f"a survey between {last} and {f.found_on} stored later takes their place at its points")
    return notes


def add(store, findings, fault_ids, *, path: str | None = None) -> list[int]:
    """Check and store ``findings`` ((line or None, Finding) pairs) in one transaction: every one or none.
    A FindingError names ``path`` (the CSV file, else the store) and the line."""
    ids: list[int] = []
    machines: dict = {}
    with store.transaction():
        for line, finding in findings:
            try:
                for row in resolve(store, finding, fault_ids, machines):
                    ids.append(store.add_finding(row))
            except FindingError as exc:
                exc.path, exc.line = path or str(store.path), line
                raise
    return ids
