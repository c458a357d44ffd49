"""The ``tellwave`` command: argument parsing and composition of the stages, nothing else."""

from __future__ import annotations

import argparse
import json
import sys

from . import analysis
from .errors import TellwaveError, UsageError
from .kinematics import forcing_frequencies
from .machine import load_machine
from .readings import combine_readings, load_reading
from .units import STANDARD_GRAVITY_M_S2


class _Parser(argparse.ArgumentParser):
    def error(self, message):  # one line and exit code 2, like every other user error
        raise UsageError(message)


def _frequencies(args) -> int:
    machine = load_machine(args.machine)
    table = forcing_frequencies(machine, args.rpm, args.shaft)
    if args.json:
        speeds = machine.speeds_at(args.rpm, args.shaft)
        print(json.dumps({"machine": machine.name, "source": machine.source,
                          "shaft_speeds_hz": speeds,
                          "forcing_frequencies": [f.as_dict() for f in table]}, indent=2))
        return 0
    speeds = machine.speeds_at(args.rpm, args.shaft)
    print(f"{machine.name}" + (f"  ({machine.plant})" if machine.plant else ""))
    print("shafts: " + ", ".join(f"{s} {hz * 60:.1f} rpm" for s, hz in speeds.items()))
    print()
    print(f"{'frequency Hz':>13}  {'order':>8}  {'name':<15} {'component':<16} {'shaft':<12} family")
    for f in table:
        print(f"{f.frequency_hz:13.3f}  {f.order:8.4f}  {f.name:<15} {f.component:<16} {f.shaft:<12} {f.family}")
    return 0


def _reading_options(args) -> dict:
    return dict(sample_rate_hz=args.sample_rate, unit=args.unit, scale=args.scale,
                point=args.point, direction=args.direction, speed_rpm=args.rpm)


def _reading(args) -> int:
    reading = load_reading(args.reading, **_reading_options(args))
    print(f"{reading.source}: {len(reading.channels)} channel(s), {reading.fs_hz:g} Hz, "
          f"{reading.n_samples} samples ({reading.duration_s:.3f} s)"
          + (f", speed {reading.speed_rpm:g} rpm" if reading.speed_rpm else ""))
    for ch in reading.channels:
        where = " ".join(filter(None, [ch.point, ch.direction]))
        print(f"\n  {ch.name} ({ch.quantity}, recorded in {ch.unit}){'  at ' + where if where else ''}")
        issues = reading.issues_for(ch.name)
        for q in issues:
            print(f"    quality: {q.kind}: {q.message}")
        if any(q.blocking for q in issues):
            continue
        lv = analysis.overall_levels(ch.samples, reading.fs_hz, ch.quantity, reading.speed_rpm)
        lo, hi = lv.velocity_band_hz
        print(f"    velocity {lv.velocity_rms_mm_s:.3f} mm/s RMS ({lo:g}-{hi:g} Hz"
              + (", band cut by Fmax" if lv.band_truncated else "") + ")")
        if lv.acceleration_rms_g is not None:
            print(f"    acceleration {lv.acceleration_rms_g:.4f} g RMS, {lv.acceleration_peak_g:.4f} g peak")
        print(f"    crest factor {lv.crest_factor:.2f}, kurtosis {lv.kurtosis:.2f}, skewness {lv.skewness:.2f}")
        spec = analysis.amplitude_spectrum(ch.samples, reading.fs_hz, scaling="peak")
        peaks = analysis.find_peaks(spec, f_lo_hz=2 * spec.resolution_hz, min_snr=6.0, max_peaks=args.peaks)
        scale = STANDARD_GRAVITY_M_S2 if ch.quantity == "acceleration" else 1.0
        unit = "g" if ch.quantity == "acceleration" else ("m/s" if ch.quantity == "velocity" else "m")
        print(f"    largest spectral peaks (Hann, {spec.resolution_hz:.3f} Hz lines):")
        for p in sorted(peaks, key=lambda p: p.freq_hz):
            print(f"      {p.freq_hz:10.3f} Hz  {p.amplitude / scale:.4g} {unit} peak  (SNR {p.snr:.0f})")
    return 0


def _load_readings(args):
    options = _reading_options(args)
    if args.channels:
        options["channels"] = [c.strip() for c in args.channels.split(",") if c.strip()]
    return combine_readings([load_reading(path, **options) for path in args.readings])


