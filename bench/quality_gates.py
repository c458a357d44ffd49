"""Data-quality gates on real recordings: faults injected into CWRU records, and false alarms.

Part 1 takes the drive-end channel of CWRU 130 (outer race) and 105 (inner
race) from ../shared/datasets, injects each fault a careless acquisition
makes (clipping at 30 % of the peak, a 0.05 Hz drift of 1 x the RMS, the
sample rate stated twice or half too high, mm/s stated for data in g, a gain
1000 times too high or too low), writes the result to a temporary file, reads
it back through the ordinary readers and diagnoses it. It prints, per run,
the quality issues found, whether the diagnosis was withheld, the top
hypothesis with its certainty, whether severity is known and the worst ISO
zone. A wrong unit or gain spoils levels, not patterns: those runs must give
the unscaled record's call with severity unknown and no zone, and no
confident call the unscaled record does not make (checked at the end; the
exit code is 1 when a run breaks it). Clipping, drift and a sample rate
stated at half its value still withhold.

Part 2 runs the reading gates over every single record of the shared
datasets as published, and every FEMTO snapshot, and counts the issues each
gate raises: on clean public data the clipping and plausibility gates
(velocity stated as g among them) should stay silent.

    python -m bench.quality_gates [--datasets PATH] [--no-scan]
"""

from __future__ import annotations

import argparse
import csv
import sys
import tempfile
import time
from collections import Counter
from pathlib import Path

import numpy as np
import yaml

from engine.common.errors import ReadingError
from engine.machine import load_machine
from engine.pipeline import diagnose
from engine.readings import load_reading
from engine.readings.model import Channel
from engine.readings.quality import check_channel
from engine.reasoning import CONFIDENT, Reasoner, load_rulebook

ROOT = Path(__file__).resolve().parent.parent
DATASETS = ROOT.parent / "shared" / "datasets"
MACHINE = ROOT / "tests/machines/cwru-motor.yaml"
RECORDS = ("cwru/12k_drive_end/130.mat", "cwru/12k_drive_end/105.mat")
CLIP_FRACTION = 0.3
DRIFT_HZ = 0.05


def drive_end(path: Path) -> tuple[np.ndarray, float, float]:
    """The DE channel of a CWRU record in g, its sample rate and the speed the file states."""
    from scipy.io import loadmat

    m = loadmat(path)
    de = next(k for k in m if k.endswith("DE_time"))
    rpm = next((float(np.ravel(m[k])[0]) for k in m if k.endswith("RPM")), 1797.0)
    return m[de].ravel().astype(float), 12000.0, rpm


INJECTIONS = {
    "as published": (lambda x, fs: x, {}),
    f"clipped at {CLIP_FRACTION:.0%} of the peak": (
        lambda x, fs: np.clip(x, -CLIP_FRACTION * np.abs(x).max(), CLIP_FRACTION * np.abs(x).max()), {}),
    f"drift {DRIFT_HZ} Hz, 1 x RMS": (
        lambda x, fs: x + np.sqrt(2) * x.std() * np.sin(2 * np.pi * DRIFT_HZ * np.arange(len(x)) / fs), {}),
    "sample rate stated x2": (lambda x, fs: x, {"rate": 2.0}),
    "sample rate stated x0.5": (lambda x, fs: x, {"rate": 0.5}),
    "mm/s stated for g": (lambda x, fs: x, {"unit": "mm/s"}),
    "gain x1000": (lambda x, fs: x * 1000.0, {}),
    "gain x0.001": (lambda x, fs: x * 0.001, {}),
}


SCALE_ONLY = ("mm/s stated for g", "gain x1000", "gain x0.001")


def run_injection(record: Path, name: str, reasoner, machine, folder: Path):
    """(line to print, the diagnosis or None when the file could not be read)."""
    x, fs, rpm = drive_end(record)
    change, options = INJECTIONS[name]
    path = folder / f"{record.stem}.npz"
    np.savez(path, DE=change(x, fs).astype(np.float64), sample_rate_hz=fs * options.get("rate", 1.0),
             unit=options.get("unit", "g"), speed_rpm=rpm)
    path.with_name(path.name + ".yaml").write_text(yaml.safe_dump(
        {"channels": [{"name": "DE", "point": "DE", "direction": "vertical"}]}))
    try:
        reading = load_reading(path)
    except ReadingError as exc:
        return f"reading error: {exc.problem}", None
    issues = ",".join(sorted({q.kind for q in reading.quality})) or "-"
    d = diagnose(reading, machine, reasoner)
    top = d.reasoning.top
    verdict = "withheld" if d.reasoning.withheld else (
        f"{top.fault} on {top.component} {100 * top.certainty:.0f} %"
        + (f" stage {top.stage}" if top.stage else "") if top else "nothing")
    confident = not d.reasoning.withheld and top is not None and top.certainty >= CONFIDENT
    severity = "severity unknown" if d.advice.scale is not None else "severity known"
    return (f"issues {issues:<34} {verdict}{'' if confident or d.reasoning.withheld else ' (not confident)'}"
            f"; {severity}; zone {d.advice.worst_zone or '-'}"), d


