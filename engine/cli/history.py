"""``tellwave history``: what the store holds of a machine; forget a reading."""

from __future__ import annotations

from ._store import add_store_option


def register(sub) -> None:
    p = sub.add_parser("history", help="list the stored readings of a machine, or delete one")
    p.add_argument("machine", nargs="?", help="machine name as its file gives it (omit to list machines)")
    add_store_option(p)
    p.add_argument("--delete", type=int, metavar="ID", help="delete the stored reading with this id")
    p.add_argument("--json", action="store_true", help="print JSON")
    p.set_defaults(run=run)


def run(args) -> int:
    import json

    from ..errors import UsageError
    from ..escape import one_line as v
    from ._store import open_store

    with open_store(args) as store:
        if args.delete is not None:
            row = store.reading(args.delete)
            if row is None:
                raise UsageError(f"no stored reading has id {args.delete}", path=str(store.path))
            store.delete(args.delete)
            print(f"deleted reading {args.delete} ({v(row['machine'])}, {v(row['source'])}, {v(row['taken_at'])})")
            return 0
        if args.machine is None:
            machines = store.machines()
            if args.json:
                print(json.dumps(machines, indent=2))
            else:
                print("\n".join(map(v, machines)) if machines else f"the store {v(store.path)} holds no reading yet")
            return 0
        rows = store.readings(args.machine)
        if not rows:
            known = ", ".join(store.machines()) or "none"
            raise UsageError(f"no stored reading of {args.machine!r}; machines stored: {known}", path=str(store.path))
        if args.json:
            print(json.dumps(rows, indent=2))
            return 0
        print(f"{v(args.machine)}: {len(rows)} stored reading(s) in {v(store.path)}")
        print(f"{'id':>5}  {'taken at':<26} {'points':<14} {'zone':<4} {'urgency':<10} top finding")
        for r in rows:
            top = (f"{v(r['top_fault_name'])} on {v(r['top_component'])} {100 * max(r['top_certainty'], 0):.0f} %"
                   if r["top_fault"] else "-")
            print(f"{r['id']:>5}  {v(r['taken_at']):<26} {v(','.join(r['points']))[:14]:<14} "
                  f"{v(r['worst_zone'] or '-'):<4} {v(r['urgency'] or '-'):<10} {top}")
    return 0
