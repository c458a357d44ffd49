"""Does a learned overlay help? Labelled records and simulated readings as findings at repair.

Each record's label is what a repair would have found: the labelled fault on the labelled bearing,
or nothing for a healthy record. Two kinds of labelled sets:

- real: the records of ../shared/datasets (CWRU, MFPT, HIT-SM) that ``bench.real_data`` scores;
- simulated: every fault of ``engine.simulation.FAULTS`` on every component of its kind of each
  shipped demo machine (cases/machines), at the stages and speeds asked, with healthy readings
  (as many per machine as a fault gets), from one seed. A reading's finding is the simulated fault
  on its component as a repair would find it: a misalignment on each shaft of the coupling (the
  shafts turning at the same speed), a healthy reading "nothing found". ``sim-A`` (the first seed)
  is for learning, ``sim-B`` (the second) for measuring.

The bench learns an overlay (``engine.reasoning.learning.propose_overlay``) from one set and measures
held-aside sets with the shipped weights and with the overlay loaded after them: the reliability
table of the judged top hypotheses and the Brier score (Brier 1950). The orderings: each real
dataset against the other two, sim-A against sim-B and every real dataset, every real dataset
against sim-B. The goal: the overlay makes no held-aside set worse and improves the Brier score on
at least one; the table says where not.

Each reading is analysed once; a learned overlay changes rule weights only, so the same evidence
facts are reasoned over again with it. Everything is seeded: the same options give the same table.

    python -m bench.learning [--datasets PATH] [--prior-n 20] [--sim-seeds 1,2] [--sim-stages 2,3]
                             [--sim-speeds 1.0] [--no-real | --no-sim] [--jobs 1]
"""

from __future__ import annotations

import argparse
import sys
import tempfile
import time
from dataclasses import dataclass
from pathlib import Path

from bench.real_data import BEARINGS, DATASETS, FAULTS, MACHINES, reading_of, records
from engine.machine import Machine, load_machine
from engine.pipeline import diagnose
from engine.reasoning import CONFIDENT, Reasoner, load_rulebook
from engine.reasoning.learning import (
    NOTHING_FOUND,
    PRIOR_N,
    Finding,
    JudgedDiagnosis,
    Reliability,
    firings_of,
    propose_overlay,
    reliability,
    top_hypothesis,
)

ROOT = Path(__file__).resolve().parent.parent
SIM_MACHINES = {p.stem.split("-")[0]: p for p in sorted((ROOT / "cases" / "machines").glob("*.yaml"))}
SIM_FS_HZ = 25600.0
SIM_DURATION_S = 4.0
SIM_LEARN, SIM_MEASURE = "sim-A", "sim-B"


def finding_of(row: dict) -> Finding:
    """What a repair of this record's bearing would have found (its label)."""
    if row["fault"] == "normal":
        return Finding(BEARINGS["DE"] if row["dataset"] == "CWRU" else BEARINGS["test bearing"], NOTHING_FOUND)
    return Finding(BEARINGS[row["fault_bearing"]], FAULTS[row["fault"]])


@dataclass(frozen=True)
class Labelled:
    """One reading's evidence facts (reasoned over again with each rulebook) and what repair found."""

    name: str
    facts: tuple
    findings: tuple[Finding, ...]


def real_sets(datasets: Path, reasoner: Reasoner) -> dict[str, list[Labelled]]:
    """Every labelled record's evidence, by dataset, its label as the finding."""
    machines = {k: load_machine(p) for k, p in MACHINES.items()}
    out: dict[str, list[Labelled]] = {k: [] for k in MACHINES}
    for row in records(datasets):
        d = diagnose(reading_of(datasets / row["path"], row), machines[row["dataset"]], reasoner)
        out[row["dataset"]].append(Labelled(row["path"], tuple(d.evidence.facts), (finding_of(row),)))
    return out


# --- the simulated set

@dataclass(frozen=True)
class SimCase:
    """One simulated reading: a fault (or healthy) on a component of a demo machine."""

    machine: str
    fault: str
    component: str | None
    stage: int
    speed: float            # x the machine's nominal speed
    seed: int

    @property
    def name(self) -> str:
        return f"{self.machine} {self.fault} {self.component or '-'} stage {self.stage} x{self.speed:g} s{self.seed}"


