"""Diagnose every bearing record of ../shared/datasets and score it against its label.

The records are the CWRU Bearing Data Center seeded faults (12 and 48 kHz)
and normal baseline, the MFPT Society outer- and inner-race sets, and the
HIT-SM rig at 51.2 kHz (inner and outer race at three sizes and healthy, at
600 and 1200 rpm); index.csv gives each one's label, speed, sample rate and,
for CWRU, the Smith & Randall (2015, MSSP 64-65) benchmark category. A record
is "clear" when its drive-end category is Y1 or Y2 by at least two of their
three methods (raw envelope, prewhitened envelope, their benchmark method), "hard"
when N1 or N2 by at least two, "partial" otherwise (197 is Y2 by the
benchmark method alone and N1 by the other two: the dataset notes list it with
the hard cases); MFPT and HIT-SM fault
records count as clear (their documentation and a plain envelope check show
the labelled race's rate). The MFPT field recordings are run too and listed
apart: their labels are unverified.

A record's answer is its top hypothesis; it is a call at 50 % or more. A
call is right when it names the labelled fault on the labelled bearing (for a
healthy record no call is right).

With ``--scale S`` every record's samples are multiplied by S before the
diagnosis, as a wrong gain or sensitivity would leave them (nothing else about
the reading changes; the quality gates run on the scaled samples). With
``--scales 1,0.001,1000`` the bench runs once per scale and compares each
record's call (top fault and bearing at 50 % or more, or no call) with its call
at scale 1: same, lost, changed or gained, and counts the confident wrong calls
and the reports that say the severity is unknown (the report's
``verdict.severity_known`` is false). The goal: the same calls at every
scale and never a confident wrong one; a report may say it cannot judge severity.

With ``--inject speed=0.8,0.95,1.05,1.2 --inject rate=1.1,2,0.5`` the bench
runs once per injected error: ``speed=F`` states each record's speed as F times
its true speed, ``rate=F`` states its sample rate as F times the true rate (the
samples are untouched, so every frequency reads F times too high and the stated
speed no longer matches the signal). A wrong stated value cannot be right, so
the goal is no confident wrong call at any injection: the diagnosis is withheld,
or names the labelled fault, or stays below 50 %. The table counts per
injection the records run, withheld, still right and confidently wrong.

The same ``--inject`` runs truthful acquisition variations: the record as another instrument
would have made it, with the reading stating what was done. ``decimate=N`` low-pass filters and
resamples every channel to 1/N of its rate (``scipy.signal.decimate``, the reference
implementation: an order-8 Chebyshev type I filter run forward and back) and states the rate
divided by N; ``length=S`` keeps the first S seconds (a record no longer than S is not run);
``unit=m/s^2`` (any acceleration unit the reading layer accepts) gives the samples in that unit
and states it. Each variation is written as an NPZ file with a sidecar in a temporary folder and
loaded back through ``load_reading``, as a user's file would be. A variation loses information
but states no lie: the goal is a call that stays right, or one withheld ("measure again like
this"), and never a confident wrong one; a reading the reading layer or the record-length check
refuses counts as withheld (``refused`` in the table).

    python -m bench.real_data [--datasets PATH] [--only 130,IR2_600] [--scale S | --scales 1,0.001,1000]
                              [--inject speed=0.8,1.2 --inject rate=1.1,2 --inject decimate=2,4
                               --inject length=1,2 --inject unit=m/s^2]
"""

from __future__ import annotations

import argparse
import csv
import dataclasses
import sys
import tempfile
import time
from collections import defaultdict
from pathlib import Path

import numpy as np
import yaml
from scipy.signal import decimate

from engine.common import units
from engine.common.errors import TellwaveError, UsageError
from engine.machine import load_machine
from engine.pipeline import diagnose, document_of
from engine.readings import load_reading
from engine.readings.quality import check_channel
from engine.reasoning import CONFIDENT, Reasoner, load_rulebook

