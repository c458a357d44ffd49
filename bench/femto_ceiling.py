"""How much of the remaining life the stored indicators can tell at all, on the FEMTO learning runs.

    python -m bench.femto_ceiling [--out bench-out/femto] [--max-features 3]

bench.femto scores tellwave's projections at 0.19 (exponential) and 0.22 (pooled) against a goal of 0.35.
This bench asks whether any simple estimator over the same stored indicators could reach the goal, so a
shortfall can be laid at the method's door or at the data's.

At every cut of bench.femto (``CUTS`` of each run's life), each stored indicator gives four features from
its readings up to the cut only: its level now (a trailing mean of ``SMOOTH`` readings, of the log for
levels in g, mm/s or a ratio, as read for dB), its rise over its early level (the median of the first third
of those readings, at least ``EARLY_MIN``), the largest rise so far, and its slope per hour over the last
``SLOPE_READINGS`` readings; the larger of the two points' values counts. The log of the time elapsed is a
feature too.

A model is ordinary least squares of the log remaining life on k of these features, its estimate then
scaled by the factor that gives the best mean challenge score on the cuts it was fitted on (the score
punishes a late estimate four times as fast as an early one, so the best factor is below 1). For every
subset of up to ``--max-features`` features two scores are kept:

- fitted on the very cuts it is scored on: no model of that form can do better on these cuts;
- leave one run out: fitted on the other five runs' cuts and scored on the held-out run's, as bench.femto
  scores its methods. The best of these over all subsets is flattered, since it is picked on the runs it
  is scored on.

Both over all 36 cuts and over the cuts where degradation had begun at a point (tellwave's first
predicting time, ``engine.trend.onset``, on the readings up to the cut), the cuts bench.femto projects.
"""

from __future__ import annotations

import argparse
import itertools
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from bench.femto import CUTS, DATA, LIMITED, load_histories, point_arrays, point_single
from engine.trend.degradation import challenge_score
from engine.trend.onset import first_predicting_time
from engine.trend.pool import regular

SMOOTH = 5              # readings in the trailing mean: as rulebooks/trend/onset.yaml smooth_readings
EARLY_MIN = 6           # the fewest early readings in a baseline: as rulebooks/trend/onset.yaml early_min
SLOPE_READINGS = 10     # readings in the slope: about a quarter of an hour on these runs' 100 s spacing
GOAL = 0.35             # issue 23, section 2
# scale factors of the estimate tried: log-spaced from 1/20 to 3 times the regression's estimate, and 1 itself
FACTORS = np.union1d(np.exp(np.linspace(np.log(0.05), np.log(3.0), 241)), [1.0])


@dataclass(frozen=True)
class Cuts:
    """The cuts of all runs as arrays: run name, log remaining life (s), features, degradation begun."""
    runs: np.ndarray
    log_life: np.ndarray
    features: np.ndarray
    names: list[str]
    began: np.ndarray


def level(name: str, values: np.ndarray) -> np.ndarray:
    """An indicator on the scale its changes are read on: dB as they are, levels and ratios as logs."""
    return values if name.endswith("_db") else np.log(np.maximum(values, 1e-9))


def trailing_mean(x: np.ndarray, n: int) -> np.ndarray:
    """Mean of each reading and the n - 1 before it (fewer at the start)."""
    c = np.cumsum(np.insert(x, 0, 0.0))
    i = np.arange(1, len(x) + 1)
    lo = np.maximum(i - n, 0)
    return (c[i] - c[lo]) / (i - lo)