def scale_problems(name: str, d, plain) -> list[str]:
    """What a scale-only injection broke: its call must be the unscaled record's, with severity unknown."""
    if d is None or plain is None:
        return ["not diagnosed"]
    out = []
    calls = [(h.fault, h.component) for h in d.reasoning.confident()]
    before = [(h.fault, h.component) for h in plain.reasoning.confident()]
    if d.reasoning.withheld:
        out.append("withheld")
    if calls[:1] != before[:1]:
        out.append(f"top call {calls[:1]} against {before[:1]} unscaled")
    if set(calls) - set(before):
        out.append(f"confident calls the unscaled record does not make: {sorted(set(calls) - set(before))}")
    if d.advice.scale is None or d.advice.worst_zone is not None:
        out.append("severity or a zone given")
    return out


def injected(datasets: Path, progress=print) -> int:
    """Run every injection; the number of scale-only runs that broke the unscaled call."""
    reasoner = Reasoner(load_rulebook())
    machine = load_machine(MACHINE)
    broken = 0
    with tempfile.TemporaryDirectory() as tmp:
        for rel in RECORDS:
            record = datasets / rel
            if not record.exists():
                progress(f"missing {record}")
                continue
            plain = None
            for name in INJECTIONS:
                line, d = run_injection(record, name, reasoner, machine, Path(tmp))
                if name == "as published":
                    plain = d
                problems = scale_problems(name, d, plain) if name in SCALE_ONLY else []
                broken += bool(problems)
                progress(f"{record.stem:<4} {name:<28} {line}"
                         + (f"  BROKEN: {'; '.join(problems)}" if problems else ""))
    return broken


def records(datasets: Path):
    """(name, samples in g, fs) of every channel of every single record in index.csv."""
    from scipy.io import loadmat

    with open(datasets / "index.csv", newline="", encoding="utf-8") as f:
        rows = list(csv.DictReader(f))
    for row in rows:
        path = datasets / row["path"]
        try:
            fs = float(row["fs_hz"])
        except ValueError:      # the NREL gearbox files state no sample rate
            continue
        if not path.exists():
            continue
        if path.suffix == ".mat":
            m = loadmat(path, squeeze_me=True, struct_as_record=False)
            for key, value in m.items():
                if key.startswith("__"):
                    continue
                value = getattr(value, "gs", value)
                arr = np.asarray(value)
                if arr.dtype.kind == "f" and arr.ndim == 1 and arr.size > 1000:
                    yield f"{row['path']}:{key}", arr.astype(float), fs
        elif path.name.endswith(".csv.gz"):
            data = np.loadtxt(path, delimiter=",", skiprows=1, ndmin=2)
            for i in range(data.shape[1]):
                yield f"{row['path']}:{i}", data[:, i], fs
    # the FEMTO / PRONOSTIA snapshots (0.1 s at 25.6 kHz, horizontal and vertical acceleration in g; their
    # README in ../shared/datasets): a second rig's accelerometers, new to worn out, for the shape gates
    for path in sorted((datasets / "femto" / "learning").glob("*/acc_*.csv")):
        data = np.loadtxt(path, delimiter=",", ndmin=2)
        for i, direction in ((4, "horizontal"), (5, "vertical")):
            yield f"femto/{path.parent.name}/{path.name}:{direction}", data[:, i], 25600.0


def scan(datasets: Path, progress=print) -> Counter:
    counts: Counter = Counter()
    channels = 0
    for name, x, fs in records(datasets):
        channels += 1
        ch = Channel(name, x * 9.80665, "acceleration", "g")
        kinds = [q.kind for q in check_channel(ch, fs)]
        counts.update(kinds)
        if set(kinds) & {"clipping", "implausible_level", "implausible_spectrum", "implausible_slope", "out_of_range"}:
            progress(f"  flagged {name}: {', '.join(kinds)}")
    counts["channels scanned"] = channels
    return counts


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--datasets", type=Path, default=DATASETS)
    parser.add_argument("--no-scan", action="store_true", help="only the injected faults")
    args = parser.parse_args()
    if not (args.datasets / "index.csv").exists():
        print(f"no datasets at {args.datasets}", file=sys.stderr)
        return 2
    t0 = time.perf_counter()
    print("injected faults, drive end (issues found; verdict with the damage stage; severity; worst ISO zone):")
    broken = injected(args.datasets)
    print(f"scale-only injections that changed the unscaled call or kept a severity: {broken}")
    if not args.no_scan:
        print("\nquality issues on every published record (channels as acceleration in g):")
        for kind, n in sorted(scan(args.datasets).items()):
            print(f"  {kind:<22} {n}")
    print(f"\n{time.perf_counter() - t0:.0f} s")
    return 1 if broken else 0


if __name__ == "__main__":
    raise SystemExit(main())