ROOT = Path(__file__).resolve().parent.parent
DATASETS = ROOT.parent / "shared" / "datasets"
MACHINES = {
    "CWRU": ROOT / "tests/machines/cwru-motor.yaml",
    "MFPT": ROOT / "tests/machines/mfpt-rig.yaml",
    "HIT-SM": ROOT / "tests/machines/hit-sm-rig1.yaml",
}
FIELD_MACHINES = {
    "IntermediateSpeedBearing": ROOT / "tests/machines/mfpt-intermediate-speed.yaml",
    "OilPumpBearing": ROOT / "tests/machines/mfpt-oil-pump.yaml",
    "PlanetBearing": ROOT / "tests/machines/mfpt-planet.yaml",
}
FAULTS = {"outer_race": "outer-race", "inner_race": "inner-race", "ball": "rolling-element"}
BEARINGS = {"DE": "drive_end", "FE": "fan_end", "test bearing": "test_bearing"}
CHANNEL_POINTS = {"_DE_time": "DE", "_FE_time": "FE", "bearing.gs": "TB"}


@dataclasses.dataclass
class Row:
    path: str
    dataset: str
    label: str
    category: str
    group: str          # clear, hard, partial, normal
    top: str
    certainty: float
    right: bool         # the top hypothesis names the labelled fault on the labelled bearing
    withheld: bool
    seconds: float
    others: tuple[str, ...] = ()    # further hypotheses at 50 % or more that are not the labelled fault
    severity_unknown: bool | None = None    # the report says the severity is unknown (None: it has no such field)

    @property
    def call(self) -> bool:
        return not self.withheld and self.certainty >= CONFIDENT

    @property
    def called(self) -> str | None:
        """The call, "fault on bearing", or None when the record gets none."""
        return self.top if self.call else None

    @property
    def acceptable(self) -> bool:
        """What the benchmark asks of this record: a clear one named right, any other one never
        confidently wrong (a healthy record: no call at all)."""
        if self.group == "clear":
            return self.call and self.right
        return not self.call or self.right


def categories(code: str) -> list[str]:
    """The drive-end category by each of Smith & Randall's methods (M1, M2, M3)."""
    if not code:
        return []
    return [part.split("/")[0].strip() for part in code.replace("(DE only)", "").split("|")]


def group_of(row: dict) -> str:
    if row["fault"] == "normal":
        return "normal"
    if row["dataset"] in ("MFPT", "HIT-SM"):
        return "clear"
    cats = categories(row["smith_randall_category_M1_M2_M3"])
    need = len(cats) // 2 + 1       # a majority of the methods
    if sum(c.startswith("Y") for c in cats) >= need:
        return "clear"
    if sum(c.startswith("N") for c in cats) >= need:
        return "hard"
    return "partial"


def reading_of(path: Path, row: dict):
    """The record as a Reading with its channels on the rig's measurement points, as a user would give it."""
    fs = float(row["fs_hz"])
    rpm = float(row["file_rpm"] or row["nominal_rpm"])
    if row["dataset"] == "HIT-SM":
        reading = load_reading(path, sample_rate_hz=fs, unit="g", speed_rpm=rpm)
        return dataclasses.replace(reading, channels=tuple(dataclasses.replace(c, point="TB", direction="vertical")
                                                           for c in reading.channels))
    wanted = ["DE_time", "FE_time"] if row["dataset"] == "CWRU" else ["gs"]
    available = row["channels"].split()
    keep = [w for w in wanted if any(a.endswith(w) for a in available)]
    reading = load_reading(path, sample_rate_hz=fs, unit="g", speed_rpm=rpm, channels=keep)
    channels = []
    for ch in reading.channels:
        point = next(p for suffix, p in CHANNEL_POINTS.items() if ch.name.endswith(suffix))
        channels.append(dataclasses.replace(ch, point=point, direction="vertical"))
    return dataclasses.replace(reading, channels=tuple(channels))


def scaled(reading, factor: float):
    """``reading`` with every channel's samples times ``factor``, as a wrong gain or sensitivity
    would leave them, and the quality gates run again on them (as loading runs them)."""
    channels = tuple(dataclasses.replace(c, samples=c.samples * factor) for c in reading.channels)
    quality = tuple(q for ch in channels for q in check_channel(ch, reading.fs_hz))
    return dataclasses.replace(reading, channels=channels, quality=quality)