def indicator_features(t_s: np.ndarray, x: np.ndarray) -> tuple[float, float, float, float]:
    """Level now, rise over the early level, largest rise so far and slope per hour of one point's
    readings up to a cut (``x`` on its reading scale, see ``level``)."""
    s = trailing_mean(x, SMOOTH)
    base = float(np.median(s[:max(EARLY_MIN, len(s) // 3)]))
    tail = slice(max(0, len(s) - SLOPE_READINGS), len(s))
    slope = float(np.polyfit(t_s[tail] / 3600.0, s[tail], 1)[0]) if len(s[tail]) >= 3 else 0.0
    return float(s[-1]), float(s[-1]) - base, float(s.max()) - base, slope


def indicators_of(histories: dict) -> list[str]:
    """The indicators every point of every run has, less those that never move (a line no run shows)."""
    common = set.intersection(*(set(h) for run in histories.values() for h in run.values()))
    return sorted(n for n in common
                  if any(np.ptp(h[n][1]) > 0 for run in histories.values() for h in run.values()))


def cuts_of(histories: dict) -> Cuts:
    """Features at each cut of each run (readings up to the cut only), its log remaining life and
    whether degradation had begun at a point by then."""
    names = indicators_of(histories)
    feature_names = ["log elapsed"] + [f"{n} {kind}" for n in names for kind in ("now", "rise", "max rise", "slope")]
    runs, log_life, rows, began = [], [], [], []
    for run, points in sorted(histories.items()):
        life = max(max(h[LIMITED][0]) for h in points.values())
        for cut in CUTS:
            upto = cut * life
            per_point, begun = [], False
            for h in points.values():
                row: list[float] = []
                for n in names:
                    t, v = np.array(h[n][0]), np.array(h[n][1])
                    keep = t <= upto
                    row.extend(indicator_features(t[keep], level(n, v[keep])))
                per_point.append(row)
                t, _, hi = point_arrays(h, LIMITED)
                keep = regular(t) & (t <= upto)
                on = first_predicting_time(hi[keep], single=point_single(h, LIMITED)[keep], days=t[keep] / 86400.0)
                begun |= on.index is not None
            runs.append(run)
            log_life.append(np.log((1.0 - cut) * life))
            rows.append([np.log(upto)] + list(np.max(per_point, axis=0)))
            began.append(begun)
    return Cuts(np.array(runs), np.array(log_life), np.array(rows), feature_names, np.array(began))


def scores(residual: np.ndarray, factor: float | np.ndarray) -> np.ndarray:
    """Challenge score of each estimate exp(log actual - residual) scaled by ``factor`` (one or a column)."""
    ratio = np.asarray(factor, float).reshape(-1, 1) * np.exp(np.clip(-residual, -50.0, 50.0))     # estimate / actual
    return challenge_score(100.0 * (1.0 - ratio))


def best_factor(residual: np.ndarray) -> float:
    """The scale factor (of ``FACTORS``) with the best mean score on these residuals."""
    return float(FACTORS[int(np.argmax(scores(residual, FACTORS).mean(axis=1)))])


def fit(z: np.ndarray, y: np.ndarray) -> np.ndarray:
    """Least-squares coefficients of y on z (a column of ones first)."""
    return np.linalg.lstsq(z, y, rcond=None)[0]


def in_sample(z: np.ndarray, y: np.ndarray) -> np.ndarray:
    """Scores of a model fitted on the very cuts it is scored on."""
    r = y - z @ fit(z, y)
    return scores(r, best_factor(r))[0]


def leave_one_run_out(z: np.ndarray, y: np.ndarray, runs: np.ndarray) -> np.ndarray:
    """Scores of each run's cuts under a model fitted, and scaled, on the other runs' cuts."""
    out = np.empty(len(y))
    for run in np.unique(runs):
        held = runs == run
        b = fit(z[~held], y[~held])
        factor = best_factor(y[~held] - z[~held] @ b)
        out[held] = scores(y[held] - z[held] @ b, factor)[0]
    return out


@dataclass(frozen=True)
class Best:
    score: float
    features: tuple[str, ...]


@dataclass(frozen=True)
class Size:
    """The models of up to k features: how many, the best in-sample and best leave-one-run-out score of
    them, and the honest score of choosing among them inside each fold (``nested``)."""
    models: int
    fitted: Best
    left_out: Best
    nested: float


def search(cuts: Cuts, max_features: int, keep: np.ndarray) -> dict[int, Size]:
    """Every model of up to ``max_features`` features over the cuts ``keep`` selects, scored three ways.

    ``nested`` is leave one run out with the features chosen inside each fold: on the other five runs, by
    their own leave-one-run-out score, among the models of up to k features. It is the score the whole
    recipe (choose features, fit, scale) earns on a run it has not seen; the best plain leave-one-run-out
    score over all models is picked on the held-out runs themselves, so it flatters."""
    y, runs, x = cuts.log_life[keep], cuts.runs[keep], cuts.features[keep]
    ones = np.ones((len(y), 1))
    names = np.unique(runs)
    subsets, held, inner = [], [], []      # per model: its features, held-out scores, inner score per fold
    for k in range(max_features + 1):
        for subset in itertools.combinations(range(x.shape[1]), k):
            z = np.hstack([ones, x[:, subset]])
            if np.linalg.matrix_rank(z) < z.shape[1]:
                continue
            subsets.append(subset)
            held.append(leave_one_run_out(z, y, runs))
            inner.append([leave_one_run_out(z[runs != r], y[runs != r], runs[runs != r]).mean() for r in names])
    held_a, inner_a = np.array(held), np.array(inner)
    sizes = np.array([len(s) for s in subsets])
    found = {}
    for k in range(max_features + 1):
        upto = np.flatnonzero(sizes <= k)
        exact = np.flatnonzero(sizes == k)
        fitted = max((Best(float(in_sample(np.hstack([ones, x[:, subsets[i]]]), y).mean()),
                           tuple(cuts.names[j] for j in subsets[i])) for i in exact), key=lambda b: b.score)
        i_out = exact[int(np.argmax(held_a[exact].mean(axis=1)))]
        nested = np.empty(len(y))
        for f, r in enumerate(names):
            chosen = upto[int(np.argmax(inner_a[upto, f]))]
            nested[runs == r] = held_a[chosen, runs == r]
        found[k] = Size(len(exact), fitted, Best(float(held_a[i_out].mean()),
                                                  tuple(cuts.names[j] for j in subsets[i_out])), float(nested.mean()))
    return found


def report(cuts: Cuts, max_features: int) -> None:
    """The table, over all cuts and over the cuts after degradation began, and what it says of the goal."""
    print(f"{len(cuts.names) - 1} features of {len(cuts.names[1:]) // 4} stored indicators and the log of the time "
          f"elapsed, at {len(cuts.log_life)} cuts of {len(set(cuts.runs))} runs; mean challenge score A")
    for label, keep in (("all cuts", np.ones(len(cuts.began), bool)), ("cuts after degradation began", cuts.began)):
        print(f"\n{label} ({int(keep.sum())}): log remaining life by least squares on k features\n"
              f"{'k':>2}{'models':>8}{'fitted on its cuts':>20}{'best left out':>15}{'chosen in fold':>16}"
              "  features: best fitted; best left out")
        found = search(cuts, max_features, keep)
        for k, size in found.items():
            print(f"{k:>2}{size.models:>8}{size.fitted.score:20.3f}{size.left_out.score:15.3f}{size.nested:16.3f}  "
                  f"{', '.join(size.fitted.features) or '(constant)'}; "
                  f"{', '.join(size.left_out.features) or '(constant)'}")
        honest = max(s.nested for s in found.values())
        flattered = max(s.left_out.score for s in found.values())
        print(f"goal {GOAL}: {'reached' if honest >= GOAL else 'not reached'} by choosing features inside each fold "
              f"(best {honest:.3f}); the best single model left out, picked on the held-out runs, {flattered:.3f}")


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--data", default=str(DATA))
    ap.add_argument("--out", default="bench-out/femto", help="bench.femto's --out, whose cached histories are read")
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--max-features", type=int, default=3)
    args = ap.parse_args()
    out = Path(args.out).resolve()
    out.mkdir(parents=True, exist_ok=True)
    report(cuts_of(load_histories(Path(args.data), out, args.workers, rebuild=False)), args.max_features)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