def components_for(machine: Machine, fault: str) -> list[str]:
    """Every component of ``machine`` a simulated ``fault`` can sit on (each kind's own ids)."""
    from engine.simulation import FAULTS as SIM_FAULTS

    kind = SIM_FAULTS[fault].sits_on
    pools = {"shaft": sorted(machine.shaft_speeds_hz), "bearing": [b.id for b in machine.bearings],
             "support": [b.id for b in machine.bearings], "gear": [g.id for g in machine.gears],
             "belt": [b.id for b in machine.belts], "rotor": [r.id for r in machine.rotors],
             "motor": [m.id for m in machine.motors]}
    return list(pools[kind]) if kind is not None else []


def _machines(speeds) -> dict[str, Machine]:
    from bench.confusion import on_a_drive

    return {k: on_a_drive(load_machine(p), min(speeds)) for k, p in SIM_MACHINES.items()}


def sim_cases(seed: int, stages, speeds, machines: dict[str, Machine]) -> list[SimCase]:
    """Every fault the simulator makes on every component of its kind, at each stage and speed, and
    healthy readings (as many per machine as one fault on one component gets); each reading its own
    seed drawn in order from ``seed``, so the set is the same for the same options."""
    from engine.simulation import FAULTS as SIM_FAULTS
    from engine.simulation import runs_at

    plan: list[tuple[str, str, str | None, int, float]] = []
    for mk, m in machines.items():
        nominal = m.shaft_speeds_hz[m.driver_shaft] * 60
        for fault in SIM_FAULTS:
            if fault == "healthy":
                plan += [(mk, fault, None, 1, sp) for _ in stages for sp in speeds]
                continue
            for component in components_for(m, fault):
                plan += [(mk, fault, component, st, sp) for st in stages for sp in speeds
                         if runs_at(m, fault, component, nominal * sp)]
    return [SimCase(mk, f, c, st, sp, seed * 100_000 + i) for i, (mk, f, c, st, sp) in enumerate(plan)]


def sim_findings(machine: Machine, case: SimCase) -> tuple[Finding, ...]:
    """What a repair would find: the fault on its component; a misalignment on each coupling joining its
    shaft, or the sheaves' on its belt drive when no coupling joins it; nothing on a healthy machine (the
    driver's shaft opened: no hypothesis names nothing-found, so the component does not matter)."""
    from bench.confusion import joints_of

    if case.fault == "healthy":
        return (Finding(machine.driver_shaft, NOTHING_FOUND),)
    assert case.component is not None
    if case.fault.startswith("misalignment"):
        joints = joints_of(machine, case.component)
        return tuple(Finding(j, case.fault if kind == "coupling" else kind) for j, kind in sorted(joints.items()))
    return (Finding(case.component, case.fault),)


def sim_facts(case: SimCase, machine: Machine, fs_hz: float = SIM_FS_HZ, duration_s: float = SIM_DURATION_S) -> tuple:
    """The evidence facts of one simulated reading, as ``diagnose`` reasons over them."""
    from engine.evidence import extract_evidence, summarise
    from engine.simulation import as_reading, simulate

    nominal = machine.shaft_speeds_hz[machine.driver_shaft] * 60
    sim = simulate(machine, case.fault, case.component, case.stage, nominal * case.speed, fs_hz, duration_s,
                   case.seed)
    return tuple(summarise(extract_evidence(as_reading(sim), machine)).facts)


def _sim_task(job) -> list[Labelled]:
    cases, speeds = job
    machines = _machines(speeds)
    return [Labelled(c.name, sim_facts(c, machines[c.machine]), sim_findings(machines[c.machine], c)) for c in cases]


def sim_set(seed: int, stages, speeds, jobs: int = 1) -> list[Labelled]:
    """The simulated labelled set of ``seed`` (see ``sim_cases``), in ``jobs`` processes when more than one."""
    cases = sim_cases(seed, stages, speeds, _machines(speeds))
    if jobs <= 1:
        return _sim_task((cases, speeds))
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor

    chunks = [cases[i::jobs * 4] for i in range(jobs * 4)]
    with ProcessPoolExecutor(jobs, mp_context=multiprocessing.get_context("spawn")) as pool:
        parts = list(pool.map(_sim_task, [(chunk, speeds) for chunk in chunks]))
    by_name = {x.name: x for part in parts for x in part}
    return [by_name[c.name] for c in cases]          # the plan's order whatever the processes did