def injected(reading, what: str, factor: float):
    """``reading`` stating a wrong value: ``speed`` times ``factor`` (a wrong tach reading or sidecar
    speed), or ``rate``: its sample rate times ``factor`` (a wrong recorder setting) with its samples
    untouched; the quality gates run again at the stated rate (as loading runs them)."""
    if what == "speed":
        return dataclasses.replace(reading, speed_rpm=reading.speed_rpm * factor)
    fs = reading.fs_hz * factor
    quality = tuple(q for ch in reading.channels for q in check_channel(ch, fs))
    return dataclasses.replace(reading, fs_hz=fs, quality=quality)


# the stated lies (samples untouched) and the truthful acquisition variations (``acquired``)
LIES = ("speed", "rate")
VARIATIONS = ("decimate", "length", "unit")
NPZ_UNIT = "g"      # the unit a decimated or shortened record is written in: the records' own


def decimated(x: np.ndarray, factor: int) -> np.ndarray:
    """``x`` low-pass filtered and kept at every ``factor``-th sample by ``scipy.signal.decimate``
    (its default: an order-8 Chebyshev type I filter, 0.05 dB ripple, cut at 0.8 of the new Nyquist
    frequency, run forward and back so the phase is kept)."""
    return np.ascontiguousarray(decimate(x, factor, zero_phase=True))


def acquired(reading, what: str, value, folder: Path):
    """``reading`` as another acquisition would have recorded it, stated truthfully, written to
    ``folder`` as an NPZ file with a sidecar and loaded back through ``load_reading``.

    ``decimate``: every channel through ``decimated`` and the sample rate stated divided by
    ``value``; ``length``: the first ``value`` seconds; ``unit``: the samples given in the
    acceleration unit ``value`` and that unit stated. Channel names, points, directions and the
    speed are stated as before. Returns None for ``length`` when the record is no longer than
    ``value`` (nothing would change)."""
    fs = reading.fs_hz
    arrays = {c.name: c.samples for c in reading.channels}      # SI: m/s^2
    unit_name = NPZ_UNIT
    if what == "decimate":
        arrays = {k: decimated(x, int(value)) for k, x in arrays.items()}
        fs = fs / int(value)
    elif what == "length":
        n = int(round(float(value) * fs))
        if n >= reading.n_samples:
            return None
        arrays = {k: x[:n] for k, x in arrays.items()}
    elif what == "unit":
        unit_name = str(value)
    else:
        raise ValueError(f"not an acquisition variation: {what!r}")
    to_si = units.unit(unit_name).to_si
    stem = Path(reading.source).stem
    path = folder / f"{stem}-{what}.npz"
    np.savez(path, **{k: x / to_si for k, x in arrays.items()})
    side = {"sample_rate_hz": float(fs), "unit": unit_name,
            "channels": [{"name": c.name, "point": c.point, "direction": c.direction} for c in reading.channels]}
    if reading.speed_rpm:
        side["speed_rpm"] = float(reading.speed_rpm)
    Path(f"{path}.yaml").write_text(yaml.safe_dump(side, sort_keys=False), encoding="utf-8")
    return load_reading(path)


def severity_unknown_of(document: dict) -> bool:
    """Whether the report says severity is unknown until the scale is checked (``verdict.severity_known``,
    engine/common/schemas/report.schema.json)."""
    return not document["verdict"]["severity_known"]


def compare_call(base: Row, other: Row) -> str:
    """How ``other``'s call differs from ``base``'s (the same record at scale 1): same (no call in
    both counts too), lost, gained or changed."""
    a, b = base.called, other.called
    if a == b:
        return "same"
    if b is None:
        return "lost"
    return "gained" if a is None else "changed"


