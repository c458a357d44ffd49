"""``tellwave demo``: the invented demo plant, diagnosed from its files, with HTML reports."""

from __future__ import annotations

from ._common import add_site_option, input_files, rulebook, say


def register(sub) -> None:
    """Add ``tellwave demo`` and its options."""
    p = sub.add_parser("demo", help="diagnose the demo plant and write HTML reports")
    p.add_argument("--out", default="tellwave-demo", help="folder for readings and reports (default: tellwave-demo)")
    add_site_option(p)
    p.set_defaults(run=run)


def run(args) -> int:
    """Regenerate and diagnose the demo plant; the exit code."""
    from ..common.errors import EXIT_CASE_FAILED
    from ..common.outfile import prepare_folder
    from ..demo.run import run_demo, summary
    from ..reasoning import Reasoner

    prepare_folder(args.out)
    results = run_demo(args.out, Reasoner(rulebook(args)), progress=say, inputs=input_files(args))
    say(summary(results, args.out))
    return 0 if all(r.passed for r in results) else EXIT_CASE_FAILED
