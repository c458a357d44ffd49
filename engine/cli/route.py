"""``tellwave route``: a whole survey in one command: diagnose, store, report, summarise."""

from __future__ import annotations

from ._common import add_alarms_option, add_max_samples_option, add_site_option, add_units_options
from ._store import add_store_option


def register(sub) -> None:
    """Add ``tellwave route`` and its options."""
    p = sub.add_parser("route", help="diagnose a whole route of readings, store them and summarise")
    p.add_argument("route", help="route file (YAML), or a folder of readings with sidecars (give --plant)")
    p.add_argument("--plant", help="plant file mapping the folder's readings to machines")
    p.add_argument("--out", help="folder for reports and the summary (default: ROUTE-reports next to the route)")
    p.add_argument("--workers", type=int, help="worker processes (default: all cores)")
    p.add_argument("--scheduler", metavar="ADDRESS", help="run on this Dask distributed scheduler instead")
    add_store_option(p)
    p.add_argument("--again", action="store_true", help="diagnose readings already stored once more")
    p.add_argument("--format", choices=["html", "md", "text", "json"], default="html",
                   help="format of each reading's report (default html); the summary is written in all four")
    p.add_argument("--plots", nargs="?", const="", metavar="CHANNEL,...",
                   help="draw the plots in each reading's HTML report; with channel names, those channels' "
                        "plots (a reading without one leaves it out), with all, every channel's spectrum too")
    p.add_argument("--quiet", action="store_true", help="no progress bar and no summary on the terminal")
    add_max_samples_option(p)
    add_site_option(p)
    add_alarms_option(p)
    add_units_options(p)
    p.set_defaults(run=run)


def run(args) -> int:
    """Diagnose a route into the store and write its reports and summary; the exit code."""
    import sys
    from pathlib import Path

    from ..common.errors import EXIT_ROUTE_FAILURES, UsageError
    from ..common.escape import one_line
    from ..common.outfile import known_inputs
    from ..report import render, write_atomically
    from ..route import load_folder, load_route, route_summary, run_route, summary_paths
    from ..route.runner import check_outputs, trend_paths
    from ..trend import trend_document
    from ._common import input_files, route_machine_names, rulebook, shown_units, site_alarms
    from ._store import check_store_folder, open_store

    check_store_folder(args.store)                      # a mistyped store folder stops here, before any work
    if args.workers is not None and args.workers < 1:
        raise UsageError(f"--workers must be at least 1, got {args.workers}")
    if args.plots is not None and args.format != "html":
        raise UsageError(f"--plots draws plots in each reading's HTML report: drop --format {args.format}")
    source = Path(args.route)
    if source.is_dir():
        if not args.plant:
            raise UsageError(f"{source} is a folder: give --plant PLANT.yaml to map its readings to machines")
        route = load_folder(source, args.plant)
        _say_unmatched(route, args.plant)
    else:
        if args.plant:
            raise UsageError("--plant goes with a folder of readings, not with a route file")
        route = load_route(source)
    out = Path(args.out) if args.out else source.parent / f"{source.stem}-reports"
    inputs = known_inputs(input_files(args, route))
    site_alarms(args, route_machine_names(route))       # a bad alarm file stops here, before any work
    check_outputs(route, out, args.format, inputs)      # before the store is opened (run_route checks again)
    with open_store(args) as store:
        try:
            outcome = run_route(route, store, out, workers=args.workers, scheduler=args.scheduler,
                                again=args.again, fmt=args.format, plots=args.plots, site=args.site or (),
                                progress=not args.quiet and sys.stderr.isatty(), inputs=inputs,
                                max_samples=args.max_samples, alarms=args.alarms or (),
                                units={"frequency": args.frequency_unit, "velocity": args.velocity_unit})
        except KeyboardInterrupt:
            print("tellwave: interrupted; every reading finished so far is stored: run the same command "
                  "again to resume", file=sys.stderr)
            return 130
        units = shown_units(args, rulebook(args).units if args.site else None)
        pages = trend_paths(route, out)
        stored = set(store.machines())
        # each machine's trend, for its page (which the summary links to) and the summary's time that governs
        trends = {name: trend_document(store, name, plots=True, units=units, site=tuple(args.site or ()))
                  for name in pages if name in stored}
        doc = route_summary(outcome, store, out, alarms=args.alarms or (), units=units, trends=trends)
        for m in doc["machines"]:
            if m["machine"] in trends:
                write_atomically(pages[m["machine"]], render(trends[m["machine"]], "html", "trend"), inputs)
    for fmt, path in summary_paths(out).items():
        write_atomically(path, render(doc, fmt, "route"), inputs)
    if not args.quiet:
        text = render(doc, "text", "route")
        sys.stdout.write(text if text.endswith("\n") else text + "\n")
    print(f"summary in {one_line(out)}/summary.html (and .md, .txt, .json)", file=sys.stderr)
    return EXIT_ROUTE_FAILURES if outcome.failed else 0


SHOWN_UNMATCHED = 5


def _say_unmatched(route, plant) -> None:
    """Name the folder's reading files that no pattern of the plant file maps (they are not diagnosed)."""
    import sys
    from pathlib import Path

    from ..common.escape import terminal

    if not route.unmatched:
        return
    names = [Path(f).name for f in route.unmatched]
    shown = ", ".join(names[:SHOWN_UNMATCHED]) + (f" and {len(names) - SHOWN_UNMATCHED} more"
                                                  if len(names) > SHOWN_UNMATCHED else "")
    print(terminal(f"tellwave: {len(names)} reading file(s) match no pattern of {plant} and are skipped: {shown}"),
          file=sys.stderr)
