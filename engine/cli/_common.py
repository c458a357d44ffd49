"""What several commands share: the parser class, checked option values, reading options,
rulebook loading, terminal-safe printing and the files a run reads (never to be written over)."""

from __future__ import annotations

import argparse
import math
from pathlib import Path
from typing import TYPE_CHECKING

from ..common.errors import UsageError

if TYPE_CHECKING:
    from ..common.outfile import Inputs


class Parser(argparse.ArgumentParser):
    """An argument parser whose errors are UsageErrors: one line and exit code 2, like every other user error."""

    def error(self, message):
        """Raise the parser's complaint as a UsageError instead of printing usage and exiting."""
        raise UsageError(message)

    def parse_known_args(self, args=None, namespace=None):  # type: ignore[override]
        """Parse as argparse does, but name an unknown option before any other complaint: argparse
        checks the required arguments first, so ``tellwave frequencies --bogus`` would say that a
        machine is required. Every command's parser is a ``Parser``, so this one place serves all."""
        try:
            return super().parse_known_args(args, namespace)
        except UsageError as exc:
            # the innermost parser (a command's) knows its options: the parsers above it pass its word on
            if getattr(exc, "options_examined", False):
                raise
            exc.options_examined = True     # type: ignore[attr-defined]
            unknown = self.unknown_option(args)
            if unknown is None:
                raise
            named = UsageError(self.unknown_option_message(unknown))
            named.options_examined = True   # type: ignore[attr-defined]
            raise named from None

    def parse_args(self, args=None, namespace=None):  # type: ignore[override]
        """Parse the whole command line; anything left over that looks like an option is named as
        an unknown option, with where to find the known ones."""
        parsed, extras = self.parse_known_args(args, namespace)
        if extras:
            option = next((a for a in extras if _looks_like_option(a)), None)
            if option is not None:
                raise UsageError(self.unknown_option_message(option, getattr(parsed, "command", None)))
            self.error(f"unrecognized arguments: {' '.join(extras)}")
        return parsed

    def unknown_option(self, args) -> str | None:
        """The first argument of ``args`` that looks like an option this parser does not know
        (a unique prefix of a known long option counts as known, as argparse allows it)."""
        known = set(self._option_string_actions)
        longs = [k for k in known if k.startswith("--")]
        for arg in list(args or []):
            if arg == "--":
                return None
            if not _looks_like_option(arg):
                continue
            name = arg.split("=", 1)[0]
            if name in known:
                continue
            if self.allow_abbrev and name.startswith("--") and any(k.startswith(name) for k in longs):
                continue
            return name
        return None

    def unknown_option_message(self, option: str, command: str | None = None) -> str:
        """One line: the unknown option and the command whose help lists the known ones."""
        prog = self.prog if command is None else f"{self.prog} {command}"
        return f"unknown option {option.split('=', 1)[0]} ('{prog} --help' lists the options)"


def _looks_like_option(arg: str) -> bool:
    """Whether a command-line word is meant as an option: it starts with '-' and is not a
    negative number or a lone '-' (standard input, as some tools write it)."""
    if not arg.startswith("-") or arg in ("-", "--"):
        return False
    try:
        float(arg)
    except ValueError:
        return True
    return False


DIRECTIONS = ("horizontal", "vertical", "axial")     # engine/common/schemas/machine.schema.json


def units_help() -> str:
    """Every unit the readers accept, from engine/common/units.py's one table."""
    from ..common.units import unit_aliases, units_by_quantity

    groups = "; ".join(f"{', '.join(names)} ({quantity})" for quantity, names in units_by_quantity().items())
    return f"{groups}; also written {', '.join(unit_aliases())}"


def reader_suffixes() -> str:
    """Every reading file suffix a reader exists for, from engine/readings' READERS (and the gzip ones)."""
    from ..readings.formats import reading_suffixes

    return ", ".join(reading_suffixes())


def add_readings_argument(p, nargs=None) -> None:
    """The reading file(s) of a command, with the suffixes the readers take."""
    if nargs:
        p.add_argument("readings", nargs=nargs, metavar="READING",
                       help=f"reading files taken together (one per point, or multi-channel), "
                            f"read by their suffix: {reader_suffixes()}")
    else:
        p.add_argument("reading", metavar="READING", help=f"reading file, read by its suffix: {reader_suffixes()}")

