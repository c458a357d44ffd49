"""``tellwave demo-route``: monthly demo routes whose faults grow, for route, history and trend."""

from __future__ import annotations

from ..demo.plant import MONTHS as DEMO_MONTHS  # the module holds only constants at import
from ._common import whole


def register(sub) -> None:
    """Add ``tellwave demo-route`` and its options."""
    p = sub.add_parser("demo-route", help="write demo routes a month apart, with faults that grow and the repairs made")
    p.add_argument("--out", default="tellwave-routes", help="folder for the months (default: tellwave-routes)")
    p.add_argument("--months", type=whole("--months", 1, DEMO_MONTHS), default=3,
                   help=f"how many monthly surveys to write (1-{DEMO_MONTHS}, default 3)")
    p.set_defaults(run=run)


def run(args) -> int:
    """Write the demo plant's monthly routes; the exit code."""
    from ..common.escape import one_line
    from ..demo.plant import write_month

    for month in range(1, args.months + 1):
        route = write_month(args.out, month)
        findings = route.parent / "findings.csv"
        also = f" and {one_line(findings.name)} (what was found at a repair after it)" if findings.exists() else ""
        print(f"wrote {one_line(route)}{also}")
    return 0