def score(result, row: dict) -> tuple[str, float, bool]:
    top = result.top
    certainty = top.certainty if top else 0.0
    name = f"{'/'.join(top.faults)} on {top.component}" if top else "nothing"
    if row["fault"] == "normal" or top is None:
        return name, certainty, False
    # a race and a ball defect the evidence cannot tell apart are named together: right if the truth is among them
    right = FAULTS[row["fault"]] in top.faults and top.component == BEARINGS[row["fault_bearing"]]
    return name, certainty, right


def others_called(result, row: dict) -> tuple[str, ...]:
    """Hypotheses after the top one that reach 50 % without naming the labelled fault on its bearing
    (several faults called on one bearing is a wrong call too)."""
    label = (FAULTS.get(row["fault"]), BEARINGS.get(row["fault_bearing"]))
    return tuple(f"{'/'.join(h.faults)} on {h.component} {h.certainty:.2f}" for h in result.hypotheses[1:]
                 if h.certainty >= CONFIDENT and not result.withheld
                 and not (label[0] in h.faults and h.component == label[1]))


def records(datasets=DATASETS) -> list[dict]:
    with open(datasets / "index.csv", newline="", encoding="utf-8") as f:
        return [r for r in csv.DictReader(f)
                if r["dataset"] in MACHINES and r["fault"] in (*FAULTS, "normal")]


def run(datasets=DATASETS, only=None, reasoner=None, progress=print, scale: float = 1.0,
        severity: bool = False, inject: tuple[str, float | str] | None = None) -> list[Row]:
    """A Row per record; ``scale`` multiplies the samples (see ``scaled``); ``severity`` reads
    whether each report says the severity is unknown (it builds the report document); ``inject``
    (``("speed", 1.2)`` or ``("rate", 2.0)``) states a wrong speed or sample rate (see ``injected``),
    or (``("decimate", 4)``, ``("length", 2.0)``, ``("unit", "m/s^2")``) makes the record as another
    acquisition would, stated truthfully (see ``acquired``); a record that variation leaves as it is
    is not run, and one the reading layer refuses is a withheld Row whose top says why."""
    reasoner = reasoner or Reasoner(load_rulebook())
    machines = {k: load_machine(p) for k, p in MACHINES.items()}
    rows = []
    with tempfile.TemporaryDirectory(prefix="tellwave-real-data-") as tmp:
        for row in records(datasets):
            if only and not any(Path(row["path"]).stem == o for o in only):
                continue
            out = _run_one(datasets, row, machines[row["dataset"]], reasoner, scale, severity, inject, Path(tmp))
            if out is None:
                continue
            rows.append(out)
            progress(f"{'ok  ' if out.acceptable else 'MISS'} {out.path:<48} {out.label:<26} {out.category or '-':<8} "
                     f"{out.group:<7} -> {out.top} ({out.certainty:.2f})")
    return rows


def _run_one(datasets: Path, row: dict, machine, reasoner, scale: float, severity: bool,
             inject: tuple[str, float | str] | None, tmp: Path) -> Row | None:
    t0 = time.perf_counter()
    label = f"{row['fault']} {row['fault_bearing']} {row['fault_size_in']}".strip()
    category = "/".join(categories(row["smith_randall_category_M1_M2_M3"]))
    reading = reading_of(datasets / row["path"], row)
    if scale != 1.0:
        reading = scaled(reading, scale)
    try:
        if inject is not None and inject[0] in LIES:
            reading = injected(reading, inject[0], float(inject[1]))
        elif inject is not None:
            reading = acquired(reading, inject[0], inject[1], tmp)
            if reading is None:
                return None
        d = diagnose(reading, machine, reasoner)
    except TellwaveError as exc:     # refused at the edge (too short, too slowly sampled): said, not called
        return Row(row["path"], row["dataset"], label, category, group_of(row), f"refused: {exc.problem}", 0.0,
                   False, True, time.perf_counter() - t0)
    result = d.reasoning
    top, cf, right = score(result, row)
    unknown = severity_unknown_of(document_of(d, made_at="2026-01-01T00:00Z")) if severity else None
    return Row(row["path"], row["dataset"], label, category,
               group_of(row), "withheld" if result.withheld else top, cf, right, result.withheld,
               time.perf_counter() - t0, others_called(result, row), unknown)


