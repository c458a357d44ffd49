"""Does the planner's check agree with its proof by simulation? Over every machine, several seeds and
a set of typical route settings, count where they agree, where they disagree, and how long a plan takes.

For each machine, each setting and each seed, every target is simulated once and recorded with the
proposed settings and with the route setting; the check's verdict ("can show" / "cannot show") is
compared with whether the evidence was found. "may miss" verdicts are counted apart, and each
proposal once per seed.

    python -m bench.plan_agreement [--seeds N] [--quick]
"""

from __future__ import annotations

import argparse
import time
from collections import Counter
from pathlib import Path

from engine.machine import load_machine
from engine.planner import check, given_settings, load_policy, propose, verdicts
from engine.planner.document import _targets
from engine.planner.proof import prove

ROOT = Path(__file__).resolve().parent.parent
MACHINES = sorted((ROOT / "cases/machines").glob("*.yaml")) + sorted((ROOT / "tests/machines").glob("*.yaml"))
ROUTE_SETTINGS = {
    "1000 Hz / 400 lines": dict(fmax_hz=1000.0, lines=400),
    "2000 Hz / 1600 lines": dict(fmax_hz=2000.0, lines=1600),
    "25.6 kHz for 1 s": dict(sample_rate_hz=25600.0, duration_s=1.0),
    "10 kHz / 3200 lines": dict(fmax_hz=10000.0, lines=3200),
}


def run(seeds=(1, 2), machines=MACHINES, settings=ROUTE_SETTINGS):
    policy = load_policy()
    table = Counter()
    misses = []
    timings = {}
    for path in machines:
        m = load_machine(path)
        targets = _targets(m, list(m.points))
        start = time.perf_counter()
        for index, (name, kw) in enumerate(settings.items()):
            given = given_settings(policy, **kw)
            for t, p in targets.items():
                proposed = propose(m, p, t.purpose, policy).settings()
                expected = {"proposed": verdicts([t], check(m, proposed, policy, [p.id], [t.purpose]))[0].state,
                            "given": verdicts([t], check(m, given, policy, [p.id], [t.purpose]))[0].state}
                for seed in seeds:
                    item = prove(m, t, p, {"proposed": proposed, "given": given}, policy, expected, seed=seed)
                    for label in ("proposed", "given") if index == 0 else ("given",):
                        agrees = item.agrees(label)
                        table[(label, expected[label], agrees)] += 1
                        if agrees is False:
                            misses.append((m.name, name if label == "given" else "proposed", seed, t.label, p.id,
                                           expected[label], item.trials[label].measure))
        timings[m.name] = (time.perf_counter() - start) / (len(settings) * len(seeds))
    return table, misses, timings


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--seeds", type=int, default=2)
    parser.add_argument("--quick", action="store_true", help="the three plant machines, one seed")
    args = parser.parse_args(argv)
    machines = MACHINES[:3] if args.quick else MACHINES
    seeds = (1,) if args.quick else tuple(range(1, args.seeds + 1))
    table, misses, timings = run(seeds, machines)
    print(f"{'settings':9} {'check says':12} {'agrees':>7} {'disagrees':>10} {'not compared':>13}")
    for label in ("proposed", "given"):
        for state in ("can show", "cannot show", "may miss"):
            row = [table[(label, state, a)] for a in (True, False, None)]
            if sum(row):
                print(f"{label:9} {state:12} {row[0]:7d} {row[1]:10d} {row[2]:13d}")
    print("\ndisagreements:")
    for m, setting, seed, target, point, state, measure in misses:
        print(f"  {m} | {setting} | seed {seed} | {target} at {point}: check '{state}', simulation: {measure}")
    print("\nseconds per plan with proof (two settings, every target):")
    for name, seconds in timings.items():
        print(f"  {name}: {seconds:.1f}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
