"""``tellwave diagnose``: the whole job for readings of one machine, reported with advice."""

from __future__ import annotations

import sys
from pathlib import Path

from ._common import (
    add_alarms_option,
    add_reading_options,
    add_readings_argument,
    add_site_option,
    add_units_options,
    input_files,
    load_readings,
    output_target,
    rulebook,
    say,
    shown_units,
)


def register(sub) -> None:
    """Add ``tellwave diagnose`` and its options."""
    p = sub.add_parser("diagnose", help="diagnose readings of a machine and report with advice")
    add_readings_argument(p, nargs="+")
    p.add_argument("--machine", required=True, help="machine YAML file")
    add_site_option(p)
    add_alarms_option(p)
    p.add_argument("--format", choices=["text", "md", "html", "json"], default="text",
                   help="report format (default text)")
    p.add_argument("-o", "--output", help="file to write (default: the terminal for text and JSON, "
                                          "READING.report.html or .md for HTML and Markdown)")
    add_reading_options(p)
    add_units_options(p)
    p.add_argument("--channels", help="comma-separated channel names, point ids or name endings to keep "
                                      "(default: every channel)")
    p.add_argument("--plots", metavar="CHANNEL,...",
                   help="channels whose plots an HTML report shows, comma-separated, or all for every "
                        "channel's spectrum besides the usual figures (default: the channel of the top "
                        "hypothesis's evidence)")
    p.add_argument("--store", nargs="?", const="", metavar="PATH",
                   help="store the reading in the history and trend it against what is stored "
                        "(default store: history.sqlite in the user's data folder)")
    p.add_argument("--taken-at", metavar="TIME",
                   help="when the reading was taken, ISO 8601; wins over the file's or sidecar's timestamp "
                        "(default: that timestamp, else, for --store, the file's modification time)")
    p.set_defaults(run=run)


def run(args) -> int:
    """Diagnose the readings and report; the exit code (7 when the reading cannot support a conclusion)."""
    from ..common.errors import EXIT_WITHHELD
    from ..machine import load_machine
    from ..pipeline import diagnose, document_of
    from ..reasoning import Reasoner
    from ..report import render, write_atomically

    fmt = args.format
    output = args.output
    if output is None and fmt in ("html", "md"):
        output = Path(args.readings[0]).with_suffix("").name + f".report.{fmt}"
    inputs = input_files(args) if output is None else output_target(args, output)    # before the work
    taken = _taken_at(args)
    if args.store:
        from ._store import check_store_folder

        check_store_folder(args.store)
    from ..machine.alarms import check_alarm_machines, with_site_alarms

    machine = load_machine(args.machine)
    check_alarm_machines(args.alarms or (), [machine.name])   # each file names this machine (no misspelt name)
    machine = with_site_alarms(machine, args.alarms or ())
    rules = rulebook(args)
    reasoner = Reasoner(rules)
    units = shown_units(args, rules.units)
    reading = load_readings(args)
    plot_channels = _plot_channels(args, reading)
    if args.store is not None:
        from ..history.record import content_hash
        from ..pipeline.history import diagnose_and_store
        how = {"unit": args.unit, "speed_rpm": args.rpm, "sample_rate_hz": args.sample_rate, "scale": args.scale,
               "point": args.point, "direction": args.direction, "channels": args.channels,
               "alarms": content_hash(args.alarms) if args.alarms else None}   # other limits: another diagnosis
        d, doc, stored = diagnose_and_store(reading, machine, reasoner, files=args.readings, store_path=args.store,
                                            how=how, site=args.site, taken_at=args.taken_at, plots=fmt == "html",
                                            plot_channels=plot_channels, units=units)
        from ..common.escape import terminal

        origin = {"command line": "--taken-at", "file": "the file's timestamp",
                  "file modified": "the file's modification time"}.get(stored["time_from"], stored["time_from"])
        moved = f"; moved from {stored['moved_from']}, where it was stored before" if stored["moved_from"] else ""
        print(terminal(f"tellwave: stored reading {stored['id']} in {stored['store']}, taken {stored['taken_at']} "
                       f"(from {origin}{moved})"), file=sys.stderr)
    else:
        d = diagnose(reading, machine, reasoner, plots=fmt == "html", taken=taken)
        doc = document_of(d, plot_channels=plot_channels, units=units)
    text = render(doc, fmt)
    if output is None:
        sys.stdout.write(text)
    else:
        say(f"wrote {write_atomically(output, text, inputs)}")
    return EXIT_WITHHELD if d.reasoning.withheld else 0


def _plot_channels(args, reading):
    """``--plots`` checked against the reading's channels (a UsageError names an unknown one); it needs
    the HTML format, the only one with plots."""
    if args.plots is None:
        return None
    from ..common.errors import UsageError
    from ..report.plots import choose_channels

    if args.format != "html":
        raise UsageError(f"--plots draws plots in an HTML report: add --format html (not {args.format})")
    return choose_channels(args.plots, [c.name for c in reading.channels])


def _taken_at(args):
    """(ISO time, "command line") for --taken-at, checked: a time in the future is refused, as a finding's
    date is (a reading is stored at the time it was taken); None leaves the file's own time."""
    if args.taken_at is None:
        return None
    from datetime import UTC, datetime

    from ..common.errors import UsageError
    from ..history.times import iso, parse_time

    when = parse_time(args.taken_at, what="--taken-at")
    now = datetime.now(UTC) if when.tzinfo is not None else datetime.now()
    if when > now:
        raise UsageError(f"--taken-at {iso(when)} is in the future (now {iso(now.replace(microsecond=0))}): "
                         "give the time the reading was taken")
    return iso(when), "command line"
