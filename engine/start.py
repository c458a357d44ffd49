"""The ``tellwave`` command's entry point: Ctrl-C is handled before anything is imported.

A Ctrl-C while the command line is parsed or the engine is imported (numpy, scipy and the
rest take a good part of a second) would otherwise end in a Python traceback and a death
by signal. Here the whole run, its imports included, sits inside one handler: an interrupt
at any moment prints ``tellwave: interrupted`` and exits 130 (``common.errors.interrupted``, the way
``engine.cli.main`` leaves too).
Only the interpreter's own start-up, before this module runs, is outside it.
"""

from __future__ import annotations

import signal
import sys

from .common.errors import interrupted


def main(argv=None) -> int:
    """Run ``tellwave`` (``engine.cli.main``), its imports included, with Ctrl-C handled."""
    try:
        signal.signal(signal.SIGINT, signal.default_int_handler)   # Ctrl-C raises, wherever it comes
        from .cli import main as run

        return run(argv)
    except KeyboardInterrupt:
        return interrupted()


def script() -> None:
    """The console script: run and exit with the code (a Ctrl-C while exiting is ignored too)."""
    try:
        code = main()
    except KeyboardInterrupt:
        code = interrupted()
    sys.exit(code)


if __name__ == "__main__":
    script()
