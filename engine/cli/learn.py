"""``tellwave learn``: what a store's findings at repair say about the rules, and a proposed site overlay."""

from __future__ import annotations

from ._common import add_site_option
from ._store import add_store_option


def register(sub) -> None:
    """Add ``tellwave learn`` and its options."""
    p = sub.add_parser("learn", help="per rule, how often what it pointed to was found at repair; propose an overlay")
    p.add_argument("machines", nargs="*", metavar="MACHINE",
                   help="machine names as the store holds them (default: every machine with findings)")
    add_store_option(p)
    add_site_option(p)
    p.add_argument("--format", choices=["text", "md", "html", "json"], default="text",
                   help="report format (default text; html draws the reliability diagram)")
    p.add_argument("-o", "--output", metavar="FILE", help="file to write the report to (default: the terminal, "
                                                          "whatever the format)")
    p.add_argument("--overlay", metavar="FILE",
                   help="write the proposed site overlay (YAML) to this file, to review and pass with --site")
    p.set_defaults(run=run)


def _check_site(places) -> None:
    """A ``--site`` place must hold rulebook files: a folder with none is not an overlay (a mistyped folder
    would otherwise learn against the shipped rulebooks alone)."""
    from pathlib import Path

    from ..common.errors import UsageError

    for place in places or ():
        p = Path(place)
        if p.is_dir() and not any(x.suffix in (".yaml", ".yml") and x.is_file() for x in p.iterdir()):
            raise UsageError(f"--site {place}: the folder holds no rulebook (*.yaml) file, so it is not a site "
                             "overlay; name the folder the diagnoses were made with")


def _check_overlay(args, report_target) -> object:
    """Check ``--overlay`` before any work: not an input, not the report's file, never the shipped rulebooks."""
    from pathlib import Path

    from ..common.errors import OutputError
    from ..common.paths import RULEBOOKS
    from ._common import output_target

    inputs = output_target(args, args.overlay)
    where = Path(args.overlay).absolute().resolve().parent
    if where == RULEBOOKS.resolve() or RULEBOOKS.resolve() in where.parents:
        raise OutputError("lies in the shipped rulebooks folder, which learning never changes; write the overlay "
                          "to a site folder and pass it with --site", path=args.overlay)
    if report_target is not None and Path(report_target).absolute() == Path(args.overlay).absolute():
        raise OutputError("is also the report's file (-o); give the overlay a file of its own", path=args.overlay)
    return inputs


def run(args) -> int:
    """Report what the findings say and, with ``--overlay``, write the proposed overlay; the exit code."""
    import sys

    from ..common.escape import one_line
    from ..history.store import default_store_path
    from ..pipeline.learning import learning_document
    from ..report import render, write_atomically
    from ._common import output_target

    _check_site(args.site)
    output = args.output
    report_inputs = output_target(args, output) if output is not None else None     # before the work
    overlay_inputs = _check_overlay(args, output) if args.overlay is not None else None
    store = args.store or default_store_path()
    doc = learning_document(store, args.site or (), args.machines, diagram=args.format == "html")
    if doc["findings"] == 0:
        # JSON is read by programs: they get the (empty) document, and the sentence goes to stderr
        print(f"the store {one_line(doc['store'])} holds no finding"
              + (f" of {', '.join(one_line(m) for m in args.machines)}" if args.machines else "")
              + ": record what was found at repair with `tellwave findings add` or `tellwave findings import`, "
              "then learn", file=sys.stderr if args.format == "json" else sys.stdout)
        if args.format != "json":
            return 0
        args.overlay = None         # nothing learned: no overlay to propose
    text = render(doc, args.format, "learning")
    if output is None:
        sys.stdout.write(text)
    else:
        print(f"wrote {one_line(write_atomically(output, text, report_inputs))}")
    if args.overlay is not None:
        print(f"wrote {one_line(write_atomically(args.overlay, doc['overlay'], overlay_inputs))} "
              f"(proposed overlay: review it, then pass its folder with --site)",
              file=sys.stderr if output is None else sys.stdout)
    return 0
