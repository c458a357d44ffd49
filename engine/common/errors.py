"""Every error and warning that tellwave raises on purpose, and the exit codes.

Each error carries an ``exit_code`` and knows the file it is about, so that the
command line can print one line (``tellwave: error: <file>:<line>: <problem>``)
and exit without a traceback. Anything that is not a ``TellwaveError`` is a bug.

Exit codes: 0 done; 1 a case failed (``rulebook test``, ``demo``); 2 bad command
line or case file; 3 bad machine file; 4 bad reading file, or a reading that does
not fit its machine file (a channel at a point the machine lacks); 5 bad rulebook or
advice data; 6 a rule failed while running; 7 diagnosed, but the reading cannot
support a conclusion (``EXIT_WITHHELD``: not an error, a result); 8 the history
store cannot be used; 9 a route finished, but some of its readings failed; 130
interrupted (Ctrl-C, ``EXIT_INTERRUPTED``: ``interrupted`` says so).
"""

from __future__ import annotations

import signal
import sys

EXIT_INTERRUPTED = 130   # 128 + SIGINT, as shells report it


def interrupted() -> int:
    """Ctrl-C's way out, for the entry point and the command line alike: say so once and leave quietly
    (a second Ctrl-C while leaving is ignored)."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    try:
        print("tellwave: interrupted", file=sys.stderr)
    except (OSError, ValueError):
        pass
    return EXIT_INTERRUPTED


class TellwaveError(Exception):
    """Root of the errors a user can cause with their input."""

    exit_code = 1

    def __init__(self, problem: str, *, path: str | None = None, line: int | None = None):
        super().__init__(problem)
        self.problem = problem
        self.path = path
        self.line = line

    def __str__(self) -> str:
        where = ""
        if self.path is not None:
            where = str(self.path)
            if self.line is not None:
                where += f":{self.line}"
            where += ": "
        return where + self.problem


class UsageError(TellwaveError):
    """The command line itself is wrong (a missing option, a bad value)."""

    exit_code = 2


class OutputError(UsageError):
    """An output file or folder cannot be written where the command line says (exit code 2):
    an empty name, a folder, a link or device, one of the run's inputs, no permission."""


class MachineError(TellwaveError):
    """A machine description is missing, malformed or inconsistent."""

    exit_code = 3


class ReadingError(TellwaveError):
    """A reading file cannot be read, holds nothing that can be analysed, or does not fit the machine
    file it is diagnosed with (a channel at a point the machine lacks)."""

    exit_code = 4


class RulebookError(TellwaveError):
    """A rulebook is malformed or refers to evidence that does not exist."""

    exit_code = 5

    def __init__(self, problem: str, *, path: str | None = None, line: int | None = None,
                 rule_id: str | None = None):
        if rule_id is not None:
            problem = f"rule {rule_id}: {problem}"
        super().__init__(problem, path=path, line=line)
        self.rule_id = rule_id


class ReasoningError(TellwaveError):
    """A rule failed while it ran: a bug in the engine or a rule the checks missed."""

    exit_code = 6


class CaseError(UsageError):
    """A case file is malformed or names files that do not exist."""


class RouteError(UsageError):
    """A route or plant file is malformed or names files that do not exist."""


class StoreError(TellwaveError):
    """The history store cannot be opened (missing for a command that only reads it, locked too long), is
    damaged or another program's database, or was written by a newer tellwave."""

    exit_code = 8
    busy = False      # True when another writer held the lock too long: opening may be tried again


EXIT_CASE_FAILED = 1
EXIT_WITHHELD = 7   # diagnosed, but the reading cannot support a conclusion
EXIT_ROUTE_FAILURES = 9   # a route ran to its end, but some readings could not be diagnosed


class DataQualityWarning(UserWarning):
    """A reading was analysed although a quality gate flagged it."""
