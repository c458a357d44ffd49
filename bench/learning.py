"""Does a learned overlay help? The labelled real records of ../shared/datasets as findings at repair.

Each record's label is what a repair would have found: the labelled fault on the labelled bearing,
or nothing for a healthy record. The bench learns an overlay from one dataset (CWRU, MFPT or
HIT-SM) with ``engine.reasoning.learning.propose_overlay`` and measures the other two with the
shipped weights and with the overlay loaded after them: the reliability table of the judged top
hypotheses and the Brier score (Brier 1950). Every ordering is run. The goal: the overlay makes no
held-aside dataset worse and improves the Brier score on at least one; the table says where not.

    python -m bench.learning [--datasets PATH] [--prior-n 20]
"""

from __future__ import annotations

import argparse
import sys
import tempfile
import time
from pathlib import Path

from bench.real_data import BEARINGS, DATASETS, FAULTS, MACHINES, reading_of, records
from engine.machine import load_machine
from engine.pipeline import diagnose
from engine.reasoning import Reasoner, load_rulebook
from engine.reasoning.learning import (
    NOTHING_FOUND,
    PRIOR_N,
    Finding,
    JudgedDiagnosis,
    Reliability,
    firings_of,
    propose_overlay,
    reliability,
)


def finding_of(row: dict) -> Finding:
    """What a repair of this record's bearing would have found (its label)."""
    if row["fault"] == "normal":
        return Finding(BEARINGS["DE"] if row["dataset"] == "CWRU" else BEARINGS["test bearing"], NOTHING_FOUND)
    return Finding(BEARINGS[row["fault_bearing"]], FAULTS[row["fault"]])


def judged(reasoner: Reasoner, datasets: Path, progress=print) -> dict[str, list[JudgedDiagnosis]]:
    """Every labelled record diagnosed with ``reasoner``, by dataset, its label as the finding."""
    machines = {k: load_machine(p) for k, p in MACHINES.items()}
    out: dict[str, list[JudgedDiagnosis]] = {k: [] for k in MACHINES}
    for row in records(datasets):
        d = diagnose(reading_of(datasets / row["path"], row), machines[row["dataset"]], reasoner)
        out[row["dataset"]].append(JudgedDiagnosis(row["path"], firings_of(d.reasoning), (finding_of(row),)))
    progress(f"   diagnosed {sum(len(v) for v in out.values())} records")
    return out


def _brier(r: Reliability) -> str:
    return "-" if r.brier is None else f"{r.brier:.3f}"


def _table(r: Reliability) -> str:
    """The non-empty bins: count (fraction confirmed at mean certainty)."""
    return "  ".join(f"{b.low:.1f}-{b.high:.1f}: {b.count} ({b.fraction_confirmed:.2f} at {b.mean_certainty:.2f})"
                     for b in r.bins if b.count)


def main(argv=None) -> int:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--datasets", type=Path, default=DATASETS)
    p.add_argument("--prior-n", type=float, default=PRIOR_N, help="the shipped weight counts as this many findings")
    args = p.parse_args(argv)
    if not (args.datasets / "index.csv").is_file():
        print(f"bench.learning: {args.datasets}/index.csv not found (the shared datasets)", file=sys.stderr)
        return 2
    t0 = time.perf_counter()
    shipped_book = load_rulebook()
    print("1. every labelled record with the shipped weights")
    shipped = judged(Reasoner(shipped_book), args.datasets)
    worse, better = [], []
    print("\n2. learn on one dataset, measure on the others (Brier: lower is better)")
    print(f"   {'learned on':<10} {'measured on':<11} {'n':>3} {'Brier shipped':>14} {'Brier learned':>14}  changes")
    for source in MACHINES:
        proposal = propose_overlay(shipped[source], shipped_book, prior_n=args.prior_n)
        with tempfile.TemporaryDirectory() as tmp:
            site = Path(tmp) / "learned"
            site.mkdir()
            (site / "learned.yaml").write_text(proposal.text, encoding="utf-8")
            learned = judged(Reasoner(load_rulebook(site)), args.datasets, progress=lambda _: None)
        moved = ", ".join(f"{c.rule_id} {c.loaded_weight:g}->{c.learned_weight:g}" for c in proposal.changes) or "none"
        for target in MACHINES:
            if target == source:
                continue
            before, after = reliability(shipped[target]), reliability(learned[target])
            print(f"   {source:<10} {target:<11} {before.judged:>3} {_brier(before):>14} {_brier(after):>14}  {moved}")
            if before.brier is not None and after.brier is not None:
                if after.brier > before.brier + 1e-9:
                    worse.append((source, target))
                elif after.brier < before.brier - 1e-9:
                    better.append((source, target))
            print(f"      shipped  {_table(before)}")
            print(f"      learned  {_table(after)}")
    print(f"\n   improved: {len(better)} of 6 orderings; worse: {len(worse)}"
          + (f" ({', '.join(f'{a}->{b}' for a, b in worse)})" if worse else ""))
    print(f"   {time.perf_counter() - t0:.0f} s")
    return 0


if __name__ == "__main__":
    sys.exit(main())