def field_records(datasets=DATASETS, reasoner=None, progress=print, scale: float = 1.0) -> None:
    """The MFPT field recordings: what the tool concludes (labels unverified)."""
    reasoner = reasoner or Reasoner(load_rulebook())
    with open(datasets / "index.csv", newline="", encoding="utf-8") as f:
        rpm = {Path(r["path"]).stem: float(r["nominal_rpm"]) for r in csv.DictReader(f) if r["nominal_rpm"]}
    for stem, machine_file in FIELD_MACHINES.items():
        path = datasets / "mfpt/real_world" / f"{stem}.mat"
        if not path.exists() or not machine_file.exists():
            continue
        machine = load_machine(machine_file)
        # the shaft rate the file stores, given as a user would give --rpm
        reading = load_reading(path, unit="g", channels=["gs"], speed_rpm=rpm.get(stem))
        reading = dataclasses.replace(reading, channels=tuple(dataclasses.replace(c, point="FB", direction="vertical")
                                                               for c in reading.channels))
        if scale != 1.0:
            reading = scaled(reading, scale)
        result = diagnose(reading, machine, reasoner).reasoning
        tops = ", ".join(f"{h.fault} on {h.component} {h.certainty:.2f}" for h in result.hypotheses[:3])
        progress(f"field {stem:<26} -> {tops or 'nothing'}" + (" (withheld)" if result.withheld else ""))


def totals(rows: list[Row]) -> list[str]:
    by = defaultdict(lambda: [0, 0])
    for r in rows:
        key = (r.dataset, r.label.split()[0], r.group)
        by[key][0] += r.acceptable
        by[key][1] += 1
    lines = [f"{ds:<7} {fault:<12} {group:<8} {ok}/{n}" for (ds, fault, group), (ok, n) in sorted(by.items())]
    calls = [r for r in rows if r.call]
    wrong = [r for r in calls if not r.right]
    lines.append(f"calls at 50 % or more: {len(calls)}, right {len(calls) - len(wrong)}, wrong {len(wrong)}"
                 + (": " + ", ".join(f"{Path(r.path).stem} ({r.top} {r.certainty:.2f})" for r in wrong)
                    if wrong else ""))
    others = [(Path(r.path).stem, o) for r in rows for o in r.others]
    lines.append(f"further wrong faults at 50 % or more beside the top one: {len(others)}"
                 + (": " + ", ".join(f"{stem} ({o})" for stem, o in others) if others else ""))
    return lines


COMPARISONS = ("same", "lost", "changed", "gained")


def scale_table(by_scale: dict[float, list[Row]]) -> list[str]:
    """Per record its call at each scale against scale 1, then the counts per scale and the goal."""
    base = {r.path: r for r in by_scale[1.0]}
    others = [s for s in by_scale if s != 1.0]
    width = max(len(Path(p).stem) for p in base) + 1

    def flag(r: Row) -> str:
        return {True: " [severity unknown]", False: "", None: ""}[r.severity_unknown]

    lines = [f"{'record':<{width}} {'label':<24} x1 call" + "".join(f" | x{s:g}" for s in others)]
    for path, b in base.items():
        cells = []
        for s in others:
            r = next((x for x in by_scale[s] if x.path == path), None)
            if r is None:
                cells.append("not run")
                continue
            how = compare_call(b, r)
            what = {"same": "same", "lost": f"lost ({'withheld' if r.withheld else f'{r.top} {r.certainty:.2f}'})",
                    "changed": f"CHANGED to {r.called} {r.certainty:.2f}",
                    "gained": f"GAINED {r.called} {r.certainty:.2f}"}[how]
            wrong = " WRONG" if r.call and not r.right and how != "same" else ""
            cells.append(what + wrong + flag(r))
        call = f"{b.called} {b.certainty:.2f}" if b.called else "no call"
        lines.append(f"{Path(path).stem:<{width}} {b.label:<24} {call + flag(b)}" + "".join(f" | {c}" for c in cells))
    lines.append("")
    goal = True
    for s, rows in by_scale.items():
        compared = [(base[r.path], r) for r in rows if r.path in base]
        counts = {c: sum(compare_call(b, r) == c for b, r in compared) for c in COMPARISONS}
        wrong = [r for r in rows if r.call and not r.right]
        new_wrong = [r for b, r in compared if r.call and not r.right and compare_call(b, r) != "same"]
        flags = [r.severity_unknown for r in rows]
        said = ("not in the report" if all(f is None for f in flags)
                else f"{sum(f is True for f in flags)}/{len(rows)}")
        lines.append(f"x{s:<8g} records {len(rows)}: same {counts['same']}, lost {counts['lost']}, "
                     f"changed {counts['changed']}, gained {counts['gained']}; withheld "
                     f"{sum(r.withheld for r in rows)}; confident wrong calls {len(wrong)} "
                     f"({len(new_wrong)} not made at x1); severity unknown {said}")
        goal &= counts["same"] == len(compared) and not new_wrong
    lines.append("goal (the same calls at every scale, no confident wrong call that scale 1 does not make): "
                 + ("met" if goal else "not met"))
    return lines


