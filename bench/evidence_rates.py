"""Detection and false-alarm rates of the evidence extractors on simulated faults.

Each extractor has a feature that a fault should raise (for example an
envelope tone at the faulty bearing's defect rate standing 15 dB above the
floor with three harmonics). Over a grid of speeds, sample rates, stages and
seeds this counts how often the feature appears when the fault is there
(detection rate) and on healthy machines (false-alarm rate).

    python -m bench.evidence_rates [--seeds N] [--quick]
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

from bench.features import FEATURES
from engine.evidence import extract_evidence
from engine.machine import load_machine
from engine.simulation import as_reading, simulate

ROOT = Path(__file__).resolve().parent.parent

MACHINES = {
    "rw2": ROOT / "cases/machines/rw2-raw-water-pump.yaml",
    "ct1": ROOT / "cases/machines/ct1-cooling-tower-fan.yaml",
    "bw1": ROOT / "cases/machines/bw1-backwash-blower.yaml",
}


def rates(seeds=(0, 1, 2), speeds=(0.85, 1.0), sample_rates=(12800.0, 25600.0), stages=(2, 3),
          duration_s=4.0):
    """{feature: (detections, trials, false alarms, healthy trials)} over the grid."""
    table = {}
    machines = {k: load_machine(p) for k, p in MACHINES.items()}
    for feat in FEATURES:
        m = machines[feat.machine]
        nominal = m.shaft_speeds_hz[m.driver_shaft] * 60
        hits = trials = alarms = healthy = 0
        for seed in seeds:
            for scale in speeds:
                for fs in sample_rates:
                    for stage in stages:
                        sim = simulate(m, feat.fault, feat.component, stage, nominal * scale, fs, duration_s, seed)
                        trials += 1
                        hits += feat.present(extract_evidence(as_reading(sim), m))
                    sim = simulate(m, "healthy", None, 1, nominal * scale, fs, duration_s, seed + 100)
                    healthy += 1
                    alarms += feat.present(extract_evidence(as_reading(sim), m))
        table[feat.name] = (hits, trials, alarms, healthy)
    return table


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--seeds", type=int, default=3)
    parser.add_argument("--quick", action="store_true", help="one seed, one sample rate")
    args = parser.parse_args()
    start = time.perf_counter()
    if args.quick:
        table = rates(seeds=(0,), sample_rates=(25600.0,), stages=(2,))
    else:
        table = rates(seeds=tuple(range(args.seeds)))
    print(f"{'feature':<34} {'detected':>10} {'false alarms':>13}")
    for name, (hits, trials, alarms, healthy) in table.items():
        print(f"{name:<34} {hits:>4}/{trials:<4} {hits / trials:5.0%} {alarms:>4}/{healthy:<4} {alarms / healthy:5.0%}")
    print(f"({time.perf_counter() - start:.0f} s)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