# --- judging and the table

def judged(reasoner: Reasoner, labelled: list[Labelled]) -> list[JudgedDiagnosis]:
    """Every reading reasoned over with ``reasoner``, its findings as the judgement."""
    return [JudgedDiagnosis(x.name, firings_of(reasoner.reason(list(x.facts))), x.findings) for x in labelled]


def wrong_calls(diagnoses: list[JudgedDiagnosis]) -> dict[str, str]:
    """Reading -> its top hypothesis, where that is a call (50 % or more) no finding confirms."""
    out = {}
    for d in diagnoses:
        top = top_hypothesis(d)
        if d.findings and top is not None and top[2] >= CONFIDENT and not d.confirms(top[0], top[1]):
            out[d.reading_id] = f"{top[0]} on {top[1]} {top[2]:.2f}"
    return out


def _top_words(top) -> str:
    return "no hypothesis" if top is None else f"{top[0]} on {top[1]} {top[2]:.2f}"


def _brier(r: Reliability) -> str:
    return "-" if r.brier is None else f"{r.brier:.3f}"


def _table(r: Reliability) -> str:
    """The non-empty bins: count (fraction confirmed at mean certainty)."""
    return "  ".join(f"{b.low:.1f}-{b.high:.1f}: {b.count} ({b.fraction_confirmed:.2f} at {b.mean_certainty:.2f})"
                     for b in r.bins if b.count)


def orderings(names: list[str]) -> list[tuple[str, list[str]]]:
    """(learned on, measured on) of the bench: each real dataset on the other real ones and sim-B;
    sim-A on sim-B and every real dataset. sim-B is never learned from, sim-A never measured."""
    real = [n for n in names if n not in (SIM_LEARN, SIM_MEASURE)]
    out = [(source, [t for t in real if t != source] + ([SIM_MEASURE] if SIM_MEASURE in names else []))
           for source in real]
    if SIM_LEARN in names:
        out.append((SIM_LEARN, ([SIM_MEASURE] if SIM_MEASURE in names else []) + real))
    return [(s, ts) for s, ts in out if ts]


def _seeds(text: str) -> tuple[int, int]:
    parts = [int(x) for x in text.split(",")]
    if len(parts) != 2 or parts[0] == parts[1] or min(parts) < 0:
        raise argparse.ArgumentTypeError("two different seeds, A,B (A to learn from, B to measure on)")
    return parts[0], parts[1]


def _numbers(kind):
    def parse(text: str):
        try:
            return tuple(sorted({kind(x) for x in text.split(",")}))
        except ValueError:
            raise argparse.ArgumentTypeError(f"a comma-separated list, got {text!r}") from None
    return parse


