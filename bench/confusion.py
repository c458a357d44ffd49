"""Confusion table of the shipped rulebooks on simulated faults, and reasoning timings.

For every fault the simulator knows, on a machine that has the faulty
component, over speeds, sample rates, stages and seeds: simulate, extract
evidence, reason, and compare the top hypothesis with the truth. A reading
counts as "none" when no hypothesis reaches the confident certainty (0.5).

    python -m bench.confusion [--seeds N] [--quick]
"""

from __future__ import annotations

import argparse
import dataclasses
import statistics
import time
from collections import Counter, defaultdict
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent

from engine.evidence import extract_evidence
from engine.machine import Machine, SpeedRange, load_machine
from engine.reasoning import CONFIDENT, Reasoner, load_rulebook
from engine.synth import as_reading, runs_at, simulate

MACHINES = {
    "rw2": ROOT / "cases/machines/rw2-raw-water-pump.yaml",
    "ct1": ROOT / "cases/machines/ct1-cooling-tower-fan.yaml",
    "bw1": ROOT / "cases/machines/bw1-backwash-blower.yaml",
}

# (simulator fault, machine, component)
SCENARIOS = (
    ("healthy", "rw2", None), ("healthy", "ct1", None), ("healthy", "bw1", None),
    ("unbalance", "rw2", "pump"), ("unbalance", "bw1", "blower"),
    ("misalignment-angular", "rw2", "pump"), ("misalignment-parallel", "rw2", "pump"),
    ("looseness-rotating", "rw2", "pump"), ("looseness-structural", "rw2", "motor_de"),
    ("outer-race", "rw2", "pump_nde"), ("outer-race", "ct1", "output_lower"),
    ("inner-race", "rw2", "pump_de"), ("inner-race", "bw1", "blower_de"),
    ("rolling-element", "rw2", "pump_nde"),
    ("cage", "rw2", "pump_nde"),
    ("gear-eccentricity", "ct1", "bevel_stage"),
    ("gear-tooth", "ct1", "bevel_stage"),
    ("gear-wear", "ct1", "bevel_stage"),
    ("belt", "bw1", "vbelt"),
    ("vane-pass", "rw2", "impeller"),
    ("stator", "rw2", "M-RW2"),
    ("rotor-bar", "rw2", "M-RW2"),
)

def accepted_faults(fault: str) -> set[str]:
    """Rulebook faults counted right for a simulated fault: the same id (the simulator uses the
    rulebooks' ids); misalignment of either kind is the same joint's problem."""
    if fault.startswith("misalignment"):
        return {"misalignment-angular", "misalignment-parallel"}
    return {fault}


def same_joint(machine, a: str, b: str) -> bool:
    """Shafts joined by a coupling turn at the same speed; misalignment belongs to the joint."""
    speeds = machine.shaft_speeds_hz
    return a in speeds and b in speeds and abs(speeds[a] - speeds[b]) <= 1e-6 * speeds[a]


def names_truth(result, machine, fault: str, component: str | None) -> bool:
    """Whether the top hypothesis, at whatever certainty, names the true fault on the true component."""
    top = result.top
    if result.withheld or top is None or fault == "healthy" or top.fault not in accepted_faults(fault):
        return False
    return top.component == component or (fault.startswith("misalignment")
                                           and same_joint(machine, top.component, component))


def verdict(result, machine, fault: str, component: str | None) -> tuple[str, bool]:
    """(label of the top answer, whether it is right) for one reasoning result."""
    if result.withheld:
        return "withheld", False
    top = result.top
    if top is None or top.certainty < CONFIDENT:
        return "none", fault == "healthy"
    if fault == "healthy":
        return top.fault, False
    return top.fault, names_truth(result, machine, fault, component)


def on_a_drive(machine: Machine, slowest: float) -> Machine:
    """``machine`` on a variable-speed drive from ``slowest`` x its nominal speed up to it: the bench runs
    the demo machines at 85 % of their nominal speed, which their motors cannot give from the line."""
    if slowest >= 1.0:
        return machine
    nominal = machine.shaft_speeds_hz[machine.driver_shaft] * 60
    return dataclasses.replace(machine, speed_range=SpeedRange(machine.driver_shaft, slowest * nominal, nominal))


