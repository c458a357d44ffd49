"""``tellwave frequencies``: the forcing frequencies of a drive train."""

from __future__ import annotations

from ..common.errors import UsageError
from ._common import RPM, say


def register(sub) -> None:
    """Add ``tellwave frequencies`` and its options."""
    p = sub.add_parser("frequencies", help="print the forcing frequencies of a machine")
    p.add_argument("machine", help="machine YAML file")
    p.add_argument("--rpm", type=RPM, help="running speed of the driving shaft (or of --shaft)")
    p.add_argument("--shaft", help="the shaft --rpm refers to (default: the driving shaft)")
    p.add_argument("--json", action="store_true", help="print JSON instead of a table")
    p.set_defaults(run=run)


def run(args) -> int:
    """Print the forcing frequencies of a machine; the exit code."""
    from ..common.jsonout import dumps
    from ..machine import load_machine
    from ..machine.kinematics import forcing_list, rates_at, why_no_pole_pass

    machine = load_machine(args.machine)
    if args.shaft is not None and args.shaft not in machine.shaft_speeds_hz:
        raise UsageError(f"--shaft {args.shaft!r}: {machine.name} has no such shaft; its shafts are "
                         f"{', '.join(machine.shaft_speeds_hz)}")
    speeds = machine.speeds_at(args.rpm, args.shaft)
    rates = rates_at(machine, speeds)
    table = forcing_list(rates)
    notes = [note for note in map(why_no_pole_pass, rates.motors) if note is not None]
    if args.json:
        print(dumps({"machine": machine.name, "source": machine.source, "shaft_speeds_hz": speeds,
                     "forcing_frequencies": [f.as_dict() for f in table], "notes": notes}))
        return 0
    say(f"{machine.name}" + (f"  ({machine.plant})" if machine.plant else ""))
    say("shafts: " + ", ".join(f"{s} {hz * 60:.1f} rpm" for s, hz in speeds.items()))
    say()
    say(f"{'frequency Hz':>13}  {'order':>8}  {'name':<15} {'component':<16} {'shaft':<12} family")
    for f in table:
        say(f"{f.frequency_hz:13.3f}  {f.order:8.4f}  {f.name:<15} {f.component:<16} {f.shaft:<12} {f.family}")
    if notes:
        say()
    for note in notes:
        say(f"note: {note}")
    return 0
