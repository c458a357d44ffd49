"""Does a certainty mean what it says? A reliability table over real records and simulated faults.

Each reading's answer is its top hypothesis with its certainty c. The answer
is right when it names the true fault on the true component (a healthy
reading has no right answer: any top hypothesis is a false one). Readings
are binned by c; in a well-calibrated tool the fraction right in a bin is
close to the bin's mean certainty. The Brier score is the mean of
(c - outcome)^2 over all readings (Brier 1950, "Verification of forecasts
expressed in terms of probability", Monthly Weather Review 78(1)); 0 is
perfect, 0.25 is a constant 50 % guess. A call is an answer at 50 % or more;
the issue's goals are no wrong call and at least 95 % of calls right.

Real: every record of ../shared/datasets that bench.real_data scores (CWRU,
MFPT, HIT-SM). Simulated: every fault of bench.confusion on the demo
machines at two speeds, two seeds and stages 2 and 3 (healthy at stage 1).

    python -m bench.reliability [--real-only | --simulated-only]
"""

from __future__ import annotations

import argparse
import time
from dataclasses import dataclass

from engine.reasoning import CONFIDENT, Reasoner, load_rulebook

BINS = (0.0, 0.25, 0.5, 0.7, 0.85, 1.0001)


@dataclass(frozen=True)
class Answer:
    source: str         # real or simulated
    name: str
    certainty: float    # of the top hypothesis (0 when nothing or withheld)
    right: bool         # the top hypothesis names the true fault on the true component
    withheld: bool

    @property
    def call(self) -> bool:
        return not self.withheld and self.certainty >= CONFIDENT


def real_answers(reasoner) -> list[Answer]:
    from . import real_data

    rows = real_data.run(reasoner=reasoner, progress=lambda *_: None)
    return [Answer("real", r.path, 0.0 if r.withheld else r.certainty, r.right and not r.withheld, r.withheld)
            for r in rows]


def simulated_answers(reasoner, seeds=(0, 1), speeds=(0.85, 1.0), stages=(2, 3), fs=25600.0) -> list[Answer]:
    from .confusion import run

    rows = run(seeds=seeds, speeds=speeds, sample_rates=(fs,), stages=stages, reasoner=reasoner)
    return [Answer("simulated", f"{r.fault} {r.machine} s{r.seed} x{r.speed} stage {r.stage}",
                   0.0 if r.withheld else r.top, r.truth_at_any, r.withheld)
            for r in rows]


def table(answers: list[Answer]) -> list[str]:
    """The reliability table, the Brier score and the calls, as printed lines."""
    lines = [f"{'certainty':<12} {'readings':>8} {'mean c':>7} {'right':>7}"]
    for lo, hi in zip(BINS, BINS[1:]):
        inside = [a for a in answers if lo <= a.certainty < hi]
        if not inside:
            lines.append(f"{lo:.2f}-{min(hi, 1):.2f}   {0:>8}")
            continue
        mean_c = sum(a.certainty for a in inside) / len(inside)
        right = sum(a.right for a in inside) / len(inside)
        lines.append(f"{lo:.2f}-{min(hi, 1):.2f}   {len(inside):>8} {mean_c:>7.2f} {right:>7.2f}")
    brier = sum((a.certainty - a.right) ** 2 for a in answers) / len(answers) if answers else 0.0
    calls = [a for a in answers if a.call]
    wrong = [a for a in calls if not a.right]
    share = (len(calls) - len(wrong)) / len(calls) if calls else 1.0
    lines.append(f"Brier score {brier:.3f} over {len(answers)} readings ({sum(a.withheld for a in answers)} withheld)")
    lines.append(f"calls at 50 % or more: {len(calls)}, right {len(calls) - len(wrong)} ({100 * share:.1f} %), "
                 f"wrong {len(wrong)}" + ("".join(f"\n  wrong: {a.name} ({a.certainty:.2f})" for a in wrong)))
    return lines


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--real-only", action="store_true")
    parser.add_argument("--simulated-only", action="store_true")
    args = parser.parse_args()
    t0 = time.perf_counter()
    reasoner = Reasoner(load_rulebook())
    real = [] if args.simulated_only else real_answers(reasoner)
    simulated = [] if args.real_only else simulated_answers(reasoner)
    for title, answers in (("real records (../shared/datasets)", real), ("simulated faults", simulated),
                           ("all", real + simulated)):
        if answers:
            print(f"\n{title}")
            print("\n".join(table(answers)))
    print(f"\n{time.perf_counter() - t0:.0f} s")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
