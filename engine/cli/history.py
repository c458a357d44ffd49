"""``tellwave history``: what the store holds of a machine, with the findings that judge each reading;
forget a reading."""

from __future__ import annotations

from ._store import add_store_option


def register(sub) -> None:
    """Add ``tellwave history`` and its options."""
    p = sub.add_parser("history", help="list the stored readings of a machine, or delete one")
    p.add_argument("machine", nargs="?", help="machine name as its file gives it (omit to list machines)")
    add_store_option(p)
    p.add_argument("--delete", metavar="ID", help="delete the stored reading with this id")
    p.add_argument("--json", action="store_true", help="print JSON")
    p.set_defaults(run=run)


def reading_id(text: str) -> int:
    """The id given to --delete: a whole number from 1 to SQLite's largest integer."""
    from ..common.errors import UsageError
    from ..history.store import ID_MAX

    try:
        value = int(text.strip())
    except ValueError:
        raise UsageError(f"--delete {text!r}: expected a reading id, a whole number (tellwave history "
                         "MACHINE lists them)") from None
    if not 0 < value <= ID_MAX:
        raise UsageError(f"--delete {text}: no reading has that id (ids run from 1 to {ID_MAX}; "
                         "tellwave history MACHINE lists them)")
    return value


def run(args) -> int:
    """List the store's machines or readings, or forget one; the exit code."""
    from ..advice import load_advice
    from ..common.errors import UsageError
    from ..common.escape import one_line as v
    from ..common.jsonout import dumps
    from ._store import open_store

    delete = None if args.delete is None else reading_id(args.delete)
    with open_store(args, create=False) as store:     # listing or forgetting never makes a store
        if delete is not None:
            row = store.reading(delete)
            if row is None:
                raise UsageError(f"no stored reading has id {delete}", path=str(store.path))
            store.delete(delete)
            if args.json:
                print(dumps({"deleted": delete, "machine": row["machine"], "source": row["source"],
                             "taken_at": row["taken_at"]}))
            else:
                print(f"deleted reading {delete} ({v(row['machine'])}, {v(row['source'])}, {v(row['taken_at'])})")
            return 0
        if args.machine is None:
            machines = store.machines()
            if args.json:
                print(dumps(machines))
            else:
                print("\n".join(map(v, machines)) if machines else f"the store {v(store.path)} holds no reading yet")
            return 0
        rows = store.readings(args.machine)
        found: dict[int, list[dict]] = {}
        for f in store.findings(args.machine):
            found.setdefault(f["reading_id"], []).append(f)
        for r in rows:
            r["findings"] = [{k: f[k] for k in ("id", "component", "fault", "stage", "found_on", "work_order", "notes")}
                             for f in found.get(r["id"], [])]
        if not rows:
            known = ", ".join(store.machines()) or "none"
            raise UsageError(f"no stored reading of {args.machine!r}; machines stored: {known}", path=str(store.path))
        labels = {u["id"]: u["label"] for u in load_advice()["urgency"]}   # as every other output words them
        for r in rows:
            r["urgency_label"] = labels.get(r["urgency"], r["urgency"])
        if args.json:
            print(dumps(rows))
            return 0
        print(f"{v(args.machine)}: {len(rows)} stored reading(s) in {v(store.path)}")
        print(f"{'id':>5}  {'taken at':<26} {'points':<14} {'zone':<4} {'urgency':<16} top diagnosis")
        for r in rows:
            certainty = "—" if r["top_certainty"] is None else f"{100 * max(r['top_certainty'], 0):.0f} %"
            top = f"{v(r['top_fault_name'])} on {v(r['top_component'])} {certainty}" if r["top_fault"] else "-"
            print(f"{r['id']:>5}  {v(r['taken_at']):<26} {v(','.join(r['points']))[:14]:<14} "
                  f"{v(r['worst_zone'] or '-'):<4} {v(r['urgency_label'] or '-'):<16} {top}")
            for f in r["findings"]:
                stage = "" if f["stage"] is None else f", stage {f['stage']}"
                more = "".join(f"; {v(x)}" for x in (f["work_order"], f["notes"]) if x)
                print(f"{'':>5}  found {v(f['found_on'])}: {v(f['fault'])} on {v(f['component'])}{stage}{more}"
                      f" (finding {f['id']})")
    return 0