def injection_name(what: str, value: float | str) -> str:
    """How the table names an injection: ``speedx1.2``, ``ratex0.5``, ``decimate/4``, ``length 2s``,
    ``unit m/s^2``."""
    if what in LIES:
        return f"{what}x{float(value):g}"
    if what == "decimate":
        return f"decimate/{int(value)}"
    if what == "length":
        return f"length {float(value):g}s"
    return f"unit {value}"


def inject_table(by_injection: dict[tuple[str, float | str], list[Row]]) -> list[str]:
    """Per injection: records, withheld, right at 50 % or more, low (below 50 %), confident wrong
    calls, how many of the withheld the reading layer refused, the wrong calls named, and the goal."""
    lines = [f"{'injection':<14} {'records':>7} {'withheld':>8} {'right':>5} {'low':>4} {'wrong':>5} {'refused':>7}"
             "  wrong calls"]
    goal = True
    for (what, value), rows in by_injection.items():
        wrong = [r for r in rows if r.call and not r.right]
        right = sum(r.call and r.right for r in rows)
        low = sum(not r.withheld and not r.call for r in rows)
        refused = sum(r.top.startswith("refused") for r in rows)
        names = ", ".join(f"{Path(r.path).stem} ({r.top} {r.certainty:.2f})" for r in wrong)
        lines.append(f"{injection_name(what, value):<14} {len(rows):>7} {sum(r.withheld for r in rows):>8} "
                     f"{right:>5} {low:>4} {len(wrong):>5} {refused:>7}  {names}")
        goal &= not wrong
    lines.append("goal (no confident wrong call at any injected speed, sample rate or acquisition): "
                 + ("met" if goal else "not met"))
    return lines


def parse_injection(text: str) -> list[tuple[str, float | str]]:
    """``speed=0.8,1.2`` -> [("speed", 0.8), ("speed", 1.2)]; ``rate=2`` -> [("rate", 2.0)];
    ``decimate=2,4`` -> [("decimate", 2), ("decimate", 4)] (whole factors from 2);
    ``length=1,2`` -> [("length", 1.0), ("length", 2.0)] (seconds); ``unit=m/s2`` -> [("unit", "m/s^2")]
    (an acceleration unit the reading layer knows, by its canonical name)."""
    what, _, values = text.partition("=")
    if what not in (*LIES, *VARIATIONS):
        raise argparse.ArgumentTypeError(f"--inject takes speed=F,..., rate=F,..., decimate=N,..., length=S,... "
                                         f"or unit=NAME,..., got {text!r}")
    if what == "unit":
        names = [v.strip() for v in values.split(",") if v.strip()]
        if not names:
            raise argparse.ArgumentTypeError(f"--inject unit needs a unit name, got {text!r}")
        found = []
        for name in names:
            try:
                u = units.unit(name)
            except UsageError as exc:
                raise argparse.ArgumentTypeError(f"--inject {text!r}: {exc.problem}") from None
            if u.quantity != "acceleration":
                raise argparse.ArgumentTypeError(f"--inject unit takes an acceleration unit (the records are "
                                                 f"accelerations), got {name!r} ({u.quantity})")
            found.append(u.name)
        return [("unit", n) for n in dict.fromkeys(found)]
    if what == "length":        # seconds: 1 is a length like any other
        return [("length", s) for s in dict.fromkeys(positive_numbers(values))]
    factors = parse_scales(values)[1:]
    if not factors:
        raise argparse.ArgumentTypeError(f"--inject {what} needs a value other than 1, got {text!r}")
    if what == "decimate":
        if any(f != int(f) or f < 2 for f in factors):
            raise argparse.ArgumentTypeError(f"--inject decimate takes whole factors of 2 or more, got {text!r}")
        return [("decimate", int(f)) for f in factors]
    return [(what, f) for f in factors]


