"""``tellwave trend``: a machine's history, its change against baseline and projected times."""

from __future__ import annotations

from ._common import add_site_option, add_units_options
from ._store import add_store_option


def register(sub) -> None:
    """Add ``tellwave trend`` and its options."""
    p = sub.add_parser("trend", help="trend a stored machine: change, rate per month, projected time to a limit")
    p.add_argument("machine", help="machine name as its file gives it (tellwave history lists them)")
    p.add_argument("--point", help="only this measurement point (default: every point)")
    p.add_argument("--limit", action="append", default=[], metavar="INDICATOR=VALUE",
                   help="project the time to this limit too, e.g. accel_peak_g=20, or a site alarm band's value "
                        "as 'band[2000-6000 Hz]=0.2' (quoted; repeatable)")
    p.add_argument("--waterfall", action="store_true",
                   help="add each point's velocity spectra across the stored surveys, oldest at the back, "
                        "forcing frequencies marked (HTML draws them; text and md list the largest changes)")
    p.add_argument("--compare", metavar="ID1,ID2",
                   help="add the spectra of two stored readings overlaid, and the lines that changed most "
                        "(ids as `tellwave history` lists them)")
    add_store_option(p)
    add_units_options(p)
    add_site_option(p)
    p.add_argument("--format", choices=["text", "md", "html", "json"], default="text",
                   help="output format (default text; html has the plots)")
    p.add_argument("-o", "--output", help="file to write (default: the terminal; MACHINE.trend.html for HTML)")
    p.set_defaults(run=run)


def parse_limits(items: list[str]) -> dict[str, float]:
    """``--limit INDICATOR=VALUE`` items as {indicator: value}; a UsageError for a bad one."""
    import math

    from ..common.errors import UsageError
    from ..history.record import INDICATORS

    limits = {}
    for item in items:
        name, sep, value = item.partition("=")
        name = name.strip()
        # a site alarm band's value by its stored name (band[2000-6000 Hz]_g), or without the unit ending when
        # one unit is stored; the trend checks it against the bands the store holds
        if not sep or not (name in INDICATORS or (name.startswith("band[") and "]" in name)):
            raise UsageError(f"--limit {item!r}: expected INDICATOR=VALUE with one of {', '.join(INDICATORS)}, "
                             f"or a site alarm band as band[BAND] (its name in the alarm file, e.g. "
                             f"'band[2000-6000 Hz]=0.2'; quote it for the shell)")
        try:
            limits[name] = float(value)
        except ValueError:
            raise UsageError(f"--limit {item!r}: {value!r} is not a number") from None
        if not math.isfinite(limits[name]):
            raise UsageError(f"--limit {item!r}: the limit must be a finite number")
        if not limits[name] > 0:
            raise UsageError(f"--limit {item!r}: the limit must be positive")
    return limits


def run(args) -> int:
    """Show or write the trend of a stored machine; the exit code."""
    import sys

    from ..common.errors import UsageError
    from ..common.escape import one_line
    from ..report import render, write_atomically
    from ..route.runner import slug
    from ..trend import trend_document
    from ..trend.waterfall import parse_compare
    from . import _common
    from ._common import output_target
    from ._store import open_store

    limits = parse_limits(args.limit)
    compare = parse_compare(args.compare) if args.compare is not None else None
    output = args.output
    if output is None and args.format in ("html", "md"):
        output = f"{slug(args.machine)}.trend.{args.format}"
    inputs = output_target(args, output) if output is not None else None    # before the work
    units = _common.shown_units(args, _common.rulebook(args).units if args.site else None)
    with open_store(args, create=False) as store:
        if args.machine not in store.machines():
            known = ", ".join(store.machines()) or "none"
            raise UsageError(f"no stored reading of {args.machine!r}; machines stored: {known}", path=str(store.path))
        doc = trend_document(store, args.machine, point=args.point, limits=limits, plots=args.format == "html",
                             waterfall=args.waterfall, compare=compare, units=units, site=tuple(args.site or ()))
    if not doc["points"]:
        raise UsageError(f"{args.machine} has no stored reading at point {args.point!r}")
    text = render(doc, args.format, "trend")
    if output is None:
        sys.stdout.write(text)
    else:
        print(f"wrote {one_line(write_atomically(output, text, inputs))}")
    return 0
