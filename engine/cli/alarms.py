"""``tellwave alarms derive``: site alarm limits per point from a machine's own stored history."""

from __future__ import annotations

from ._common import number, whole
from ._store import add_store_option


def register(sub) -> None:
    """Add ``tellwave alarms`` and its ``derive`` action."""
    p = sub.add_parser("alarms", help="site alarms per point: derive limits from a machine's own history")
    actions = p.add_subparsers(dest="action", metavar="ACTION", required=True, parser_class=type(p))
    d = actions.add_parser("derive", help="write a site alarm file: mean + k sd of each point's healthy readings")
    d.add_argument("machine", help="machine name as its file gives it (tellwave history lists them)")
    add_store_option(d)
    d.add_argument("--k", type=number("--k", 0.0, 20.0), default=3.0,
                   help="alert at mean + k standard deviations (default 3)")
    d.add_argument("--danger-k", type=number("--danger-k", 0.0, 40.0),
                   help="danger at mean + this many standard deviations (default 2 k)")
    d.add_argument("--least", type=whole("--least", 3, 100000), default=6,
                   help="healthy readings a limit needs at least (default 6)")
    d.add_argument("--point", help="only this measurement point (default: every point)")
    d.add_argument("-o", "--output", help="alarm file to write (default: the terminal)")
    d.set_defaults(run=run)


def run(args) -> int:
    """Derive and write (or show) the alarm file; the exit code."""
    import sys

    from ..common.errors import UsageError
    from ..common.escape import one_line
    from ..report import write_atomically
    from ..trend.alarm_limits import alarm_file_text, derive_limits
    from ._common import output_target
    from ._store import open_store

    danger_k = args.danger_k if args.danger_k is not None else 2 * args.k
    if not danger_k > args.k:
        raise UsageError(f"--danger-k ({danger_k:g}) must be above --k ({args.k:g})")
    inputs = output_target(args, args.output) if args.output is not None else None    # before the work
    with open_store(args, create=False) as store:
        if args.machine not in store.machines():
            known = ", ".join(store.machines()) or "none"
            raise UsageError(f"no stored reading of {args.machine!r}; machines stored: {known}", path=str(store.path))
        derived = derive_limits(store, args.machine, k=args.k, danger_k=danger_k, least=args.least,
                                point=args.point)
        name = store.path.name
    if not derived["alarms"]:
        more = len(derived["too_few"]) - 3
        why = "; ".join(f"{x['point']} {x['band']} {x['quantity']}: {x['why']}"
                        for x in derived["too_few"][:3]) + (f"; and {more} more" if more > 0 else "") or (
                  "no stored level" if derived["healthy"] else "every stored reading has a confident hypothesis")
        raise UsageError(f"too few healthy readings of {args.machine} to set any limit "
                         f"({derived['healthy']} healthy of {derived['readings']}; {why})")
    for x in derived["too_few"]:
        print(one_line(f"tellwave: no limit for {x['point']} {x['band']} {x['quantity']}: {x['why']}"), file=sys.stderr)
    text = alarm_file_text(args.machine, derived, name)
    if args.output is None:
        sys.stdout.write(text)
    else:
        print(f"wrote {one_line(write_atomically(args.output, text, inputs))}")
    return 0
