"""``tellwave evidence``: the evidence facts of one or more readings of a machine."""

from __future__ import annotations

from ._common import add_reading_options, add_readings_argument, load_readings, say


def register(sub) -> None:
    """Add ``tellwave evidence`` and its options."""
    p = sub.add_parser("evidence", help="print the evidence facts of one or more readings of a machine")
    add_readings_argument(p, nargs="+")
    p.add_argument("--machine", required=True, help="machine YAML file")
    add_reading_options(p)
    p.add_argument("--channels", help="comma-separated channel names, point ids or name endings to keep "
                                      "(default: every channel)")
    p.add_argument("--json", action="store_true", help="print JSON")
    p.set_defaults(run=run)


def run(args) -> int:
    """Print the evidence facts of the readings; the exit code."""
    from ..common.jsonout import dumps
    from ..evidence import extract_evidence
    from ..machine import load_machine

    machine = load_machine(args.machine)
    facts = extract_evidence(load_readings(args), machine)
    if args.json:
        print(dumps(facts))
        return 0
    for fact in facts:
        fields = ", ".join(f"{k}={_short(v)}" for k, v in fact.items() if k not in ("kind", "id"))
        say(f"{fact['kind']:<22} {fields}")
    return 0


def _short(value):
    return f"{value:.4g}" if isinstance(value, float) else value