def _evidence(args) -> int:
    from .evidence import extract_evidence

    machine = load_machine(args.machine)
    facts = extract_evidence(_load_readings(args), machine)
    if args.json:
        print(json.dumps(facts, indent=2))
        return 0
    for fact in facts:
        fields = ", ".join(f"{k}={_short(v)}" for k, v in fact.items() if k not in ("kind", "id"))
        print(f"{fact['kind']:<22} {fields}")
    return 0


def _short(value):
    return f"{value:.4g}" if isinstance(value, float) else value


def _synth(args) -> int:
    from .synth import simulate, write_simulation

    machine = load_machine(args.machine)
    points = [p.strip() for p in args.points.split(",")] if args.points else None
    sim = simulate(machine, args.fault, args.component, args.stage, args.rpm, args.sample_rate,
                   args.duration, args.seed, points)
    for path in write_simulation(sim, args.output):
        print(f"wrote {path}")
    return 0


WITHHELD_EXIT = 7   # the reading cannot support a conclusion


def _diagnose(args) -> int:
    from .pipeline import diagnose, document_of
    from .reasoning import Reasoner
    from .report import render, write_atomically

    machine = load_machine(args.machine)
    reasoner = Reasoner(_rulebook(args))
    reading = _load_readings(args)
    fmt = args.format
    d = diagnose(reading, machine, reasoner, plots=fmt == "html")
    text = render(document_of(d), fmt)
    output = args.output
    if output is None and fmt in ("html", "md"):
        from pathlib import Path
        output = Path(args.readings[0]).with_suffix("").name + f".report.{fmt}"
    if output is None:
        sys.stdout.write(text)
    else:
        print(f"wrote {write_atomically(output, text)}")
    return WITHHELD_EXIT if d.reasoning.withheld else 0


def _demo(args) -> int:
    from .demo import run_demo
    from .reasoning import Reasoner

    results = run_demo(args.out, Reasoner(_rulebook(args)))
    missed = sum(not r.passed for r in results)
    print(f"{len(results) - missed} of {len(results)} demo cases diagnosed as expected; "
          f"reports in {args.out}/ (open {args.out}/index.html)")
    return 1 if missed else 0


def _rulebook(args):
    from .reasoning import load_rulebook

    return load_rulebook(*(args.site or []))


def _rulebook_check(args) -> int:
    from .reasoning.explain import summary

    rulebook = _rulebook(args)
    for line in summary(rulebook):
        print(line)
    print("rulebooks are valid")
    return 0


def _rulebook_explain(args) -> int:
    from .reasoning.explain import explain

    rulebook = _rulebook(args)
    try:
        rule = rulebook.rule(args.rule_id)
    except KeyError:
        if args.rule_id in rulebook.disabled:
            reason, path = rulebook.disabled[args.rule_id]
            raise UsageError(f"rule {args.rule_id} is switched off by {path}: {reason}") from None
        near = [r.id for r in rulebook.rules if args.rule_id in r.id][:5]
        hint = f"; did you mean {', '.join(near)}?" if near else ""
        raise UsageError(f"no rule has id {args.rule_id!r}{hint}") from None
    for line in explain(rule, rulebook):
        print(line)
    return 0


