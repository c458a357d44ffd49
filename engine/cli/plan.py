"""``tellwave plan``: the settings each point needs, and what given settings cannot show."""

from __future__ import annotations

import sys
from pathlib import Path

from ._common import RPM, add_site_option, number, output_target, rulebook, shown_units, whole


def register(sub) -> None:
    """Add ``tellwave plan`` and its options."""
    p = sub.add_parser("plan", help="propose acquisition settings for a machine, or check given ones")
    p.add_argument("machine", help="machine YAML file")
    p.add_argument("--point", action="append", metavar="P",
                   help="plan only this measurement point (repeatable; default: every point)")
    p.add_argument("--rpm", type=RPM, help="running speed of the driving shaft (default: nominal)")
    given = p.add_argument_group("settings to check (or --reading)")
    given.add_argument("--fmax", type=number("Fmax in Hz"), metavar="HZ", help="Fmax in Hz")
    given.add_argument("--lines", type=whole("the number of lines", 1), metavar="N", help="number of lines")
    given.add_argument("--sample-rate", type=number("the sample rate in Hz"), metavar="HZ",
                       help="sample rate in Hz (default 2.56 x Fmax)")
    given.add_argument("--duration", type=number("the duration in s"), metavar="S",
                       help="waveform length in s (default lines / Fmax)")
    given.add_argument("--reading", metavar="FILE", help="take the settings (and speed) of a reading file")
    p.add_argument("--policy", metavar="FILE", help="acquisition policy YAML (default: the shipped one)")
    add_site_option(p)
    p.add_argument("--format", choices=["text", "md", "html", "json"], default="text",
                   help="plan format (default text)")
    p.add_argument("-o", "--output", help="file to write (default: the terminal for text and JSON, "
                                          "MACHINE.plan.html or .md for HTML and Markdown)")
    p.add_argument("--no-proof", action="store_true", help="skip the proof by simulation")
    p.add_argument("--frequency-unit", choices=["hz", "cpm", "orders"], type=str.lower,
                   help="word the settings and their reasons in Hz, cycles per minute, or orders of the shaft "
                        "of each point (the sample rate stays Hz) (default hz; over the --site units: section)")
    from ._common import add_max_samples_option

    add_max_samples_option(p)
    p.set_defaults(run=run)


def _given(args, policy):
    from ..common.errors import UsageError
    from ..planner import given_settings, reading_settings

    explicit = [args.fmax, args.lines, args.sample_rate, args.duration]
    if args.reading:
        if any(v is not None for v in explicit):
            raise UsageError("give either --reading or settings (--fmax, --lines, --sample-rate, --duration)")
        from ..readings import load_reading

        reading = load_reading(args.reading, max_samples=args.max_samples)
        return reading_settings(policy, reading.fs_hz, reading.n_samples, Path(args.reading).name), reading.speed_rpm
    if all(v is None for v in explicit):
        return None, None
    return given_settings(policy, args.fmax, args.lines, args.sample_rate, args.duration,
                          max_samples=args.max_samples), None


def run(args) -> int:
    """Plan the acquisition of a machine, or check given settings; the exit code."""
    from ..common.escape import one_line
    from ..machine import load_machine
    from ..planner import build_plan, load_policy, render_plan
    from ..report import write_atomically

    fmt = args.format
    output = args.output
    if output is None and fmt in ("html", "md"):
        output = Path(args.machine).with_suffix("").name + f".plan.{fmt}"
    inputs = output_target(args, output) if output is not None else None    # before the work
    machine = load_machine(args.machine)
    policy = load_policy(args.policy)
    rules = rulebook(args) if args.site else None      # the diagnosis's rulebooks: the proof reasons with them
    for point in args.point or []:
        machine.point(point)
    given, reading_rpm = _given(args, policy)
    rpm = args.rpm if args.rpm is not None else reading_rpm
    if rpm is not None:
        machine.speeds_at(rpm)
    units = shown_units(args, rules.units if rules is not None else None)
    doc = build_plan(machine, policy, points=args.point, given=given, speed_rpm=rpm,
                     with_proof=not args.no_proof, with_figures=fmt == "html", rulebook=rules, units=units)
    text = render_plan(doc, fmt)
    if output is None:
        sys.stdout.write(text)
    else:
        print(f"wrote {one_line(write_atomically(output, text, inputs))}")
    return 0