def run(seeds=(0, 1, 2), speeds=(0.85, 1.0), sample_rates=(25600.0, 12800.0), stages=(2, 3), duration_s=4.0,
        scenarios=SCENARIOS, reasoner=None):
    """Rows of (fault, machine, component, stage, seed, speed, fs, label, right, top certainty, seconds,
    withheld, top names the truth at any certainty)."""
    reasoner = reasoner or Reasoner(load_rulebook())
    machines = {k: on_a_drive(load_machine(p), min(speeds)) for k, p in MACHINES.items()}
    rows = []
    for fault, mk, component in scenarios:
        m = machines[mk]
        nominal = m.shaft_speeds_hz[m.driver_shaft] * 60
        for seed in seeds:
            for scale in speeds:
                for fs in sample_rates:
                    for stage in (stages if fault != "healthy" else (1,)):
                        if not runs_at(m, fault, component, nominal * scale):
                            continue
                        sim = simulate(m, fault, component, stage, nominal * scale, fs, duration_s, seed)
                        facts = extract_evidence(as_reading(sim), m)
                        t0 = time.perf_counter()
                        result = reasoner.reason(facts)
                        dt = time.perf_counter() - t0
                        label, right = verdict(result, m, fault, component)
                        top = result.top.certainty if result.top else 0.0
                        rows.append((fault, mk, component, stage, seed, scale, fs, label, right, top, dt,
                                     result.withheld, names_truth(result, m, fault, component)))
    return rows


def confusion(rows) -> dict[str, Counter]:
    table = defaultdict(Counter)
    for row in rows:
        table[row[0]][row[7]] += 1
    return table


def print_report(rows) -> None:
    table = confusion(rows)
    labels = sorted({lab for c in table.values() for lab in c})
    width = max(len(x) for x in list(table) + labels) + 1
    print("truth \\ top hypothesis".ljust(22) + "".join(lab[:12].rjust(13) for lab in labels))
    for fault in table:
        print(fault.ljust(22) + "".join(str(table[fault][lab] or ".").rjust(13) for lab in labels))
    print()
    per_fault = defaultdict(lambda: [0, 0])
    for row in rows:
        per_fault[row[0]][0] += row[8]
        per_fault[row[0]][1] += 1
    for fault, (ok, n) in per_fault.items():
        print(f"{fault:<{width}} right fault on the right component: {ok}/{n} ({100 * ok / n:.0f} %)")
    total_ok = sum(r[8] for r in rows)
    print(f"\noverall: {total_ok}/{len(rows)} ({100 * total_ok / len(rows):.1f} %)")
    times = [r[10] * 1e3 for r in rows]
    print(f"reasoning step: median {statistics.median(times):.1f} ms, max {max(times):.1f} ms over {len(times)} readings")


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--seeds", type=int, default=3)
    parser.add_argument("--quick", action="store_true", help="one seed, one speed, one sample rate")
    args = parser.parse_args()
    t0 = time.perf_counter()
    rulebook = load_rulebook()
    t1 = time.perf_counter()
    reasoner = Reasoner(rulebook)
    t2 = time.perf_counter()
    print(f"rulebook: {len(rulebook.rules)} rules; load and check {1e3 * (t1 - t0):.0f} ms, "
          f"compile {1e3 * (t2 - t1):.1f} ms\n")
    if args.quick:
        rows = run(seeds=(0,), speeds=(1.0,), sample_rates=(25600.0,), reasoner=reasoner)
    else:
        rows = run(seeds=tuple(range(args.seeds)), reasoner=reasoner)
    print_report(rows)
    wrong = [r for r in rows if not r[8]]
    if wrong:
        print("\nmisses:")
        for r in wrong[:40]:
            print(f"  {r[0]:<18} {r[1]} {r[2]} stage {r[3]} seed {r[4]} speed x{r[5]} fs {r[6]:.0f}: "
                  f"top {r[7]} ({r[9]:.2f})")
    print(f"\n{time.perf_counter() - t0:.0f} s in all")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