def _rulebook_test(args) -> int:
    from .casebook import case_files, load_case, run_case
    from .reasoning import Reasoner

    reasoner = Reasoner(_rulebook(args))
    files = case_files(args.cases)
    if not files:
        raise UsageError(f"{args.cases}: no *.case.yaml files")
    failed = 0
    for path in files:
        result = run_case(load_case(path), reasoner)
        failed += not result.passed
        expected = result.case.expect
        want = ("withheld" if expected.get("withheld") else "nothing confident" if expected.get("nothing")
                else f"{expected['fault']}" + (f" on {expected['component']}" if "component" in expected else ""))
        mark = "pass" if result.passed else "FAIL"
        print(f"{mark}  {path}: {result.case.name}\n      expected {want}; got {result.got}")
    print(f"{len(files) - failed} of {len(files)} cases pass")
    return 1 if failed else 0


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(prog="tellwave", description="A second opinion on rotating-machinery vibration readings.")
    sub = parser.add_subparsers(dest="command", required=True, parser_class=_Parser)

    p = sub.add_parser("frequencies", help="print the forcing frequencies of a machine")
    p.add_argument("machine", help="machine YAML file")
    p.add_argument("--rpm", type=float, help="running speed of the driving shaft (or of --shaft)")
    p.add_argument("--shaft", help="the shaft --rpm refers to (default: the driving shaft)")
    p.add_argument("--json", action="store_true", help="print JSON instead of a table")
    p.set_defaults(run=_frequencies)

    p = sub.add_parser("reading", help="summarise a reading file: channels, quality, levels, peaks")
    p.add_argument("reading", help="WAV, CSV, NPY, NPZ or UFF file")
    _add_reading_options(p)
    p.add_argument("--peaks", type=int, default=10, help="how many spectral peaks to list")
    p.set_defaults(run=_reading)

    p = sub.add_parser("evidence", help="print the evidence facts of one or more readings of a machine")
    p.add_argument("readings", nargs="+", help="reading files taken together (one per point, or multi-channel)")
    p.add_argument("--machine", required=True, help="machine YAML file")
    _add_reading_options(p)
    p.add_argument("--channels", help="comma-separated channel names (or name endings) to keep")
    p.add_argument("--json", action="store_true", help="print JSON")
    p.set_defaults(run=_evidence)

    from .synth import FAULTS
    p = sub.add_parser("synth", help="simulate a reading of a machine with a known fault")
    p.add_argument("machine", help="machine YAML file")
    p.add_argument("--fault", default="healthy", choices=list(FAULTS))
    p.add_argument("--component", help="faulty shaft, bearing, gear mesh, belt, rotor or motor id")
    p.add_argument("--stage", type=int, default=2, choices=[1, 2, 3, 4], help="damage stage, 1 incipient to 4 severe")
    p.add_argument("--rpm", type=float, help="speed of the driving shaft (default: nominal)")
    p.add_argument("--sample-rate", type=float, default=25600.0, help="Hz")
    p.add_argument("--duration", type=float, default=4.0, help="seconds")
    p.add_argument("--seed", type=int, default=0)
    p.add_argument("--points", help="comma-separated measurement points (default: all)")
    p.add_argument("-o", "--output", required=True, help="reading file to write (.wav, .npz or .csv)")
    p.set_defaults(run=_synth)

    p = sub.add_parser("diagnose", help="diagnose readings of a machine and report with advice")
    p.add_argument("readings", nargs="+", help="reading files taken together (one per point, or multi-channel)")
    p.add_argument("--machine", required=True, help="machine YAML file")
    p.add_argument("--site", action="append", metavar="FOLDER", help="site rulebook folder laid over the shipped ones")
    p.add_argument("--format", choices=["text", "md", "html", "json"], default="text")
    p.add_argument("-o", "--output", help="file to write (default: the terminal for text and JSON, "
                                          "READING.report.html or .md for HTML and Markdown)")
    _add_reading_options(p)
    p.add_argument("--channels", help="comma-separated channel names (or name endings) to keep")
    p.set_defaults(run=_diagnose)

    p = sub.add_parser("demo", help="diagnose the demo plant and write HTML reports")
    p.add_argument("--out", default="tellwave-demo", help="folder for readings and reports (default: tellwave-demo)")
    p.add_argument("--site", action="append", metavar="FOLDER", help="site rulebook folder laid over the shipped ones")
    p.set_defaults(run=_demo)

    p = sub.add_parser("rulebook", help="check, test and explain rulebooks")
    rb = p.add_subparsers(dest="action", required=True, parser_class=_Parser)
    for name, helptext, run in (("check", "validate the rulebooks and summarise rules per fault", _rulebook_check),
                                ("test", "run every case in a folder and report which pass", _rulebook_test),
                                ("explain", "print one rule in plain words with its source", _rulebook_explain)):
        q = rb.add_parser(name, help=helptext)
        if name == "test":
            q.add_argument("cases", help="folder of *.case.yaml files")
        if name == "explain":
            q.add_argument("rule_id")
        q.add_argument("--site", action="append", metavar="FOLDER",
                       help="site rulebook folder or file laid over the shipped ones (repeatable)")
        q.set_defaults(run=run)
    return parser


def _add_reading_options(p) -> None:
    p.add_argument("--sample-rate", type=float, help="sample rate in Hz, if the file does not state it")
    p.add_argument("--unit", help="engineering unit of the samples (g, m/s^2, mm/s, in/s, um, mils)")
    p.add_argument("--scale", type=float, help="engineering units at digital full scale (WAV)")
    p.add_argument("--point", help="measurement point id")
    p.add_argument("--direction", choices=["horizontal", "vertical", "axial"])
    p.add_argument("--rpm", type=float, help="measured running speed")


def main(argv=None) -> int:
    try:
        args = build_parser().parse_args(argv)
        return args.run(args)
    except TellwaveError as exc:
        print(f"tellwave: error: {exc}", file=sys.stderr)
        return exc.exit_code
    except BrokenPipeError:
        return 0


if __name__ == "__main__":
    sys.exit(main())
