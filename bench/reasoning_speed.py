"""Time the reasoning layer: rulebook load and check, compile, and one diagnosis's reasoning step.

    python -m bench.reasoning_speed [--repeat N] [--site-rules N]

The reasoning step is timed on the evidence of a simulated reading (all
extractors, seven channels), so it includes asserting every fact, forward
chaining and ranking. Memory is the process's peak RSS growth over the runs.
``--site-rules N`` lays N generated site rules over the shipped ones (each
with its own condition: ``generated_site_rules``), the size a site may grow
to; the rule engine then runs the rulebook as several rulesets.
"""

from __future__ import annotations

import argparse
import resource
import statistics
import tempfile
import time
from pathlib import Path

from engine.evidence import extract_evidence
from engine.machine import load_machine
from engine.reasoning import Reasoner, load_rulebook
from engine.simulation import as_reading, simulate

ROOT = Path(__file__).resolve().parent.parent

GENERATED_FAULT = "site-watch"


def generated_site_rules(n: int, folder) -> Path:
    """Write a site rulebook of ``n`` rules into ``folder``: rule i concludes the site's own
    fault when a channel's kurtosis is at least 1 + i / 50 (each rule its own condition;
    they explain no sign, so the shipped hypotheses keep every share). Invented, for load tests."""
    lines = ["rulebook: generated site rules (load test)",
             "faults:",
             f"  {GENERATED_FAULT}: {{name: site watch list, family: structure}}",
             "rules:"]
    for i in range(n):
        lines += [f"  - id: site.gen.{i:04d}",
                  f"    title: generated rule {i}",
                  "    source: generated for a load test",
                  "    needs:",
                  "      - fact: overall",
                  "        as: o",
                  f"        where: {{kurtosis: {{at_least: {generated_threshold(i)}}}}}",
                  f"    concludes: {{fault: {GENERATED_FAULT}, component: o.location}}",
                  "    explains: []",
                  "    certainty: 0.01",
                  "    because: \"Kurtosis {o.kurtosis} on {o.channel}.\""]
    path = Path(folder) / "generated.yaml"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def generated_threshold(i: int) -> float:
    """The kurtosis at which generated rule ``i`` starts to fire."""
    return round(1 + i / 50, 2)


def _ms(samples):
    return f"median {statistics.median(samples):.1f} ms, max {max(samples):.1f} ms"


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=200)
    parser.add_argument("--site-rules", type=int, default=0, metavar="N",
                        help="lay N generated site rules over the shipped ones (default: none)")
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        places = [ROOT / "cases/site"]
        if args.site_rules:
            places.append(generated_site_rules(args.site_rules, tmp).parent)
        return _run(args, places)


def _run(args, places) -> int:
    loads, compiles = [], []
    for _ in range(10):
        t0 = time.perf_counter()
        rulebook = load_rulebook(*places)
        t1 = time.perf_counter()
        reasoner = Reasoner(rulebook)
        t2 = time.perf_counter()
        loads.append(1e3 * (t1 - t0))
        compiles.append(1e3 * (t2 - t1))
    print(f"rulebooks: {len(rulebook.rules)} rules from {len(rulebook.files)} files, "
          f"run as {reasoner.ruleset_count} ruleset(s)")
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