def positive_numbers(text: str) -> list[float]:
    """``0.5,2`` -> [0.5, 2.0]: positive finite numbers separated by commas, in the order given."""
    try:
        values = [float(x) for x in text.split(",") if x.strip()]
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected numbers separated by commas, got {text!r}") from None
    if not values or any(not v > 0 or v == float("inf") for v in values):
        raise argparse.ArgumentTypeError(f"expected positive finite numbers, got {text!r}")
    return values


def parse_scales(text: str) -> list[float]:
    """``1,0.001,1000`` -> [1.0, 0.001, 1000.0]; scale 1 always first (the calls compare with it)."""
    return [1.0] + [v for v in dict.fromkeys(positive_numbers(text)) if v != 1.0]


def positive(text: str) -> float:
    """One positive finite factor, for ``--scale``."""
    if "," in text:
        raise argparse.ArgumentTypeError(f"--scale takes one factor (--scales takes several), got {text!r}")
    return parse_scales(text)[-1]


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--datasets", type=Path, default=DATASETS)
    parser.add_argument("--only", help="comma-separated record names (file stems)")
    group = parser.add_mutually_exclusive_group()
    group.add_argument("--scale", type=positive, default=1.0,
                       help="multiply every record's samples by this factor (a wrong gain) before diagnosis")
    group.add_argument("--scales", type=parse_scales,
                       help="comma-separated factors: run once per factor and compare each call with scale 1")
    group.add_argument("--inject", type=parse_injection, action="append",
                       help="speed=F,... or rate=F,...: state each record's speed or sample rate F times its "
                            "true value; decimate=N,..., length=S,... or unit=NAME,...: record it resampled to "
                            "1/N of its rate, only its first S seconds, or in another acceleration unit, stated "
                            "truthfully; count the confident wrong calls (repeatable)")
    args = parser.parse_args()
    if not (args.datasets / "index.csv").exists():
        print(f"no datasets at {args.datasets}", file=sys.stderr)
        return 2
    reasoner = Reasoner(load_rulebook())
    t0 = time.perf_counter()
    only = args.only.split(",") if args.only else None
    if args.inject:
        by_injection = {}
        for what, value in (i for group in args.inject for i in group):
            print(injection_name(what, value), flush=True)
            by_injection[(what, value)] = run(args.datasets, only, reasoner, progress=lambda *_: None,
                                              inject=(what, value))
        print()
        print("\n".join(inject_table(by_injection)))
        print(f"\n{time.perf_counter() - t0:.0f} s")
        return 0
    if args.scales:
        by_scale = {}
        for s in args.scales:
            print(f"scale x{s:g}", flush=True)
            by_scale[s] = run(args.datasets, only, reasoner, progress=lambda *_: None, scale=s, severity=True)
        print()
        print("\n".join(scale_table(by_scale)))
        print(f"\n{time.perf_counter() - t0:.0f} s")
        return 0
    rows = run(args.datasets, only, reasoner, scale=args.scale)
    print("\ntotals (clear: right fault on the right bearing at 50 % or more; hard, partial, normal: "
          "no confident wrong call):")
    for line in totals(rows):
        print("  " + line)
    print()
    field_records(args.datasets, reasoner, scale=args.scale)
    print(f"\n{time.perf_counter() - t0:.0f} s")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