def main(argv=None) -> int:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--datasets", type=Path, default=DATASETS)
    p.add_argument("--prior-n", type=float, default=PRIOR_N, help="the shipped weight counts as this many findings")
    p.add_argument("--sim-seeds", type=_seeds, default=(1, 2), metavar="A,B",
                   help="seed of the simulated set learned from, and of the one measured on")
    p.add_argument("--sim-stages", type=_numbers(int), default=(2, 3), metavar="2,3",
                   help="damage stages simulated (1 to 4; more stages, a larger set)")
    p.add_argument("--sim-speeds", type=_numbers(float), default=(1.0,), metavar="1.0",
                   help="speeds simulated, x each machine's nominal speed (more speeds, a larger set)")
    p.add_argument("--no-real", action="store_true", help="leave out the shared datasets")
    p.add_argument("--no-sim", action="store_true", help="leave out the simulated sets")
    p.add_argument("--jobs", type=int, default=1, help="processes simulating the readings")
    args = p.parse_args(argv)
    if not set(args.sim_stages) <= {1, 2, 3, 4} or min(args.sim_speeds) <= 0:
        p.error("stages are 1 to 4 and speeds above 0")
    if args.no_real and args.no_sim:
        p.error("--no-real and --no-sim leave nothing to measure")
    if not args.no_real and not (args.datasets / "index.csv").is_file():
        print(f"bench.learning: {args.datasets}/index.csv not found (the shared datasets; --no-real runs "
              "the simulated sets alone)", file=sys.stderr)
        return 2
    t0 = time.perf_counter()
    shipped_book = load_rulebook()
    shipped_reasoner = Reasoner(shipped_book)
    sets: dict[str, list[Labelled]] = {}
    if not args.no_real:
        print("1. every labelled record of the shared datasets")
        sets.update(real_sets(args.datasets, shipped_reasoner))
        print(f"   {', '.join(f'{k} {len(v)}' for k, v in sets.items())} records ({time.perf_counter() - t0:.0f} s)")
    if not args.no_sim:
        print(f"1b. simulated readings of {', '.join(SIM_MACHINES)}: stages {args.sim_stages}, speeds "
              f"{args.sim_speeds}, seeds {args.sim_seeds[0]} ({SIM_LEARN}) and {args.sim_seeds[1]} ({SIM_MEASURE})")
        for name, seed in zip((SIM_LEARN, SIM_MEASURE), args.sim_seeds):
            sets[name] = sim_set(seed, args.sim_stages, args.sim_speeds, args.jobs)
            print(f"   {name}: {len(sets[name])} readings ({time.perf_counter() - t0:.0f} s)")
    shipped = {name: judged(shipped_reasoner, xs) for name, xs in sets.items()}
    worse, better, same, rows, new_wrong = [], [], [], 0, []
    print("\n2. learn on one set, measure on the held-aside ones (Brier: lower is better)")
    print(f"   {'learned on':<10} {'measured on':<11} {'n':>4} {'Brier shipped':>14} {'Brier learned':>14}"
          f"  {'no hypothesis (fault found)':>27}  {'wrong calls':>11}")
    print("   (n: judged readings with a top hypothesis, shipped/learned; the Brier score is over those; no hypothesis:"
          " readings no rule supported any fault on, with how many of them had a fault found; wrong calls: top"
          " hypotheses at 50 % or more no finding confirms, shipped/learned)")
    for source, targets in orderings(list(sets)):
        proposal = propose_overlay(shipped[source], shipped_book, prior_n=args.prior_n)
        moved = ", ".join(f"{c.rule_id} {c.loaded_weight:g}->{c.learned_weight:g}" for c in proposal.changes) or "none"
        print(f"   learned on {source}: {len(proposal.changes)} weight(s) moved: {moved}")
        with tempfile.TemporaryDirectory() as tmp:
            site = Path(tmp) / "learned"
            site.mkdir()
            (site / "learned.yaml").write_text(proposal.text, encoding="utf-8")
            learned_reasoner = Reasoner(load_rulebook(site))
        for target in targets:
            learned = judged(learned_reasoner, sets[target])
            before, after = reliability(shipped[target]), reliability(learned)
            wrong_before, wrong_after = wrong_calls(shipped[target]), wrong_calls(learned)
            rows += 1
            n = f"{before.judged}" if before.judged == after.judged else f"{before.judged}/{after.judged}"
            none = f"{before.without_hypothesis} ({before.missed}) / {after.without_hypothesis} ({after.missed})"
            wrong = f"{len(wrong_before)}/{len(wrong_after)}"
            print(f"   {source:<10} {target:<11} {n:>4} {_brier(before):>14} {_brier(after):>14}  {none:>27}"
                  f"  {wrong:>11}")
            tops = {d.reading_id: top_hypothesis(d) for d in shipped[target]}
            new_wrong += [(source, target, name, call, _top_words(tops[name]))
                          for name, call in sorted(wrong_after.items()) if name not in wrong_before]
            if before.brier is not None and after.brier is not None:
                if after.brier > before.brier + 1e-9:
                    worse.append((source, target, before.brier, after.brier))
                elif after.brier < before.brier - 1e-9:
                    better.append((source, target))
                else:
                    same.append((source, target))
            print(f"      shipped  {_table(before)}")
            print(f"      learned  {_table(after)}")
    print(f"\n   improved: {len(better)} of {rows} orderings; unchanged: {len(same)}; worse: {len(worse)}")
    for a, b, x, y in worse:
        print(f"   worse: learned on {a}, measured on {b}: Brier {x:.3f} -> {y:.3f}")
    for a, b, name, call, was in new_wrong:
        print(f"   new wrong call: learned on {a}, on {b} {name}: {call} (shipped: {was})")
    ok = not worse and bool(better)
    print(f"   verdict: {'met' if ok else 'NOT met'} (no held-aside set worse, at least one improved)")
    print(f"   {time.perf_counter() - t0:.0f} s")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
