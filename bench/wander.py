"""Gear and shaft calls when the running speed wanders during the record (seeded simulations).

A loaded induction motor's speed is not constant: it fluctuates slowly with the load. Each
reading here is a simulated fault on a demo machine whose clock runs (1 + w cos 2 pi f t) times as fast
as the record's (``with_speed_wander``: a fluctuation of +-w of the speed at f = 0.5 Hz), so what
repeats once per turn is no longer synchronous with one constant speed. For every wander, fault and
seed the bench prints the top hypothesis, the certainty of the true fault on its component, and the
largest certainty of any other call (a wrong call at 50 % or more is counted).

    python -m bench.wander [--seeds 4] [--wanders 0,0.002,0.005,0.01]

The readings are invented (the demo plant, seeded); they show what order tracking does to a
call, not how well the rules judge real machines.
"""

from __future__ import annotations

import argparse
import dataclasses
from pathlib import Path
from typing import NamedTuple

import numpy as np

from engine.evidence import extract_evidence
from engine.machine import load_machine
from engine.reasoning import CONFIDENT, Reasoner, load_rulebook
from engine.simulation import as_reading, simulate

ROOT = Path(__file__).resolve().parent.parent
MACHINES = {"ct1": ROOT / "cases/machines/ct1-cooling-tower-fan.yaml",
            "gc1": ROOT / "tests/machines/gc1-grit-conveyor-drive.yaml",
            "rw2": ROOT / "cases/machines/rw2-raw-water-pump.yaml"}
WANDER_HZ = 0.5             # a slow fluctuation, as a loaded induction motor's (common practice)
WANDERS = (0.0, 0.002, 0.005, 0.01)
# (simulator fault, machine, component, stage): the bevel tooth the last note measured, a healthy fan
# drive (nothing should be called), an eccentric bevel gear (it must stay eccentricity) and GC-1's
# second-stage tooth (two meshes, three shaft speeds)
SCENARIOS = (
    ("gear-tooth", "ct1", "bevel_stage", 3),
    ("healthy", "ct1", None, 1),
    ("gear-eccentricity", "ct1", "bevel_stage", 3),
    ("gear-tooth", "gc1", "second_stage", 3),
)


class Row(NamedTuple):
    fault: str
    machine: str
    component: str | None
    wander: float
    seed: int
    top: str               # "fault on component certainty", or "none"
    truth: float           # certainty of the true fault on its component (0 when not named)
    wrong: tuple[str, ...]  # every other hypothesis at 50 % or more


def with_speed_wander(sim, wander: float, wander_hz: float = WANDER_HZ):
    """``sim`` (a ``Simulated``) with its clock running (1 + ``wander`` cos 2 pi ``wander_hz`` t) times as
    fast: each channel is read at the warped time t + wander sin(2 pi f t) / (2 pi f) by linear
    interpolation; ``wander`` 0 gives ``sim`` itself."""
    if wander == 0:
        return sim
    t = np.arange(len(next(iter(sim.channels.values())))) / sim.fs_hz
    clock = t + wander * np.sin(2 * np.pi * wander_hz * t) / (2 * np.pi * wander_hz)
    return dataclasses.replace(sim, channels={k: np.interp(clock, t, x) for k, x in sim.channels.items()})


def run(seeds=(0, 1, 2, 3), wanders=WANDERS, scenarios=SCENARIOS, fs_hz=25600.0, duration_s=4.0,
        reasoner=None) -> list[Row]:
    """A Row for every scenario, wander and seed."""
    reasoner = reasoner or Reasoner(load_rulebook())
    rows = []
    for fault, mk, component, stage in scenarios:
        machine = load_machine(MACHINES[mk])
        for wander in wanders:
            for seed in seeds:
                sim = simulate(machine, fault, component, stage, None, fs_hz, duration_s, seed)
                result = reasoner.reason(extract_evidence(as_reading(with_speed_wander(sim, wander)), machine))
                hyps = [] if result.withheld else result.hypotheses
                truth = max((h.certainty for h in hyps if h.fault == fault and h.component == component),
                            default=0.0)
                wrong = tuple(f"{h.fault} on {h.component} {h.certainty:.2f}" for h in hyps
                              if h.certainty >= CONFIDENT and not (h.fault == fault and h.component == component))
                top = result.top
                label = ("withheld" if result.withheld else
                         f"{top.fault} on {top.component} {top.certainty:.2f}" if top is not None else "none")
                rows.append(Row(fault, mk, component, wander, seed, label, truth, wrong))
    return rows


def print_table(rows: list[Row]) -> None:
    print("| machine | fault | wander | seed | top hypothesis | true fault | wrong at 50 %+ |")
    print("|---|---|---|---|---|---|---|")
    for r in rows:
        print(f"| {r.machine} | {r.fault} {r.component or ''} | ±{100 * r.wander:.1f} % | {r.seed} | {r.top} | "
              f"{r.truth:.2f} | {'; '.join(r.wrong) or '-'} |")
    faulty = [r for r in rows if r.fault != "healthy"]
    named = sum(r.truth >= CONFIDENT for r in faulty)
    wrong = sum(bool(r.wrong) for r in rows)
    print(f"\ntrue fault at 50 % or more: {named} of {len(faulty)}; readings with a wrong call at 50 % or more: "
          f"{wrong} of {len(rows)}")


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--seeds", type=int, default=4)
    ap.add_argument("--wanders", default=",".join(str(w) for w in WANDERS),
                    help="speed fluctuations, fractions of the speed (0.005: +-0.5 %%)")
    args = ap.parse_args()
    print_table(run(tuple(range(args.seeds)), tuple(float(w) for w in args.wanders.split(","))))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
