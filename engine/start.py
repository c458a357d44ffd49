"""The ``tellwave`` command's entry point: Ctrl-C is handled before anything is imported.

A Ctrl-C while the command line is parsed or the engine is imported (numpy, scipy and the
rest take a good part of a second) would otherwise end in a Python traceback and a death
by signal. Here the whole run, its imports included, sits inside one handler: an interrupt
at any moment prints ``tellwave: interrupted`` and exits 130 (``common.errors.interrupted``, the way
``engine.cli.main`` leaves too).
Only the interpreter's own start-up, before this module runs, is outside it.
"""

from __future__ import annotations

import _thread
import signal
import sys
import threading

from .common.errors import interrupted


def interrupt_again(unraisable) -> None:
    """``sys.unraisablehook``: a Ctrl-C that lands in a callback Python cannot raise from (a weak reference's
    callback in the import lock, while the engine is imported) would be printed as "Exception ignored" with a
    traceback and then lost; it is raised again instead, where the handler below catches it. Any other
    unraisable exception goes to Python's own hook."""
    if isinstance(unraisable.exc_type, type) and issubclass(unraisable.exc_type, KeyboardInterrupt):
        # not from here: a Ctrl-C raised inside the hook is itself unraisable. A moment later, from another
        # thread, it reaches the main thread once the hook has returned.
        timer = threading.Timer(0.01, _thread.interrupt_main)
        timer.daemon = True
        timer.start()
    else:
        sys.__unraisablehook__(unraisable)


def main(argv=None) -> int:
    """Run ``tellwave`` (``engine.cli.main``), its imports included, with Ctrl-C handled."""
    try:
        signal.signal(signal.SIGINT, signal.default_int_handler)   # Ctrl-C raises, wherever it comes
        sys.unraisablehook = interrupt_again
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
