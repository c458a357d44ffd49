"""The ``tellwave`` command: argument parsing and composition of the stages, nothing else.

Each command lives in its own module with a ``register(subparsers)`` function;
modules import the engine only when their command runs, so ``tellwave --help``
stays quick.

Whatever the input, the command ends one of three ways: its output and exit
code 0 (or 1, 7 as documented), one line ``tellwave: error: ...`` on stderr
with the error's exit code, or 130 after Ctrl-C. Numerical warnings on odd
data are not shown: the quality gates report odd data in the output itself.
"""

from __future__ import annotations

import sys
import warnings

from ..common.errors import TellwaveError, UsageError, interrupted
from . import (
    alarms,
    demo,
    demo_route,
    diagnose,
    evidence,
    findings,
    frequencies,
    history,
    learn,
    plan,
    reading,
    route,
    rulebook,
    synth,
    trend,
)
from ._common import Parser

COMMANDS = (frequencies, reading, evidence, synth, diagnose, plan, demo, rulebook, route, history, findings, learn,
            trend, demo_route, alarms)


class _Listed(Exception):
    """A command is listed by name and help; the rest of its registration is not wanted."""


class _Only:
    """The subparsers as one command's ``register`` sees them: the command ``wanted`` (every command
    when None) gets its arguments; any other is listed by name and help, and its registration stops
    there, before the help texts of its arguments ask the engine (units, reader suffixes, fault
    names), which would import numpy and the rest."""

    def __init__(self, sub, wanted: str | None) -> None:
        self.sub, self.wanted = sub, wanted

    def add_parser(self, name, **kwargs):
        parser = self.sub.add_parser(name, **kwargs)
        if self.wanted is None or name == self.wanted:
            return parser
        raise _Listed


def build_parser(command: str | None = None) -> Parser:
    """The parser of every command; with ``command``, only that command gets its arguments and the
    others are listed by name and help (what ``main`` builds: ``tellwave --help`` stays quick)."""
    from .. import __version__

    parser = Parser(prog="tellwave", description="A second opinion on rotating-machinery vibration readings.")
    parser.add_argument("--version", action="version", version=f"tellwave {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=Parser)
    for module in COMMANDS:
        try:
            module.register(_Only(sub, command))
        except _Listed:
            pass
    return parser


def _return_large_arrays_to_the_system() -> None:
    """Ask glibc to map every allocation above 128 KiB on its own, so that a freed spectrum goes back
    to the system at once instead of staying in the heap (glibc raises that threshold as a process
    frees large blocks, which makes the peak resident memory of one diagnosis grow by tens of MB)."""
    import ctypes
    import ctypes.util

    name = ctypes.util.find_library("c")
    if not name or "libc.so" not in name:
        return
    try:
        ctypes.CDLL(name).mallopt(-3, 128 * 1024)     # M_MMAP_THRESHOLD
    except (OSError, AttributeError):
        pass


def _tolerant_streams() -> None:
    """Print names that were not valid UTF-8 (or cannot be shown in the terminal's encoding)
    as escape codes instead of failing on them."""
    for stream in (sys.stdout, sys.stderr):
        reconfigure = getattr(stream, "reconfigure", None)
        if reconfigure is not None:
            try:
                reconfigure(errors="backslashreplace")
            except (ValueError, OSError):
                pass


def main(argv=None) -> int:
    """Run ``tellwave`` with ``argv``; the exit code. A user's error is one line on stderr with
    its class's exit code, never a traceback; Ctrl-C at any moment (the parser's imports included)
    prints ``tellwave: interrupted`` and gives 130."""
    try:
        return _main(argv)
    except KeyboardInterrupt:
        return interrupted()


def _main(argv) -> int:
    from ..common.escape import one_line

    _return_large_arrays_to_the_system()
    _tolerant_streams()
    args_given = sys.argv[1:] if argv is None else list(argv)
    command = next((a for a in args_given if not a.startswith("-")), "")   # "" lists every command
    parser = build_parser(command)
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)
            warnings.simplefilter("ignore", UserWarning)
            args = parser.parse_args(argv)
            if getattr(args, "run", None) is None:
                parser.print_help(sys.stderr)
                return 2
            return args.run(args)
    except TellwaveError as exc:
        print(f"tellwave: error: {one_line(exc)}", file=sys.stderr)
        return exc.exit_code
    except BrokenPipeError:
        return 0


__all__ = ["build_parser", "main", "UsageError"]