# Limits of option values, checked when the command line is parsed (the readers check
# the same quantities again when they come from files).
MAX_SPEED_RPM = 600_000.0        # engine.machine.MAX_SPEED_RPM
MIN_SPEED_RPM = 0.1              # engine.machine.MIN_SPEED_RPM


def number(what: str, low: float = 0.0, high: float = math.inf, *, low_inclusive: bool = False):
    """An argparse type: a finite number in (low, high] (or [low, high])."""
    def parse(text: str) -> float:
        try:
            value = float(text)
        except ValueError:
            raise argparse.ArgumentTypeError(f"{what} must be a number, got {text!r}") from None
        above = value >= low if low_inclusive else value > low
        if not (math.isfinite(value) and above and value <= high):
            bound = f"at least {low:g}" if low_inclusive else f"above {low:g}"
            top = "" if math.isinf(high) else f" and at most {high:g}"
            raise argparse.ArgumentTypeError(f"{what} must be {bound}{top}, got {text!r}")
        return value
    return parse


def whole(what: str, low: int = 0, high: int = 2 ** 31 - 1):
    """An argparse type: an integer in [low, high]."""
    def parse(text: str) -> int:
        try:
            value = int(text)
        except ValueError:
            raise argparse.ArgumentTypeError(f"{what} must be a whole number, got {text!r}") from None
        if not low <= value <= high:
            raise argparse.ArgumentTypeError(f"{what} must be between {low} and {high}, got {text!r}")
        return value
    return parse


RPM = number("the speed in rpm", MIN_SPEED_RPM, MAX_SPEED_RPM, low_inclusive=True)


FROM_FILE = "default: as the sidecar or the file states"


def add_reading_options(p) -> None:
    """Options that state what a reading's file and sidecar do not (they win over both)."""
    p.add_argument("--sample-rate", type=number("the sample rate in Hz"), metavar="HZ",
                   help=f"sample rate in Hz ({FROM_FILE})")
    p.add_argument("--unit", help=f"engineering unit of the samples: {units_help()} ({FROM_FILE})")
    p.add_argument("--scale", type=number("the scale"),
                   help=f"engineering units at digital full scale, for WAV files ({FROM_FILE})")
    p.add_argument("--point", help=f"measurement point id of the machine file ({FROM_FILE})")
    p.add_argument("--direction", choices=DIRECTIONS, metavar="DIRECTION",
                   help=f"sensor direction: {', '.join(DIRECTIONS)} ({FROM_FILE})")
    p.add_argument("--rpm", type=RPM, help=f"measured running speed of the driving shaft in rpm, the machine "
                   f"file's first shaft that states its speed; the others follow by their ratios ({FROM_FILE})")
    add_max_samples_option(p)


def add_max_samples_option(p) -> None:
    """``--max-samples``: the samples a reading's channel may hold (engine/readings/limits.py)."""
    from ..readings.limits import FULL_LENGTH_CHANNELS, MAX_SAMPLES_PER_CHANNEL

    p.add_argument("--max-samples", type=whole("--max-samples", 256, 1 << 31), metavar="N",
                   help=f"samples a channel may hold (default {MAX_SAMPLES_PER_CHANNEL}; over all channels "
                        f"{FULL_LENGTH_CHANNELS} x as many); memory grows with it")


def add_site_option(p) -> None:
    """Add ``--site``: site rulebooks laid over the shipped ones."""
    p.add_argument("--site", action="append", metavar="FOLDER",
                   help="site rulebook folder or file laid over the shipped ones (repeatable)")


def add_alarms_option(p) -> None:
    """Add ``--alarms``: site alarm files whose limits per point replace the machine file's."""
    p.add_argument("--alarms", action="append", metavar="FILE",
                   help="site alarm file: limits per point by machine name, over the machine file's (repeatable)")


def site_alarms(args, machines=None) -> dict:
    """The ``--alarms`` files loaded and checked (machine name -> alarms), before any work; with
    ``machines`` (the names of the run's machines) each file must name one of them, and no near miss."""
    from ..machine.alarms import check_alarm_machines, load_alarm_file

    out: dict = {}
    files = getattr(args, "alarms", None) or []
    for path in files:
        out.update(load_alarm_file(path))
    if machines is not None:
        check_alarm_machines(files, machines)
    return out


