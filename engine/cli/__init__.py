"""The ``tellwave`` command: argument parsing and composition of the stages, nothing else.

Each command lives in its own module with a ``register(subparsers)`` function;
modules import the engine only when their command runs, so ``tellwave --help``
stays quick.
"""

from __future__ import annotations

import sys

from ..errors import TellwaveError, UsageError
from . import demo, diagnose, evidence, frequencies, plan, reading, rulebook, synth
from ._common import Parser

COMMANDS = (frequencies, reading, evidence, synth, diagnose, plan, demo, rulebook)


def build_parser() -> Parser:
    from .. import __version__

    parser = Parser(prog="tellwave", description="A second opinion on rotating-machinery vibration readings.")
    parser.add_argument("--version", action="version", version=f"tellwave {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=Parser)
    for module in COMMANDS:
        module.register(sub)
    return parser


def main(argv=None) -> int:
    parser = build_parser()
    try:
        args = parser.parse_args(argv)
        if getattr(args, "run", None) is None:
            parser.print_help(sys.stderr)
            return 2
        return args.run(args)
    except TellwaveError as exc:
        print(f"tellwave: error: {exc}", file=sys.stderr)
        return exc.exit_code
    except BrokenPipeError:
        return 0


__all__ = ["build_parser", "main", "UsageError"]
