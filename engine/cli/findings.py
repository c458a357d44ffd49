"""``tellwave findings``: record what was found when a machine was opened, list and forget findings."""

from __future__ import annotations

from ._common import Parser, add_site_option
from ._store import add_store_option


def register(sub) -> None:
    """Add ``tellwave findings`` and its actions (add, import, list, delete)."""
    p = sub.add_parser("findings", help="record what was found at repair against stored readings; list or delete")
    fa = p.add_subparsers(dest="action", metavar="ACTION", parser_class=Parser)
    p.set_defaults(run=lambda args: _usage(p))

    q = fa.add_parser("add", help="record one finding against a stored reading, or a machine's latest readings")
    which = q.add_mutually_exclusive_group(required=True)
    which.add_argument("--reading", metavar="ID", help="id of the stored reading it judges (tellwave history MACHINE)")
    which.add_argument("--machine", metavar="NAME",
                       help="machine name: the finding judges its latest reading at each point on or before --date")
    q.add_argument("--date", metavar="DATE", required=True, help="the day it was found (YYYY-MM-DD)")
    q.add_argument("--component", metavar="C", required=True,
                   help="component opened, as the machine file names it (a bearing, shaft, gear...)")
    q.add_argument("--fault", metavar="F", required=True,
                   help="fault found: a fault id of the rulebooks, nothing-found, or other (say what in --notes)")
    q.add_argument("--stage", metavar="N", help="damage stage seen: 1 to 4, or none")
    q.add_argument("--work-order", metavar="W", help="work-order reference")
    q.add_argument("--notes", metavar="T", help="free notes (needed with --fault other)")
    add_store_option(q)
    add_site_option(q)
    q.set_defaults(run=_add)

    q = fa.add_parser("import", help="record every finding of a CSV file, all rows or none")
    q.add_argument("file", metavar="FILE.csv", help="CSV with a header: reading or machine, date, component, fault, "
                                                    "and optionally stage, work_order, notes")
    add_store_option(q)
    add_site_option(q)
    q.set_defaults(run=_import)

    q = fa.add_parser("list", help="list the stored findings (of one machine)")
    q.add_argument("machine", nargs="?", help="machine name (omit for every machine)")
    add_store_option(q)
    q.add_argument("--json", action="store_true", help="print JSON")
    q.set_defaults(run=_list)

    q = fa.add_parser("delete", help="forget one finding")
    q.add_argument("id", metavar="ID", help="id of the finding (tellwave findings list shows it)")
    add_store_option(q)
    q.set_defaults(run=_delete)


def _usage(p) -> int:
    import sys

    p.print_help(sys.stderr)
    return 2


def _fault_ids(args) -> set[str]:
    """The faults a finding can name: the loaded rulebooks' faults of the machine (a reading's own
    problems, family ``reading``, are not found by opening a machine)."""
    from ._common import rulebook

    return {k for k, f in rulebook(args).faults.items() if f.family != "reading"}


def _say_added(store, ids: list[int]) -> None:
    """The findings just stored, each read back by its id: only these (a damaged finding stored earlier
    must not turn a stored finding into an error after the fact)."""
    from ..common.escape import one_line as v

    for i in ids:
        f = store.finding(i)
        taken = store.reading(f["reading_id"])["taken_at"]
        print(f"finding {i}: {v(f['fault'])} on {v(f['component'])} ({v(f['found_on'])}) judges reading "
              f"{f['reading_id']} of {v(f['machine'])} ({v(taken)})")


def _add(args) -> int:
    from ..history.findings import add, make
    from ._store import open_store

    finding = make(component=args.component, fault=args.fault, date_text=args.date, reading=args.reading,
                   machine=args.machine, stage=args.stage, work_order=args.work_order, notes=args.notes)
    faults = _fault_ids(args)
    with open_store(args, create=False) as store:       # a finding judges stored readings: no new store
        ids = add(store, [(None, finding)], faults)
        _say_added(store, ids)
        _note_unsurveyed(store, [(None, finding)], None)
    return 0


def _note_unsurveyed(store, given, path) -> None:
    """On stderr, a note for each finding whose machine has no stored reading after its day yet
    (``findings.not_yet_surveyed``)."""
    import sys

    from ..common.escape import terminal
    from ..history.findings import not_yet_surveyed

    for note in not_yet_surveyed(store, given):
        print(terminal(f"tellwave: note: {path + ': ' if path else ''}{note}"), file=sys.stderr)


def _import(args) -> int:
    from ..history.findings import FindingError, add, from_row, read_csv
    from ._store import open_store

    rows = read_csv(args.file)
    given = []
    for line, row in rows:
        try:
            given.append((line, from_row(row)))
        except FindingError as exc:
            exc.path, exc.line = args.file, line
            raise
    faults = _fault_ids(args)
    with open_store(args, create=False) as store:
        ids = add(store, given, faults, path=args.file)
        print(f"{len(ids)} finding(s) from {len(given)} row(s) of {args.file} stored in {store.path}")
        _note_unsurveyed(store, given, args.file)
    return 0


def _list(args) -> int:
    from ..common.errors import UsageError
    from ..common.escape import one_line as v
    from ..common.jsonout import dumps
    from ._store import open_store

    with open_store(args, create=False) as store:
        if args.machine is not None and args.machine not in store.machines():
            known = ", ".join(store.machines()) or "none"
            raise UsageError(f"no stored reading of {args.machine!r}; machines stored: {known}", path=str(store.path))
        rows = store.findings(args.machine)
        if args.json:
            print(dumps(rows))
            return 0
        if not rows:
            print(f"the store {v(store.path)} holds no finding" + (f" of {v(args.machine)}" if args.machine else ""))
            return 0
        print(f"{'id':>5}  {'found':<10} {'reading':>7}  {'machine':<24} {'component':<16} {'fault':<22} "
              f"{'stage':<5} work order / notes")
        for f in rows:
            stage = "-" if f["stage"] is None else str(f["stage"])
            more = " / ".join(v(x) for x in (f["work_order"], f["notes"]) if x)
            print(f"{f['id']:>5}  {v(f['found_on']):<10} {f['reading_id']:>7}  {v(f['machine'])[:24]:<24} "
                  f"{v(f['component'])[:16]:<16} {v(f['fault'])[:22]:<22} {stage:<5} {more}")
    return 0


def _delete(args) -> int:
    from ..common.errors import UsageError
    from ..common.escape import one_line as v
    from ._store import open_store

    try:
        fid = int(args.id.strip())
    except ValueError:
        raise UsageError(f"findings delete {args.id!r}: expected a finding id, a whole number "
                         "(tellwave findings list shows them)") from None
    with open_store(args, create=False) as store:
        row = store.finding(fid)
        if row is None:
            raise UsageError(f"no stored finding has id {fid} (tellwave findings list shows them)",
                             path=str(store.path))
        store.delete_finding(fid)
        print(f"deleted finding {fid} ({v(row['fault'])} on {v(row['component'])}, {v(row['found_on'])}, "
              f"reading {row['reading_id']} of {v(row['machine'])})")
    return 0
