"""``tellwave frequencies``: the forcing frequencies of a drive train."""

from __future__ import annotations

from ..common.errors import UsageError
from ._common import RPM, add_site_option, say


def register(sub) -> None:
    """Add ``tellwave frequencies`` and its options."""
    p = sub.add_parser("frequencies", help="print the forcing frequencies of a machine")
    p.add_argument("machine", help="machine YAML file")
    p.add_argument("--rpm", type=RPM, help="running speed of the driving shaft (or of --shaft)")
    p.add_argument("--shaft", help="the shaft --rpm refers to (default: the driving shaft)")
    p.add_argument("--json", action="store_true", help="print JSON instead of a table")
    p.add_argument("--frequency-unit", choices=["hz", "cpm", "orders"], type=str.lower,
                   help="show the frequency column in Hz, cycles per minute, or orders of the driving shaft "
                        "(of --shaft when given) (default hz; over the --site units: section)")
    add_site_option(p)
    p.set_defaults(run=run)


def run(args) -> int:
    """Print the forcing frequencies of a machine; the exit code."""
    from ..common.jsonout import dumps
    from ..machine import load_machine
    from ..machine.kinematics import forcing_list, rates_at, why_no_pole_pass
    from ._common import rulebook, shown_units

    machine = load_machine(args.machine)
    if args.shaft is not None and args.shaft not in machine.shaft_speeds_hz:
        raise UsageError(f"--shaft {args.shaft!r}: {machine.name} has no such shaft; its shafts are "
                         f"{', '.join(machine.shaft_speeds_hz)}")
    speeds = machine.speeds_at(args.rpm, args.shaft)
    rates = rates_at(machine, speeds)
    table = forcing_list(rates)
    notes = [note for note in map(why_no_pole_pass, rates.motors) if note is not None]
    units = shown_units(args, rulebook(args).units if args.site else None)
    reference = args.shaft or machine.driver_shaft       # orders of the shaft --rpm states

    def shown(hz: float) -> float:     # Hz, CPM or orders of the reference shaft (engine/common/units.py)
        value = units.frequency_value(hz, speeds[reference])
        return hz if value is None else value
    if args.json:
        rows = [f.as_dict() for f in table]
        doc: dict = {"machine": machine.name, "source": machine.source, "shaft_speeds_hz": speeds,
                     "forcing_frequencies": rows, "notes": notes}
        if units.frequency != "hz":     # the _hz fields keep Hz; each frequency beside them in the chosen unit
            doc["units"] = {"frequency": units.frequency, "frequency_label": units.frequency_label(),
                            "orders_of": reference if units.frequency == "orders" else None}
            for row in rows:
                row["frequency_shown"] = shown(row["frequency_hz"])
        print(dumps(doc))
        return 0
    say(f"{machine.name}" + (f"  ({machine.plant})" if machine.plant else ""))
    say("shafts: " + ", ".join(f"{s} {hz * 60:.1f} rpm" for s, hz in speeds.items()))
    say()
    head, width = {"hz": ("frequency Hz", ".3f"), "cpm": ("frequency CPM", ".1f"),
                   "orders": (f"orders of {reference}", ".4f")}[units.frequency]
    size = max(13, len(head))
    say(f"{head:>{size}}  {'order':>8}  {'name':<15} {'component':<16} {'shaft':<12} family")
    for f in table:
        say(f"{shown(f.frequency_hz):{size}{width}}  {f.order:8.4f}  {f.name:<15} {f.component:<16} {f.shaft:<12} "
            f"{f.family}")
    if units.frequency == "orders":
        say(f"(order: of each line's own shaft; the first column: of {reference} at "
            f"{speeds[reference] * 60:.1f} rpm)")
    if notes:
        say()
    for note in notes:
        say(f"note: {note}")
    return 0
