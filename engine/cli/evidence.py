"""``tellwave evidence``: the evidence facts of one or more readings of a machine."""

from __future__ import annotations

from ._common import add_reading_options, add_readings_argument, add_units_options, load_readings, say, shown_units


def register(sub) -> None:
    """Add ``tellwave evidence`` and its options."""
    p = sub.add_parser("evidence", help="print the evidence facts of one or more readings of a machine")
    add_readings_argument(p, nargs="+")
    p.add_argument("--machine", required=True, help="machine YAML file")
    add_reading_options(p)
    p.add_argument("--channels", help="comma-separated channel names, point ids or name endings to keep "
                                      "(default: every channel)")
    add_units_options(p, site=False)
    p.add_argument("--json", action="store_true", help="print JSON (fields keep the units their names say)")
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
    units = shown_units(args)
    shafts_hz, reference = _shaft_speeds_hz(facts, machine)
    for fact in facts:
        fields = ", ".join(_field(fact, k, v, units, shafts_hz, reference) for k, v in fact.items()
                           if k not in ("kind", "id"))
        say(f"{fact['kind']:<22} {fields}")
    return 0


def _short(value):
    return f"{value:.4g}" if isinstance(value, float) else value


def _shaft_speeds_hz(facts, machine) -> tuple[dict[str, float], str]:
    """Every shaft's speed at the speed the analysis used (its speed check), for orders, and the shaft
    that speed is of (orders of a fact at no shaft are of it)."""
    check = next((f for f in facts if f["kind"] == "speed_check" and f.get("measured_rpm")), None)
    if check is None:
        return dict(machine.shaft_speeds_hz), machine.driver_shaft
    return machine.speeds_at(check["measured_rpm"], check["shaft"]), check["shaft"]


def _field(fact: dict, name: str, value, units, shafts_hz, reference: str) -> str:
    """``name=value``; a frequency or velocity in other units than Hz and mm/s RMS as ``name=value unit``,
    the unit taken off the name (``freq=1485 CPM``)."""
    from ..evidence.vocabulary import BROADBAND_VELOCITY_FIELDS, FACTS

    unit = FACTS.get(fact["kind"], {}).get(name)
    if units.default or unit is None or not isinstance(value, float):
        return f"{name}={_short(value)}"
    if unit.unit == "Hz" and name.endswith("_hz"):
        shaft = fact.get("location_shaft") or reference         # the shaft under the sensor
        return f"{name[:-3]}={units.frequency_text(value, shafts_hz.get(shaft))}"
    if unit.unit == "mm/s RMS" and name.endswith("_mm_s"):
        return f"{name[:-5]}={units.velocity_text(value, line=name not in BROADBAND_VELOCITY_FIELDS)}"
    return f"{name}={_short(value)}"