def route_machine_names(route) -> list[str]:
    """The names of the machines of ``route`` whose files load (one that does not fails its readings)."""
    from ..common.errors import TellwaveError
    from ..machine import load_machine

    names = []
    for file in sorted({t.machine_file for t in route.tasks if t.machine_file}):
        try:
            names.append(load_machine(file).name)
        except TellwaveError:
            pass
    return names


def reading_options(args) -> dict:
    """The reading options of the command line as ``load_reading``'s keywords."""
    return dict(sample_rate_hz=args.sample_rate, unit=args.unit, scale=args.scale,
                point=args.point, direction=args.direction, speed_rpm=args.rpm,
                max_samples=getattr(args, "max_samples", None))


def load_readings(args):
    """The reading files of ``args.readings`` taken together as one Reading."""
    from ..readings import combine_readings, load_reading

    options = reading_options(args)
    if getattr(args, "channels", None):
        options["channels"] = [c.strip() for c in args.channels.split(",") if c.strip()]
    return combine_readings([load_reading(path, **options) for path in args.readings])


def input_files(args, route=None) -> list[Path]:
    """Every file the command reads, never to be written over: readings with their sidecars (positional
    or ``--reading``), the machine, ``--policy``, site overlays, the history store with its journal files,
    the route or plant file and, given the loaded ``route``, every file it reads."""
    from ..common.outfile import sqlite_files
    from ..readings import sidecar_path

    files = []
    readings = list(getattr(args, "readings", None) or [])
    if getattr(args, "reading", None):
        readings.append(args.reading)
    for path in readings:
        files += [Path(path), sidecar_path(path)]
    for name in ("machine", "policy", "plant"):      # trend's and history's machine is a name, not a file
        if getattr(args, name, None) and (name != "machine" or Path(args.machine).is_file()):
            files.append(Path(getattr(args, name)))
    files += [Path(a) for a in getattr(args, "alarms", None) or []]
    for place in getattr(args, "site", None) or []:
        p = Path(place)
        files += sorted(p.glob("*.y*ml")) if p.is_dir() else [p]
    if getattr(args, "route", None) and not Path(args.route).is_dir():
        files.append(Path(args.route))
    if route is not None:
        from ..route import route_inputs

        files += route_inputs(route)
    if hasattr(args, "store"):      # the default store too: no output goes over a history
        from ..history.store import default_store_path

        files += sqlite_files(args.store or default_store_path())
    return files


def output_target(args, output, route=None) -> Inputs:
    """Check ``output`` against every input of the command before any work (``engine.common.outfile.check_target``);
    return the inputs, to be given again when the file is written."""
    from ..common.outfile import check_target, known_inputs

    inputs = known_inputs(input_files(args, route))
    check_target(output, inputs)
    return inputs


def say(text: str = "") -> None:
    """Print a line to the terminal with control characters from users' files shown as codes."""
    from ..common.escape import terminal

    print(terminal(text))


def add_units_options(p, site: bool = True) -> None:
    """Add ``--frequency-unit`` and ``--velocity-unit``: the units the output shows (over a site's ``units:``)."""
    from ..common.units import FREQUENCY_UNITS, VELOCITY_UNITS

    over = "; over the --site units: section" if site else ""
    p.add_argument("--frequency-unit", choices=list(FREQUENCY_UNITS), type=str.lower,
                   help=f"show frequencies in Hz, cycles per minute, or orders of the shaft under the sensor "
                        f"(default hz{over})")
    p.add_argument("--velocity-unit", choices=list(VELOCITY_UNITS), type=str.lower,
                   help="show velocities in mm/s or in/s, RMS or peak (peak = 1.414 x RMS, for single spectral "
                        f"lines; broadband levels stay RMS) (default mm/s-rms{over})")


def shown_units(args, base=None):
    """The units the output shows: ``base`` (a site's ``units:``, else Hz and mm/s RMS) with the
    command's ``--frequency-unit`` and ``--velocity-unit`` over it."""
    from ..common.units import shown_units as units

    return units(getattr(args, "frequency_unit", None), getattr(args, "velocity_unit", None), base=base)


def rulebook(args):
    """The shipped rulebooks with the ``--site`` overlays of ``args``."""
    import sys

    from ..common.escape import one_line
    from ..reasoning import load_rulebook

    book = load_rulebook(*(args.site or []))
    for note in book.notes:      # a learned weight left unapplied: said once per command, never silently
        print(f"tellwave: warning: {one_line(note)}", file=sys.stderr)
    return book
