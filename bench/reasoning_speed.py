"""Time the reasoning layer: rulebook load and check, compile, and one diagnosis's reasoning step.

    python -m bench.reasoning_speed [--repeat N]

The reasoning step is timed on the evidence of a simulated reading (all
extractors, seven channels), so it includes asserting every fact, forward
chaining and ranking. Memory is the process's peak RSS growth over the runs.
"""

from __future__ import annotations

import argparse
import resource
import statistics
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent

from engine.evidence import extract_evidence
from engine.machine import load_machine
from engine.reasoning import Reasoner, load_rulebook
from engine.synth import as_reading, simulate


def _ms(samples):
    return f"median {statistics.median(samples):.1f} ms, max {max(samples):.1f} ms"


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=200)
    args = parser.parse_args()

    loads, compiles = [], []
    for _ in range(10):
        t0 = time.perf_counter()
        rulebook = load_rulebook(ROOT / "cases/site")
        t1 = time.perf_counter()
        reasoner = Reasoner(rulebook)
        t2 = time.perf_counter()
        loads.append(1e3 * (t1 - t0))
        compiles.append(1e3 * (t2 - t1))
    print(f"rulebooks: {len(rulebook.rules)} rules from {len(rulebook.files)} files")
    print(f"load and check (YAML, schema, vocabulary): {_ms(loads)}")
    print(f"compile to durable-rules:                  {_ms(compiles)}")

    m = load_machine(ROOT / "cases/machines/rw2-raw-water-pump.yaml")
    facts = extract_evidence(as_reading(simulate(m, "inner-race", "pump_de", 3, None, 25600.0, 4.0, 1)), m)
    rss0 = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    steps = []
    for _ in range(args.repeat):
        t0 = time.perf_counter()
        reasoner.reason(facts)
        steps.append(1e3 * (time.perf_counter() - t0))
    rss1 = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    print(f"one reasoning step ({len(facts)} evidence facts): {_ms(steps)} over {args.repeat} runs")
    print(f"peak memory growth over those runs: {(rss1 - rss0) / 1024:.1f} MB")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
