"""Remaining-life methods weighed against tellwave's own on the FEMTO learning runs, so the
comparison of issue 23 can be made again (none of them is what ``tellwave trend`` does).

    python -m bench.femto_compare [--out bench-out/femto] [--wiener-only | --gp-only [--seeds N] [--gp-all]
                                                           | --pool-only]

Needs the histories ``python -m bench.femto`` caches in --out. Each method is scored as
bench.femto scores tellwave's: leave one run out (library or prior from the other five), the
held-out run cut at bench.femto's CUTS of its life, the earlier of its two points (the smaller
median), the PHM 2012 challenge score A of the act-by time, the median's score, and whether the
80 % interval holds the actual remaining life.

- ``exponential``: tellwave's own Bayesian exponential model (``engine.trend.projection``), its
  median, interval and act-by time as ``tellwave trend`` gives them (bench.femto's numbers).
- ``similarity``: similarity-based remaining life (Wang, Yu, Siegel & Lee 2008, "A similarity-based
  prognostics approach for remaining useful life estimation of engineered systems", Int. Conf. on
  Prognostics and Health Management, PHM 2008). The health indicator is tellwave's own (``health``)
  less the mean of its healthy-band readings: a degradation ratio in log units, so runs with
  different healthy levels compare. The held-out point's ratio since its first predicting time
  (its last ``window_h`` hours) is laid on each library trajectory at every time shift (a 100 s
  grid) and time dilation ``a`` (the library's clock running ``a`` times as fast); the best match
  of each trajectory gives its remaining life there, (life - matched end) / a, weighted by
  exp(-mean squared distance / sigma^2). Median and 80 % interval: weighted quantiles.
- ``remaining fraction``: the library's onset-to-end durations, given that the held-out point has
  already lasted as long since its own onset (an empirical survival prior): the durations longer
  than the elapsed time, less it, equally weighted.
- ``fused``: the exponential model's draws and the similarity's weighted lives in one mixture, each
  weighted by the inverse width of its own 80 % interval.
- ``proportional hazards``: a Weibull proportional-hazards model with a condition covariate (Jardine,
  Anderson & Mann 1987, Quality and Reliability Engineering International 3), h(s) = (beta / eta)
  (s / eta)^(beta - 1) exp(gamma z(s)), fitted by maximum likelihood (scipy.optimize) on the library
  runs, each one failure at its last reading; z is the larger of the run's two degradation ratios
  (the health indicator less its healthy-band mean, at least 0), on the regular readings. The
  remaining life is the conditional survival given survival to now (Banjevic, Jardine, Makis &
  Ennis 2001, INFOR 39), the condition held at its current value ("hold") or going on at its slope
  over the last TREND_READINGS readings ("trend"). Settings: the clock (from the run's start or from
  its first predicting time), z as it is now or the highest so far, the future, and a ridge on
  gamma; and the form: the bearing judged by its two points together ("bearing", as above) or each
  point alone with its own onset and ratio, the earlier answer counting as bench.femto takes
  tellwave's ("each", the form ``tellwave trend`` could give point by point). Chosen by the same
  nested leave one out within each form, printed in a table of their own, with the in-sample upper
  bound (the model fitted on all six runs, the scored one included). No answer before the first
  predicting time.

- ``learned level`` and ``gaussian process`` (``level_methods``, their own settings and nested choice):
  the exponential model's draws run to a failure level learned from how high the library runs ended
  (a random threshold, Gebraeel et al. 2005; Li, Lei et al. 2015), and Gaussian-process regression of
  the log level since the onset (Rasmussen & Williams 2006) to the same kind of level; the section
  before ``level_methods`` says how. Also printed: how much each indicator's end level varies across the
  runs. This part takes about 20 minutes (the nested choice scores every run 36 times).
  ``--gp-only`` scores the Gaussian process alone in a few minutes: quasi-random draws (the score's
  spread over five seeds), where its intervals miss, and recalibration on the library (``gp_methods``).

- ``wiener`` (``wiener_report``, its own settings and nested choice; ``--wiener-only`` runs it alone, about
  10 to 20 minutes): the degradation ratio since the first predicting time as a Wiener process with drift
  on a time scale t^b (Si et al. 2012), a reading error beside it and the level and drift updated from a
  prior learned on the library points (Si et al. 2013); the remaining life is the first-passage time to
  20 g or to a level learned from the library's ends, in closed form (the section before ``main`` says how).

- ``pool`` (``pool_report``; ``--pool-only`` runs it alone: 7.5 CPU minutes, 28 on a busy machine; each further seed
  of ``--seeds`` 1.5 more): the exponential model,
  the Gaussian process (each point's learned end level, drawn growth, recalibrated) and the proportional
  hazards (bearing form) pooled as their predictive distributions, a linear opinion pool (Stone 1961;
  Genest & Zidek 1986), with equal weights or weights chosen by nested leave one out; the act-by time is the
  best expected score under the pool (the section before ``main`` says how).

The act-by time of a weighted sample is the candidate (its weighted 1st to 99th percentiles) with
the best expected challenge score, as ``degradation.act_by`` does for equal draws. Settings of the
similarity (sigma, window, dilations) are chosen by nested leave one out: for each held-out run
the setting with the best mean score over the other five, each left out in turn from a library of
the remaining four; the nested score is the held-out runs' score under the setting so chosen.
"""

from __future__ import annotations

import argparse
import itertools
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from bench.femto import CUTS, LIMIT_G, LIMITED, health_source, load_histories, point_arrays, prior_from
from engine.trend.degradation import Prior, challenge_score
from engine.trend.health import shipped_settings, smooth_log
from engine.trend.onset import first_predicting_time
from engine.trend.pool import (
    NO_CROSSING_H,
    PINNED_SD,
    Condition,
    HazardFit,
    HazardSetting,
    Pool,
    PoolPrior,
    clock_of,
    condition_from,
    fit_hazard,
    gp_predictive,
    gp_predictive_since_onset,
    hazard_answer,
    hazard_lives,
    healthy_level,
    level_ratio,
    pool_of,
    predictive_parts,
    recalibrated,
    recent_slope,
)
from engine.trend.pool import gp_lives_rqmc as _gp_lives_rqmc
from engine.trend.pool import pit as _pit
from engine.trend.projection import Projection, exponential_life

SHIFT_STEP_H = 100.0 / 3600.0       # the runs' usual reading spacing
DILATIONS = (0.5, 0.71, 1.0, 1.41, 2.0)

@dataclass(frozen=True)
class Trajectory:
    """One library point: its degradation ratio over time (hours), where it began and where the run ended."""
    run: str
    t_h: np.ndarray
    ratio: np.ndarray
    onset_h: float
    life_h: float

@dataclass(frozen=True)
class Setting:
    """One method with its settings."""
    method: str                     # exponential, similarity, remaining fraction, fused
    sigma: float = 0.0
    window_h: float = np.inf
    dilations: tuple[float, ...] = (1.0,)

    def __str__(self) -> str:
        if self.method in ("exponential", "remaining fraction"):
            return self.method
        w = "all" if not np.isfinite(self.window_h) else f"{self.window_h:g} h"
        d = "none" if self.dilations == (1.0,) else f"{min(self.dilations):g}-{max(self.dilations):g}"
        return f"{self.method} (sigma {self.sigma:g}, window {w}, dilation {d})"

def degradation_ratio(t_s: np.ndarray, values: np.ndarray) -> tuple[np.ndarray, np.ndarray, int] | None:
    """(hours, health indicator less its healthy-band mean, onset index) of one point, or None before onset."""
    s = shipped_settings()
    hi = smooth_log(values, s.smooth_readings)
    on = first_predicting_time(hi, s)
    if on.index is None:
        return None
    return np.asarray(t_s, float) / 3600.0, hi - float(np.mean(hi[:on.early])), on.index

def health_values(h: dict) -> tuple[np.ndarray, np.ndarray]:
    """Seconds and values of the point's health-indicator source (``health_source``)."""
    name = health_source(h)
    return np.array(h[name][0], float), np.array(h[name][1], float)

def library_of(histories: dict, runs: list[str], lives_h: dict[str, float]) -> list[Trajectory]:
    """The library: every point of ``runs`` whose degradation began, over its whole run."""
    out = []
    for r in runs:
        for pt in sorted(histories[r]):
            d = degradation_ratio(*health_values(histories[r][pt]))
            if d is not None:
                out.append(Trajectory(r, d[0], d[1], float(d[0][d[2]]), lives_h[r]))
    return out

def similarity_lives(t_h: np.ndarray, ratio: np.ndarray, library: list[Trajectory], sigma: float,
                     window_h: float, dilations: tuple[float, ...]) -> tuple[np.ndarray, np.ndarray]:
    """Each library trajectory's remaining life (hours) at its best match with the held-out segment
    (``t_h`` since the held-out onset, ending now), and its similarity weight (Wang et al. 2008)."""
    keep = t_h >= t_h[-1] - window_h
    t, y = t_h[keep], ratio[keep]
    lives, weights = [], []
    for lib in library:
        best_d, best_life = np.inf, 0.0
        for a in dilations:
            shifts = np.arange(lib.t_h[0] - a * t[0], lib.life_h - a * t[-1] + 1e-9, SHIFT_STEP_H)
            if shifts.size == 0:          # the segment is longer than the trajectory: end it at the run's end
                shifts = np.array([lib.life_h - a * t[-1]])
            on_lib = np.interp(shifts[:, None] + a * t[None, :], lib.t_h, lib.ratio)
            d = np.mean((y[None, :] - on_lib) ** 2, axis=1)
            i = int(np.argmin(d))
            if d[i] < best_d:
                best_d, best_life = float(d[i]), (lib.life_h - (shifts[i] + a * t[-1])) / a
        lives.append(max(best_life, 0.0))
        weights.append(np.exp(-best_d / sigma ** 2))
    return np.array(lives), np.array(weights)

def remaining_fraction_lives(elapsed_h: float, library: list[Trajectory]) -> tuple[np.ndarray, np.ndarray]:
    """The library's onset-to-end durations longer than ``elapsed_h``, less it (none longer: 0)."""
    d = np.array([lib.life_h - lib.onset_h for lib in library])
    x = d[d > elapsed_h] - elapsed_h
    x = x if x.size else np.zeros(1)
    return x, np.ones(x.size)

def weighted_quantile(x: np.ndarray, w: np.ndarray, q: float) -> float:
    """The ``q`` quantile of the sample ``x`` with weights ``w`` (the first value whose cumulative weight reaches q)."""
    order = np.argsort(x)
    c = np.cumsum(w[order]) / np.sum(w)
    return float(x[order][min(len(x) - 1, int(np.searchsorted(c, q)))])

def act_by_weighted(x: np.ndarray, w: np.ndarray) -> float:
    """The estimate with the best expected challenge score over the weighted sample (Bayes decision),
    among its weighted 1st to 99th percentiles, as ``degradation.act_by`` for equal draws."""
    cands = np.unique([weighted_quantile(x, w, q) for q in np.linspace(0.01, 0.99, 99)])
    cands = cands[cands > 0]
    if cands.size == 0:
        return 0.0
    truth = np.maximum(x, 1e-12)
    er = 100 * (truth[None, :] - cands[:, None]) / truth[None, :]
    return float(cands[int(np.argmax((challenge_score(er) * w[None, :]).sum(axis=1)))])

def _width(x: np.ndarray, w: np.ndarray) -> float:
    return max(weighted_quantile(x, w, 0.9) - weighted_quantile(x, w, 0.1), 1e-3)

@dataclass(frozen=True)
class Cut:
    """One cut's answer: (A of the act-by time, A of the median, interval holds the truth), None: no answer."""
    a: float
    a_median: float
    covered: bool

    @classmethod
    def judged(cls, actual: float, median: float, low: float, high: float, act: float) -> Cut:
        """A cut whose true remaining life is ``actual`` answered by a median, an 80 % interval and an act-by
        time (hours)."""
        return cls(float(challenge_score(100 * (actual - act) / actual)),
                   float(challenge_score(100 * (actual - median) / actual)), low <= actual <= high)


def earliest(found: list[tuple[float, float, float, float]], actual: float) -> Cut | None:
    """The cut judged by the earlier of the points' answers (median, 10th, 90th percentile, act by), as the
    product answers for a bearing; None when no point answered."""
    return Cut.judged(actual, *min(found)) if found else None

def answer(samples: list[tuple[np.ndarray, np.ndarray]]) -> tuple[float, float, float, float] | None:
    """(median, 10th, 90th percentile, act by) of the mixture of the weighted samples, each weighted by
    the inverse width of its own 80 % interval."""
    samples = [(x, w / w.sum()) for x, w in samples if w.sum() > 0]
    if not samples:
        return None
    scale = [1.0 / _width(x, w) for x, w in samples] if len(samples) > 1 else [1.0]
    x = np.concatenate([s[0] for s in samples])
    w = np.concatenate([s[1] * k for s, k in zip(samples, scale)])
    return (weighted_quantile(x, w, 0.5), weighted_quantile(x, w, 0.1), weighted_quantile(x, w, 0.9),
            act_by_weighted(x, w))

def score_run(histories: dict, run: str, library_runs: list[str], settings: list[Setting],
              lives_h: dict[str, float], prior: Prior) -> dict[Setting, list[Cut | None]]:
    """Every setting's answer at each cut of ``run``, library and prior from ``library_runs``."""
    library = library_of(histories, library_runs, lives_h)
    out: dict[Setting, list[Cut | None]] = {s: [] for s in settings}
    for cut in CUTS:
        now_h = cut * lives_h[run]
        # the actual remaining life runs from the last reading at or before the cut, as in bench.femto
        actual = lives_h[run] - max(float(np.max(np.array(h[LIMITED][0])[np.array(h[LIMITED][0]) <= now_h * 3600.0
                                                                        + 1e-6])) / 3600.0
                                    for h in histories[run].values())
        found: dict[Setting, list] = {s: [] for s in settings}
        for pt in sorted(histories[run]):
            h = histories[run][pt]
            t, v, hi = point_arrays(h, LIMITED)
            k = t <= now_h * 3600.0 + 1e-6
            if v[k][-1] >= LIMIT_G:       # reached, as project() says before any model
                proj, exp = Projection(LIMIT_G, "", 0.0, 0.0, 0.0, "reached", ""), (np.zeros(1), np.ones(1))
            else:
                proj, life = exponential_life(t[k] / 86400.0, v[k], LIMIT_G, f"{LIMIT_G:g} g", hi[k], LIMITED,
                                              {LIMITED: prior})
                exp = None if life is None else (np.minimum(np.array(life.draws) * 24.0, NO_CROSSING_H),
                                                 np.ones(len(life.draws)))
            th, vh = health_values(h)
            kh = th <= now_h * 3600.0 + 1e-6
            d = degradation_ratio(th[kh], vh[kh])
            for s in settings:
                if s.method == "exponential":       # tellwave's own answer, as bench.femto scores it
                    if proj.days is not None:
                        found[s].append((proj.days * 24.0, (proj.low_days or 0.0) * 24.0,
                                         np.inf if proj.high_days is None else proj.high_days * 24.0,
                                         (proj.act_by_days or 0.0) * 24.0))
                    continue
                parts = []
                if s.method == "fused" and exp is not None:
                    parts.append(exp)
                if d is not None and s.method in ("similarity", "fused"):
                    t_h, ratio, i0 = d
                    parts.append(similarity_lives(t_h[i0:] - t_h[i0], ratio[i0:], library, s.sigma, s.window_h,
                                                  s.dilations))
                if d is not None and s.method == "remaining fraction":
                    parts.append(remaining_fraction_lives(now_h - d[0][d[2]], library))
                got = answer(parts)
                if got is not None:
                    found[s].append(got)
        for s in settings:
            out[s].append(earliest(found[s], actual))
    return out

def grid() -> list[Setting]:
    """The methods and the similarity's settings weighed (sigma in log units, window in hours)."""
    out = [Setting("exponential"), Setting("remaining fraction")]
    for method, sigma, window, dil in itertools.product(("similarity", "fused"), (0.2, 0.4), (0.3, 0.6, np.inf),
                                                        ((1.0,), DILATIONS)):
        out.append(Setting(method, sigma, window, dil))
    return out

def mean_a(cuts: list[Cut | None]) -> float:
    """Mean score A of the answered cuts (0 when none)."""
    got = [c.a for c in cuts if c is not None]
    return float(np.mean(got)) if got else 0.0

def summary(cuts: list[Cut | None]) -> str:
    """'n, A, A median, coverage' of answered cuts."""
    got = [c for c in cuts if c is not None]
    if not got:
        return "no answers"
    return (f"{len(got):3d} {np.mean([c.a for c in got]):6.3f} {np.mean([c.a_median for c in got]):6.3f}"
            f" {np.mean([c.covered for c in got]):6.0%}")

# ---------------------------------------------------------------- proportional hazards with condition covariates
#
# Jardine, Anderson & Mann 1987 ("Application of the Weibull proportional hazards model to aircraft and
# marine engine failure data", Quality and Reliability Engineering International 3): the hazard of a
# run is h(s) = (beta / eta) (s / eta)^(beta - 1) exp(gamma z(s)), s the run's clock, z its condition.
# Banjevic, Jardine, Makis & Ennis 2001 (INFOR 39): the remaining life given survival to now and the
# condition's path, S(u | s0) = exp(-(Lambda(s0 + u) - Lambda(s0))), Lambda the cumulative hazard.

# the search keeps beta within 0.1-20 and eta within 0.01-10^4 hours: wider than any bearing life of the
# runs' hours, and a likelihood that runs off to its edge (the condition explaining everything, the clock
# nothing) is held there instead of overflowing




def condition_of(run: dict, upto_s: float = np.inf) -> Condition:
    """The condition of a run's points from the readings at or before ``upto_s`` (seconds), each
    point's healthy band and onset found on those readings only, as they stood then
    (``engine.trend.pool.condition_from``)."""
    return condition_from([health_values(run[pt]) for pt in sorted(run)], upto_s)

def hazard_grid() -> list[HazardSetting]:
    """The proportional-hazards settings weighed."""
    return [HazardSetting(c, z, f, r, p) for p in ("bearing", "each") for c in ("run", "onset")
            for z in ("now", "highest") for f in ("hold", "trend") for r in (0.0, 1.0, 3.0, 10.0, 30.0)]

def _units(run: dict, points: str, upto_s: float = np.inf) -> list[Condition]:
    """The conditions a run is judged by: one of the bearing (its points together), or one per point."""
    if points == "bearing":
        return [condition_of(run, upto_s)]
    return [condition_of({pt: run[pt]}, upto_s) for pt in sorted(run)]

def score_hazard_run(histories: dict, run: str, library_runs: list[str], settings: list[HazardSetting],
                     lives_h: dict[str, float]) -> dict[HazardSetting, list[Cut | None]]:
    """Each setting's answer at each cut of ``run``, the model fitted on ``library_runs`` (each its
    whole history, one failure at its end; with points "each", each point's history one failure).
    Before the first predicting time: no answer; with points "each" the earlier of the points' answers
    (the smaller median) counts, as bench.femto takes tellwave's."""
    full = {(r, m): _units(histories[r], m) for r in library_runs for m in {s.points for s in settings}}
    fits = {}
    for s in settings:
        key = (s.points, s.clock, s.covariate, s.ridge)
        if key not in fits:
            data = [clock_of(c, s.clock, s.covariate) for r in library_runs for c in full[(r, s.points)]
                    if c.onset_h is not None or s.clock == "run"]
            fits[key] = fit_hazard([d for d in data if len(d[0]) >= 3], s.ridge)
    out: dict[HazardSetting, list[Cut | None]] = {s: [] for s in settings}
    for cut in CUTS:
        now_s = cut * lives_h[run] * 3600.0
        actual = lives_h[run] - max(float(np.max(np.array(h[LIMITED][0])[np.array(h[LIMITED][0]) <= now_s + 1e-6]))
                                    / 3600.0 for h in histories[run].values())
        units = {m: _units(histories[run], m, now_s) for m in {s.points for s in settings}}
        for s in settings:
            found = []
            for c in units[s.points]:
                if c.onset_h is None:
                    continue
                s0 = c.t_h[-1] - (0.0 if s.clock == "run" else c.onset_h)
                slope = max(recent_slope(c), 0.0) if s.future == "trend" else 0.0
                z0 = float(c.z[-1] if s.covariate == "now" else np.max(c.z))
                x = hazard_lives(fits[(s.points, s.clock, s.covariate, s.ridge)], s0, z0, slope)
                w = np.ones_like(x)
                found.append((weighted_quantile(x, w, 0.5), weighted_quantile(x, w, 0.1),
                              weighted_quantile(x, w, 0.9), act_by_weighted(x, w)))
            out[s].append(earliest(found, actual))
    return out

def hazard_report(histories: dict, runs: list[str], lives_h: dict[str, float]) -> None:
    """Leave one run out for every proportional-hazards setting, nested leave one out to choose one
    (within each form: the bearing's points together, each point alone), and the in-sample upper bound
    (each run scored by the model fitted on all six, itself included)."""
    settings = hazard_grid()
    print("\nproportional hazards (Jardine et al. 1987; conditional survival, Banjevic et al. 2001), "
          "leave one run out")
    outer = {r: score_hazard_run(histories, r, [x for x in runs if x != r], settings, lives_h) for r in runs}
    insample = {r: score_hazard_run(histories, r, runs, settings, lives_h) for r in runs}
    inner: dict[str, dict[HazardSetting, list[Cut | None]]] = {}
    for r in runs:
        others = [x for x in runs if x != r]
        inner[r] = {s: [] for s in settings}
        for j in others:
            for s, cs in score_hazard_run(histories, j, [x for x in others if x != j], settings, lives_h).items():
                inner[r][s].extend(cs)
    print(f"{'setting':<66}{'n':>4}{'A':>7}{'A med':>7}{'cov':>7}  per run A " + " ".join(r[-3:] for r in runs))
    for s in settings:
        allc = [c for r in runs for c in outer[r][s]]
        print(f"{str(s):<66}{summary(allc)}  " + " ".join(f"{mean_a(outer[r][s]):.2f}" for r in runs))
    for form in ("bearing", "each"):
        family = [s for s in settings if s.points == form]
        print(f"\npoints {form}:")
        best_outer = max(family, key=lambda s: mean_a([c for r in runs for c in outer[r][s]]))
        print(f"best setting on the scored runs themselves (tuned on them): {best_outer}, "
              f"{summary([c for r in runs for c in outer[r][best_outer]])}")
        best_in = max(family, key=lambda s: mean_a([c for r in runs for c in insample[r][s]]))
        print(f"in sample (fitted on all six runs, the scored one included), best setting {best_in}: "
              f"{summary([c for r in runs for c in insample[r][best_in]])}  per run "
              + " ".join(f"{mean_a(insample[r][best_in]):.2f}" for r in runs))
        print("nested leave one out: the setting chosen on the other five runs (each left out of a fit on four)")
        chosen: list[Cut | None] = []
        for r in runs:
            best = max(family, key=lambda s: mean_a(inner[r][s]))
            chosen.extend(outer[r][best])
            print(f"{r}: chose {best} (inner A {mean_a(inner[r][best]):.3f}), held out A {mean_a(outer[r][best]):.3f}")
        print(f"nested: n, A, A med, coverage {summary(chosen)}  per run "
              + " ".join(f"{mean_a(c):.2f}" for c in (chosen[i * len(CUTS):(i + 1) * len(CUTS)]
                                                        for i in range(len(runs)))))

# ------------------------------------------------- a failure level learned from ended histories; GP regression
#
# Two further methods (issue 23, section 2), scored as above but on their own settings:
#
# - ``learned level``: the failure threshold as a random variable learned from past failures
#   (Gebraeel, Lawley, Li & Ryan 2005, IIE Transactions 37, section 5, and Li, Lei et al. 2015,
#   IEEE Trans. Ind. Electronics 62, set the threshold from the histories that failed). Each library
#   point's end level is the log ratio of its last reading (or of its trailing mean) to its own
#   healthy level (the median of its early readings, as the exponential model's phi); the threshold
#   is normal with their mean and standard deviation, truncated below at the held-out point's highest
#   level so far (the run has not ended, so its threshold lies above every reading it has passed).
#   Each of tellwave's exponential-model draws (``engine.trend.degradation``, the prior from the
#   library) runs forward to its own threshold draw. ``ends``: "point", each point's own end; "run",
#   the higher of a run's two points (a test stops when either passes its limit, so the other point's
#   end is not a failure level), the held-out run's level so far the higher of its two points.
# - ``gaussian process``: Gaussian-process regression (Rasmussen & Williams 2006, "Gaussian
#   processes for machine learning", MIT Press, chapters 2 and 5) of the log ratio to the healthy level
#   since the first predicting time, on a time axis scaled by the time since then. The prior mean is
#   the library's mean growth (the least-squares slope of each library point's log ratio since its
#   onset); the kernel is a squared exponential plus white noise plus the explicit basis [1, t] with
#   normal coefficients (section 2.7: level sd GP_CONSTANT_SD, slope sd the library slopes' sd). The
#   squared exponential's sd and length and the noise are chosen by the log marginal likelihood (eq.
#   5.8) with scipy.optimize; without the learned mean a few readings since the onset give no growth
#   and no crossing (tried: 0.001-0.019). Paths are drawn from the
#   joint predictive of the latent level over a geometric grid of future times (out to HORIZON_FACTOR
#   times the time since the onset) and each path's first crossing of its own threshold draw is its
#   remaining life. The latent level is smooth, so its thresholds are the trailing means' end levels;
#   ``ends`` "fixed" projects the acceleration peak to the fixed 20 g instead.
#
# Every setting is scored leave one run out and, to choose one, by nested leave one out.

# the GP's growth: "free", the linear basis's slope normal about the library's mean growth with the
# library's sd (the readings may set it); "pinned", the library's mean growth (the readings set the level
# and the swings about it); "drawn", pinned, then each path grows from now at its own growth, resampled
# from the library points' growths (a bootstrap of the library)
GP_SLOPES = ("free", "pinned", "drawn")
LEVEL_SEED = 20261205

@dataclass(frozen=True)
class LevelSetting:
    """A method with a learned failure level (or the fixed 20 g) and its settings."""
    method: str             # learned level, gaussian process
    indicator: str          # the stored indicator projected
    ends: str               # point, run (the end levels learned), fixed (20 g of the acceleration peak)
    smooth: bool = False    # end levels of the trailing mean (else of the last reading)
    slope: str = "free"     # the GP's growth: free, pinned or drawn (GP_SLOPES)

    def __str__(self) -> str:
        what = "20 g" if self.ends == "fixed" else f"{self.ends} ends, {'mean' if self.smooth else 'last'}"
        growth = f", {self.slope}" if self.method == "gaussian process" else ""
        return f"{self.method} ({self.indicator}, {what}{growth})"

def level_grid() -> list[LevelSetting]:
    """The learned-level and Gaussian-process settings weighed."""
    out = [LevelSetting("learned level", ind, ends, smooth) for ind in ("accel_peak_g", "accel_rms_g")
           for ends in ("point", "run") for smooth in (False, True)]
    out += [LevelSetting("gaussian process", ind, ends, True, slope) for slope in GP_SLOPES
            for ind in ("accel_peak_g", "accel_rms_g") for ends in ("point", "run")]
    out += [LevelSetting("gaussian process", LIMITED, "fixed", False, slope) for slope in GP_SLOPES]
    return out



def end_levels(histories: dict, runs: list[str], indicator: str, ends: str, smooth: bool) -> np.ndarray:
    """The library's failure levels: log ratio to the healthy level where each run ended, per point or
    the higher of each run's points."""
    out = []
    for r in runs:
        per = []
        for pt in sorted(histories[r]):
            _, v, hi = point_arrays(histories[r][pt], indicator)
            phi, _, _ = healthy_level(v, hi)
            per.append(float(level_ratio(v, phi, smooth)[-1]))
        out.extend(per if ends == "point" else [max(per)])
    return np.array(out)

def threshold_draws(ends: np.ndarray, above: float, n: int, seed: int = LEVEL_SEED) -> np.ndarray:
    """``n`` thresholds (log ratio) from a normal of the ends' mean and standard deviation, truncated
    below at ``above`` (the level already passed without failing)."""
    from scipy.stats import truncnorm

    m, sd = float(np.mean(ends)), max(float(np.std(ends, ddof=1)), 1e-3)
    a = min((above - m) / sd, 30.0)
    return np.asarray(truncnorm(a, np.inf, loc=m, scale=sd).rvs(size=n, random_state=np.random.default_rng(seed)))

def exponential_to_levels(days: np.ndarray, v: np.ndarray, hi: np.ndarray, prior: Prior,
                          ratios: np.ndarray) -> np.ndarray | None:
    """Remaining lives (hours) of the exponential model's draws (as ``exponential_life``: the update
    after the first predicting time, the prior's rate when the readings do not rise), each run to its
    own threshold ``ratios`` (log ratio to the healthy level, one per draw). None before the onset."""
    from engine.trend.degradation import SAMPLES, rate_from_prior, remaining_life, update
    from engine.trend.projection import MIN_BAYES_READINGS

    phi, index, _ = healthy_level(v, hi)
    if index is None or len(v) - index < MIN_BAYES_READINGS:
        return None
    floor = 0.1 * phi
    tau = days[index:] - days[index]
    log_y = np.log(np.maximum(v[index:] - phi, floor))
    spacing = float(np.median(np.diff(days)))
    post = update(prior, tau, log_y)
    if post.mean[1] <= 0 and prior.runs:
        post = rate_from_prior(prior, tau, log_y)
    departure = float(log_y[-1] - (post.mean[0] + post.mean[1] * tau[-1]))
    log_limit = np.log(np.maximum(phi * np.expm1(ratios[:SAMPLES]), floor))
    life = remaining_life(post, float(tau[-1]), log_limit, interval=max(spacing, 1e-9), last_departure=departure,
                          autocorrelation=prior.autocorrelation if prior.runs else 0.0)
    return np.minimum(np.array(life.draws) * 24.0, NO_CROSSING_H)






def gp_paths(x: np.ndarray, y: np.ndarray, p: np.ndarray, slope_sd: float, future: np.ndarray, n: int,
             seed: int = LEVEL_SEED) -> np.ndarray:
    """``n`` draws (rows) of the latent level at the ``future`` inputs from the joint predictive
    (Rasmussen & Williams 2006, eqs. 2.22-2.24)."""
    mean, cov = gp_predictive(x, y, p, slope_sd, future)
    try:
        root = np.linalg.cholesky(0.5 * (cov + cov.T) + 1e-9 * np.eye(len(future)))
    except np.linalg.LinAlgError:
        w, u = np.linalg.eigh(0.5 * (cov + cov.T))
        root = u * np.sqrt(np.maximum(w, 0.0))
    return mean[None, :] + np.random.default_rng(seed).standard_normal((n, len(future))) @ root.T

def library_slopes(histories: dict, runs: list[str], indicator: str) -> np.ndarray:
    """The library points' growth since their first predicting time: the least-squares slope of the log
    ratio to the healthy level, per hour (the GP's prior mean and slope sd)."""
    slopes = []
    for r in runs:
        for pt in sorted(histories[r]):
            t, v, hi = point_arrays(histories[r][pt], indicator)
            phi, index, _ = healthy_level(v, hi)
            if index is not None and len(v) - index >= 5:
                slopes.append(float(np.polyfit((t[index:] - t[index]) / 3600.0, np.log(v[index:] / phi), 1)[0]))
    return np.array(slopes)

def gp_since_onset(days: np.ndarray, v: np.ndarray, hi: np.ndarray, slope: tuple[float, float],
                   n: int = 2000) -> tuple[np.ndarray, np.ndarray] | None:
    """(future times in hours from the last reading, ``n`` Gaussian-process paths of the log ratio to the
    healthy level there), fitted to the readings since the first predicting time with the library's
    mean growth ``slope[0]`` per hour as the prior mean and ``slope[1]`` as its sd; None before the onset
    or with fewer than 5 readings since."""
    g = gp_predictive_since_onset(days, v, hi, slope)
    if g is None:
        return None
    future_h, mean, cov = g
    try:
        root = np.linalg.cholesky(0.5 * (cov + cov.T) + 1e-9 * np.eye(len(future_h)))
    except np.linalg.LinAlgError:
        w, u = np.linalg.eigh(0.5 * (cov + cov.T))
        root = u * np.sqrt(np.maximum(w, 0.0))
    return future_h, mean[None, :] + np.random.default_rng(LEVEL_SEED).standard_normal((n, len(future_h))) @ root.T


def first_crossing(future_h: np.ndarray, paths: np.ndarray, thresholds: np.ndarray) -> np.ndarray:
    """Each path's first future time at or past its own threshold (never: NO_CROSSING_H)."""
    crossed = paths >= thresholds[:, None]
    return np.where(crossed.any(axis=1), future_h[np.argmax(crossed, axis=1)], NO_CROSSING_H)

def _actual_h(histories: dict, run: str, now_h: float, lives_h: dict[str, float]) -> float:
    """The actual remaining life from the last reading at or before the cut, as ``score_run`` takes it."""
    last = max(float(np.max(np.array(h[LIMITED][0])[np.array(h[LIMITED][0]) <= now_h * 3600.0 + 1e-6])) / 3600.0
               for h in histories[run].values())
    return lives_h[run] - last

def score_levels(histories: dict, run: str, library_runs: list[str], settings: list[LevelSetting],
                 lives_h: dict[str, float], prior_of: object, gp_cache: dict) -> dict[LevelSetting, list[Cut | None]]:
    """Every learned-level and Gaussian-process setting's answer at each cut of ``run``, its thresholds
    and prior from ``library_runs`` (``prior_of(runs, indicator)``); the Gaussian-process paths, which
    do not depend on the library, are kept in ``gp_cache``."""
    out: dict[LevelSetting, list[Cut | None]] = {s: [] for s in settings}
    ends = {(s.indicator, s.ends, s.smooth): end_levels(histories, library_runs, s.indicator, s.ends, s.smooth)
            for s in settings if s.ends != "fixed"}
    slopes = {ind: library_slopes(histories, library_runs, ind) for ind in {s.indicator for s in settings}}
    for ci, cut in enumerate(CUTS):
        now_h = cut * lives_h[run]
        actual = _actual_h(histories, run, now_h, lives_h)
        arrays = {}
        for pt in sorted(histories[run]):
            for ind in {s.indicator for s in settings}:
                t, v, hi = point_arrays(histories[run][pt], ind)
                k = t <= now_h * 3600.0 + 1e-6
                arrays[pt, ind] = (t[k] / 86400.0, v[k], hi[k])
        for s in settings:
            found = []
            # the level each point has passed without the run ending; with run ends the higher of the two
            passed = {}
            for pt in sorted(histories[run]):
                days, v, hi = arrays[pt, s.indicator]
                phi, _, _ = healthy_level(v, hi)
                passed[pt] = float(np.max(level_ratio(v, phi, s.smooth)))
            for pt in sorted(histories[run]):
                days, v, hi = arrays[pt, s.indicator]
                above = max(passed.values()) if s.ends == "run" else passed[pt]
                if s.ends == "fixed":
                    phi, _, _ = healthy_level(v, hi)
                    if v[-1] >= LIMIT_G:
                        found.append((0.0, 0.0, 0.0, 0.0))
                        continue
                    lev = np.log(LIMIT_G / phi)

                    def ratio_of(_a: float, n: int, lev: float = lev) -> np.ndarray:
                        return np.full(n, lev)
                else:
                    e = ends[s.indicator, s.ends, s.smooth]

                    def ratio_of(a: float, n: int, e: np.ndarray = e) -> np.ndarray:
                        return threshold_draws(e, a, n)
                if s.method == "learned level":
                    prior = prior_of(library_runs, s.indicator)          # type: ignore[operator]
                    lives = exponential_to_levels(days, v, hi, prior, ratio_of(above, 2000))
                else:
                    grow = slopes[s.indicator]
                    sd = float(np.std(grow, ddof=1)) if s.slope == "free" else PINNED_SD
                    key = (run, ci, pt, s.indicator, tuple(library_runs), sd)
                    if key not in gp_cache:
                        gp_cache[key] = gp_since_onset(days, v, hi, (float(np.mean(grow)), sd))
                    g = gp_cache[key]
                    lives = None
                    if g is not None:
                        paths = g[1]
                        if s.slope == "drawn":
                            own = np.random.default_rng(LEVEL_SEED).choice(grow, paths.shape[0])
                            paths = paths + (own - np.mean(grow))[:, None] * g[0][None, :]
                        lives = first_crossing(g[0], paths, ratio_of(above, paths.shape[0]))
                if lives is not None:
                    got = answer([(lives, np.ones(len(lives)))])
                    if got is not None:
                        found.append(got)
            out[s].append(earliest(found, actual))
    return out

END_CANDIDATES = ("accel_peak_g", "accel_rms_g", "velocity_rms_mm_s", "kurtosis", "crest_factor")

def end_level_table(histories: dict, runs: list[str]) -> None:
    """How much each indicator's end level (log ratio to its healthy level) varies across the runs: the
    one that varies least, relative to its rise, is the better failure criterion. The envelope lines are
    left out: they are stored only for the snapshots where a line stood clear (4 to 54 of 70 to 299)."""
    print("\nend levels: log ratio of the last reading (or trailing mean) to the healthy level, over the runs")
    print(f"{'indicator':<20}{'ends':>6}{'of':>6}{'mean':>7}{'sd':>6}{'sd/mean':>8}  values")
    for name in END_CANDIDATES:
        for ends, smooth in (("point", False), ("point", True), ("run", False)):
            e = end_levels(histories, runs, name, ends, smooth)
            print(f"{name:<20}{ends:>6}{'mean' if smooth else 'last':>6}{np.mean(e):7.2f}{np.std(e, ddof=1):6.2f}"
                  f"{np.std(e, ddof=1) / np.mean(e):8.2f}  " + " ".join(f"{x:.2f}" for x in e))

def level_methods(histories: dict, runs: list[str], lives_h: dict[str, float]) -> None:
    """Score the learned-level and Gaussian-process settings leave one run out, then by nested leave one
    out, and print both tables with an in-sample bound (thresholds learned from all six runs)."""
    priors: dict[tuple[str, tuple[str, ...]], Prior] = {}

    def prior_of(names: list[str], indicator: str) -> Prior:
        key = (indicator, tuple(sorted(names)))
        if key not in priors:
            priors[key] = prior_from(histories, list(key[1]), indicator)
        return priors[key]

    end_level_table(histories, runs)
    settings = level_grid()
    gp_cache: dict = {}
    outer = {r: score_levels(histories, r, [x for x in runs if x != r], settings, lives_h, prior_of, gp_cache)
             for r in runs}
    print("\nlearned failure level and Gaussian-process regression, leave one run out (thresholds and prior from "
          "the other five)")
    print(f"{'method':<58}{'n':>4}{'A':>7}{'A med':>7}{'cov':>7}  per run A " + " ".join(r[-3:] for r in runs))
    for s in settings:
        allc = [c for r in runs for c in outer[r][s]]
        print(f"{str(s):<58}{summary(allc)}  " + " ".join(f"{mean_a(outer[r][s]):.2f}" for r in runs))
    best = max(settings, key=lambda s: mean_a([c for r in runs for c in outer[r][s]]))
    print(f"upper bound, the setting best on the very runs it is scored on: {best}: "
          f"{summary([c for r in runs for c in outer[r][best]])}")
    inside = {r: score_levels(histories, r, runs, [best], lives_h, prior_of, gp_cache) for r in runs}
    print(f"in sample, that setting with thresholds and prior from all six runs (the held-out one among them): "
          f"{summary([c for r in runs for c in inside[r][best]])}")
    pool = settings
    print("nested leave one out: the setting chosen on the other five runs (each left out of a library of four)")
    chosen: list[Cut | None] = []
    for r in runs:
        others = [x for x in runs if x != r]
        inner: dict[LevelSetting, list[Cut | None]] = {s: [] for s in pool}
        for j in others:
            lib = [x for x in others if x != j]
            for s, cs in score_levels(histories, j, lib, pool, lives_h, prior_of, gp_cache).items():
                inner[s].extend(cs)
        pick = max(pool, key=lambda s: mean_a(inner[s]))
        chosen.extend(outer[r][pick])
        print(f"{r}: chose {pick} (inner A {mean_a(inner[pick]):.3f}), held out A {mean_a(outer[r][pick]):.3f}")
    print(f"nested: n, A, A med, coverage {summary(chosen)}")

# ------------------------------------------- a Wiener process with drift and its first-passage time
#
# The degradation ratio X(t) (the log of an indicator less the mean of its healthy-band readings), from the
# first predicting time on, as a Wiener process with drift on a nonlinear time scale (Si, Wang, Hu, Zhou &
# Pecht 2012, "Remaining useful life estimation based on a nonlinear diffusion degradation process", IEEE
# Trans. Reliability 61): X(t) = x0 + a Lambda(t) + sigma B(t), Lambda(t) = t^b (t hours since the onset,
# b = 1 the linear drift), B standard Brownian motion, the drift a random across units: normal, its prior
# learned from the library points. A reading is X plus its own normal error of sd tau (Si, Wang, Hu, Chen &
# Zhou 2013, "A Wiener-process-based degradation model with a recursive filter algorithm for remaining
# useful life estimation", Mechanical Systems and Signal Processing 35): on the FEMTO snapshots one
# reading's scatter is far larger than the process's steps, and a sigma fitted to raw increments without it
# is a diffusion of 4 log units per root hour (tried: scores 0.00-0.08). The drift and the current level are
# updated reading by reading (the recursive filter; the readings are jointly normal given the prior, so the
# filter's result is the batch Gaussian conditioning computed here): (x0, a) normal, x0 about the onset's
# reading with sd WIENER_X0_SD, a about the library's mean.
#
# The remaining life at t_k hours since the onset, the current level x_k and the drift a given (jointly
# normal after the update), is the first passage of the future increments to w_k = w - x_k:
#
#   f(l | a) ~ (w_k - a (phi - l phi')) / (sigma sqrt(2 pi l^3)) exp(-(w_k - a phi)^2 / (2 sigma^2 l)),
#
# phi(l) = Lambda(t_k + l) - Lambda(t_k) (Si et al. 2012, Theorem 1; exact, the inverse Gaussian, when
# b = 1), and with a ~ N(mu, s^2) integrated out (their Theorem 2; the Gaussian integrals of
# exp(-(w - a phi)^2 / (2 sigma^2 l)) and a times it over a):
#
#   f(l) = (w_k - (phi - l phi') (phi w_k s^2 + mu sigma^2 l) / V) / sqrt(2 pi l^2 V) exp(-(w_k - mu phi)^2 / (2 V)),
#   V = phi^2 s^2 + sigma^2 l.
#
# x_k is integrated over by equal-probability nodes, each with the drift's law given it. The failure level
# w: the fixed 20 g of the acceleration peak (in the same log ratio), or the library points' end levels
# (the trailing mean's, which vary least across runs: sd/mean 0.17 for acceleration RMS, the end-level
# table), normal, truncated below at the highest trailing mean the held-out point has passed without its
# run ending, by equal-probability nodes. The mass the density misses is the drifts that never reach the
# level: "never" keeps it (NO_CROSSING_H), "fails" leaves it out (every bearing here ran to failure: the
# distribution given that it fails within WIENER_HORIZON_H). The exponent b is a setting, or "learned":
# the b of the largest likelihood of the library's readings (Si et al. 2012's two-step maximum likelihood:
# sigma and tau common, each library point its own x0 and a; then the drift prior is the a's mean and sd).
# Tried and not kept: the update with the readings' covariance inflated by (1 + rho) / (1 - rho), rho the
# library's lag-1 autocorrelation of the whitened residuals (0.07-0.41): 0.09-0.14 against 0.10-0.17 plain
# (drifts that never cross left out).

WIENER_QUANTILES = 1000          # equally spaced probabilities standing for the remaining-life distribution
WIENER_GRID = 1500               # points of the remaining-life grid (geometric, 1e-6 h to the horizon)
WIENER_HORIZON_H = 100.0         # the longest remaining life looked at (the learning runs last 1.4 to 7.8 h)
WIENER_LEVEL_NODES = 21          # equal-probability nodes of a random failure level
WIENER_STATE_NODES = 9           # equal-probability nodes of the current level
WIENER_B_GRID = (0.5, 1.0, 1.5, 2.0, 3.0, 4.0, 6.0)   # exponents the likelihood weighs ("learned")
WIENER_MIN_READINGS = 5          # regular readings since the onset a library point needs to count
WIENER_X0_SD = 1.0               # prior sd of the level at the onset about its reading, log units (a factor e)
# the reading error's sd is kept at least this (log units: 1 %, far below any snapshot's scatter), so the
# readings' covariance stays positive definite when a smooth indicator's fit runs tau to 0
WIENER_TAU_MIN = 0.01

@dataclass(frozen=True)
class WienerSetting:
    """One setting of the Wiener-process method."""
    indicator: str        # the stored indicator modelled (its degradation ratio)
    level: str            # "fixed": 20 g of the acceleration peak; "learned": the library points' end levels
    b: float              # time-scale exponent, Lambda(t) = t^b; 0: learned from the library
    drift: str = "updated"   # "updated": the prior updated by the point's readings; "prior": the library's alone
    never: str = "never"     # "never": drifts that never reach the level stay in; "fails": left out

    def __str__(self) -> str:
        what = "20 g" if self.level == "fixed" else "learned level"
        b = "b learned" if self.b == 0 else f"b {self.b:g}"
        return f"wiener ({self.indicator}, {what}, {b}, drift {self.drift}, {self.never})"

@dataclass(frozen=True)
class WienerPrior:
    """From a library: the exponent, the drift's prior (per hour^b), the diffusion (log units per root hour),
    the reading error (log units) and the points' end levels (log ratio of the trailing mean)."""
    b: float
    mu_a: float
    sd_a: float
    sigma: float
    tau: float
    ends: np.ndarray

def first_passage_density(l_h: np.ndarray, w: np.ndarray | float, t_h: float, b: float,
                          mu_a: np.ndarray | float, sd_a: np.ndarray | float, sigma: float) -> np.ndarray:
    """Density (per hour) of the remaining life ``l_h`` from now (``t_h`` hours since the onset) to a level
    ``w`` above the current one, the drift normal (``mu_a``, ``sd_a``) (Si et al. 2012, Theorems 1 and 2;
    see the comment above). ``w``, ``mu_a`` and ``sd_a`` may be columns (one row each). Negative values of
    the approximation (b != 1) are taken as 0."""
    lh = np.asarray(l_h, float)[None, :]
    wk = np.atleast_1d(np.asarray(w, float))[:, None]
    mu = np.atleast_1d(np.asarray(mu_a, float))[:, None]
    s = np.atleast_1d(np.asarray(sd_a, float))[:, None]
    phi = (t_h + lh) ** b - t_h ** b
    bend = phi - lh * b * (t_h + lh) ** (b - 1)            # phi - l phi'; 0 for the linear drift
    v = phi ** 2 * s ** 2 + sigma ** 2 * lh
    f = (wk - bend * (phi * wk * s ** 2 + mu * sigma ** 2 * lh) / v) / np.sqrt(2 * np.pi * lh ** 2 * v) \
        * np.exp(-(wk - mu * phi) ** 2 / (2 * v))
    return np.maximum(f, 0.0)

def first_passage_cdf(l_h: np.ndarray, w: np.ndarray | float, t_h: float, b: float, mu_a: np.ndarray | float,
                      sd_a: np.ndarray | float, sigma: float) -> np.ndarray:
    """P(remaining life <= l) at the ascending times ``l_h`` (hours), the density integrated by the trapezoid
    rule on a fine geometric grid from 1e-6 h, averaged over the rows (levels, drifts); at most 1. A row
    whose level is not above 0 has already failed."""
    lh = np.asarray(l_h, float)
    grid = np.unique(np.concatenate([np.geomspace(1e-6, max(float(lh[-1]), 1e-5), WIENER_GRID), lh]))
    n = max(np.size(w), np.size(mu_a), np.size(sd_a))
    wk = np.broadcast_to(np.asarray(w, float), (n,))
    up = wk > 0
    cdf = np.ones((n, grid.size))
    if up.any():
        f = first_passage_density(grid, wk[up], t_h, b, np.broadcast_to(np.asarray(mu_a, float), (n,))[up],
                                  np.broadcast_to(np.asarray(sd_a, float), (n,))[up], sigma)
        cdf[up] = np.concatenate([np.zeros((f.shape[0], 1)),
                                  np.cumsum(0.5 * (f[:, 1:] + f[:, :-1]) * np.diff(grid)[None, :], axis=1)], axis=1)
    return np.minimum(np.interp(lh, grid, cdf.mean(axis=0)), 1.0)

def lives_from_cdf(grid: np.ndarray, cdf: np.ndarray, never: str) -> np.ndarray | None:
    """Remaining lives (hours) at WIENER_QUANTILES equally spaced probabilities of a distribution given by
    its CDF on ``grid``. "never": a probability the CDF does not reach gets NO_CROSSING_H; "fails": the
    CDF divided by its value at the horizon (None when nothing crosses)."""
    cdf = np.maximum.accumulate(np.clip(cdf, 0.0, 1.0))
    if never == "fails":
        if cdf[-1] <= 1e-9:
            return None
        cdf = cdf / cdf[-1]
    p = (np.arange(WIENER_QUANTILES) + 0.5) / WIENER_QUANTILES
    keep = np.concatenate([[True], np.diff(cdf) > 0])
    if cdf[0] >= p[-1]:
        return np.zeros(p.size)
    out = np.interp(p, cdf[keep], grid[keep], left=0.0)
    return np.where(p <= cdf[-1], out, NO_CROSSING_H)

def simulate_first_passage(w: float, t_h: float, b: float, mu_a: float, sd_a: float, sigma: float, n: int,
                           step_h: float, horizon_h: float, seed: int = LEVEL_SEED) -> np.ndarray:
    """Monte Carlo of the same process (a check of the closed form): ``n`` paths from 0 at ``t_h`` hours
    since the onset, each its own drift from N(mu_a, sd_a^2), exact Gaussian increments over steps of
    ``step_h``, the first step at or past ``w`` (never within ``horizon_h``: inf). Seeded."""
    rng = np.random.default_rng(seed)
    a = mu_a + sd_a * rng.standard_normal(n)
    edges = np.arange(0.0, horizon_h + step_h / 2, step_h)
    dphi = np.diff((t_h + edges) ** b)
    out = np.full(n, np.inf)
    x = np.zeros(n)
    alive = np.ones(n, bool)
    for i, d in enumerate(dphi):
        x[alive] += a[alive] * d + sigma * np.sqrt(step_h) * rng.standard_normal(int(alive.sum()))
        hit = alive & (x >= w)
        out[hit] = edges[i + 1]
        alive &= ~hit
        if not alive.any():
            break
    return out

def wiener_series(h: dict, indicator: str, upto_s: float = np.inf
                  ) -> tuple[np.ndarray, np.ndarray, float, float] | None:
    """(hours since the first predicting time, the degradation ratio of each single reading there, the
    highest trailing-mean ratio since the onset, the healthy mean of the log) of one point's regular
    readings from its onset to ``upto_s`` (seconds); the onset by onset.yaml's rule on the health indicator
    as it stood then. None before the onset."""
    from bench.femto import regular

    t, v, hi = point_arrays(h, indicator)
    k = t <= upto_s + 1e-6
    t, v, hi = t[k], v[k], hi[k]
    on = first_predicting_time(hi, shipped_settings())
    if on.index is None:
        return None
    log_v = np.log(np.maximum(v, 1e-12))
    base = float(np.mean(log_v[:on.early]))
    mean = smooth_log(v, shipped_settings().smooth_readings) - base
    keep = regular(t)
    keep[:on.index] = False
    keep[on.index] = True
    return (t[keep] - t[on.index]) / 3600.0, log_v[keep] - base, float(np.max(mean[on.index:])), base

def wiener_fixed_effects(t_h: np.ndarray, y: np.ndarray, b: float, sigma: float, tau: float
                         ) -> tuple[np.ndarray, float]:
    """Generalised least squares of (x0, a) of one point's readings, sigma and tau given, and the restricted
    log likelihood (REML, Patterson & Thompson 1971, Biometrika 58: the likelihood with the two fitted
    coefficients plugged in runs sigma to 0, the fitted line taking up the random walk) of the readings
    normal about x0 + a t^b with covariance sigma^2 min(t, t') + tau^2 I."""
    c = sigma ** 2 * np.minimum(t_h[:, None], t_h[None, :]) + tau ** 2 * np.eye(len(t_h))
    chol = np.linalg.cholesky(c)
    x = np.column_stack([np.ones_like(t_h), t_h ** b])
    wx = np.linalg.solve(chol, x)
    wy = np.linalg.solve(chol, y)
    coef, *_ = np.linalg.lstsq(wx, wy, rcond=None)
    r = wy - wx @ coef
    restricted = 0.5 * np.linalg.slogdet(wx.T @ wx)[1]
    return coef, float(-0.5 * (r @ r) - np.sum(np.log(np.diag(chol))) - 0.5 * len(y) * np.log(2 * np.pi)
                       - restricted)

def wiener_fit(series: list[tuple[np.ndarray, np.ndarray]], b: float) -> tuple[float, float, float]:
    """(sigma, tau, log likelihood) common to the library points, each with its own (x0, a), by maximum
    likelihood (scipy's Nelder-Mead on the logs)."""
    from scipy.optimize import minimize

    low = np.log([1e-3, WIENER_TAU_MIN])

    def nll(p: np.ndarray) -> float:
        sg, ta = np.exp(np.clip(p, low, 5))
        return -sum(wiener_fixed_effects(t, y, b, sg, ta)[1] for t, y in series)

    best = None
    for start in (np.log([0.5, 0.3]), np.log([2.0, 0.1])):
        r = minimize(nll, start, method="Nelder-Mead", options={"xatol": 1e-4, "fatol": 1e-6, "maxiter": 400})
        if best is None or r.fun < best.fun:
            best = r
    assert best is not None
    sg, ta = np.exp(np.clip(best.x, low, 5))
    return float(sg), float(ta), float(-best.fun)

def wiener_prior(histories: dict, runs: list[str], indicator: str, b: float, fits: dict) -> WienerPrior:
    """The drift prior, diffusion, reading error and exponent (``b`` 0: the likelihood's best of
    WIENER_B_GRID) from the library points' whole runs since their onsets (those with WIENER_MIN_READINGS
    regular readings since); ``fits`` keeps the fits per (runs, indicator, b)."""
    series, ends = [], []
    for r in runs:
        for pt in sorted(histories[r]):
            d = wiener_series(histories[r][pt], indicator)
            if d is None:
                continue
            if len(d[0]) >= WIENER_MIN_READINGS:
                series.append((d[0], d[1]))
            # the point's end level: its trailing mean's last ratio
            v = point_arrays(histories[r][pt], indicator)[1]
            ends.append(float(smooth_log(v, shipped_settings().smooth_readings)[-1] - d[3]))

    def fit(e: float) -> tuple[float, float, float]:
        key = (tuple(sorted(runs)), indicator, e)
        if key not in fits:
            fits[key] = wiener_fit(series, e)
        return fits[key]

    if b == 0:
        b = max(WIENER_B_GRID, key=lambda e: fit(e)[2])
    sigma, tau, _ = fit(b)
    a = np.array([wiener_fixed_effects(t, y, b, sigma, tau)[0][1] for t, y in series])
    return WienerPrior(float(b), float(np.mean(a)), float(np.std(a, ddof=1)), sigma, tau, np.array(ends))

def wiener_state(prior: WienerPrior, t_h: np.ndarray, y: np.ndarray) -> tuple[float, float, float, float, float]:
    """The joint normal of the current level X(t_k) and the drift a after the readings (mean x, mean a,
    var x, var a, cov): Gaussian conditioning of the process on its readings with their error, in the
    information form (stable for any drift scale): first (x0, a) (x0 about the first reading, a about
    the prior's mean) with the Brownian part and the errors as the noise, then the Brownian part now
    given the readings and (x0, a)."""
    b, tk = prior.b, float(t_h[-1])
    c = prior.sigma ** 2 * np.minimum(t_h[:, None], t_h[None, :]) + max(prior.tau, WIENER_TAU_MIN) ** 2 * np.eye(
        len(t_h))
    chol = np.linalg.cholesky(c)
    x = np.column_stack([np.ones_like(t_h), t_h ** b])
    wx, wy = np.linalg.solve(chol, x), np.linalg.solve(chol, y)
    m0 = np.array([y[0], prior.mu_a])
    p0_inv = np.diag([1.0 / WIENER_X0_SD ** 2, 1.0 / prior.sd_a ** 2])
    p = np.linalg.inv(p0_inv + wx.T @ wx)
    beta = p @ (p0_inv @ m0 + wx.T @ wy)
    ck = np.linalg.solve(chol, prior.sigma ** 2 * np.minimum(t_h, tk))     # the Brownian part now, whitened
    u = np.array([1.0, tk ** b]) - wx.T @ ck
    v_e = max(prior.sigma ** 2 * tk - float(ck @ ck), 0.0)
    mean_x = float(ck @ wy + u @ beta)
    var_x = float(u @ p @ u + v_e)
    return mean_x, float(beta[1]), max(var_x, 1e-12), max(float(p[1, 1]), 1e-12), float(u @ p[:, 1])

def wiener_levels(prior: WienerPrior, passed: float) -> np.ndarray:
    """Equal-probability nodes of the failure level: normal of the library's end levels, truncated below at
    the level already passed."""
    from scipy.stats import truncnorm

    m, sd = float(np.mean(prior.ends)), max(float(np.std(prior.ends, ddof=1)), 1e-3)
    a = min((passed - m) / sd, 30.0)
    p = (np.arange(WIENER_LEVEL_NODES) + 0.5) / WIENER_LEVEL_NODES
    return np.asarray(truncnorm(a, np.inf, loc=m, scale=sd).ppf(p))

def wiener_cdf(prior: WienerPrior, d: tuple[np.ndarray, np.ndarray, float, float], level: str, drift: str,
               grid: np.ndarray) -> np.ndarray:
    """The remaining life's CDF on ``grid`` of one point (its ``wiener_series``): the level and drift after
    its readings (``drift`` "prior": the library's drift, independent of the level), nodes over both."""
    from scipy.stats import norm

    t_h, y, passed, healthy = d
    mx, ma, vx, va, cov = wiener_state(prior, t_h, y)
    z = norm.ppf((np.arange(WIENER_STATE_NODES) + 0.5) / WIENER_STATE_NODES)
    xs = mx + np.sqrt(vx) * z
    if drift == "updated":
        mus, sds = ma + cov / vx * (xs - mx), np.full(xs.size, np.sqrt(max(va - cov ** 2 / vx, 1e-12)))
    else:
        mus, sds = np.full(xs.size, prior.mu_a), np.full(xs.size, prior.sd_a)
    levels = np.array([np.log(LIMIT_G) - healthy]) if level == "fixed" else wiener_levels(prior, passed)
    w = (levels[:, None] - xs[None, :]).ravel()
    return first_passage_cdf(grid, w, float(t_h[-1]), prior.b, np.tile(mus, levels.size),
                             np.tile(sds, levels.size), prior.sigma)

def score_wiener_run(histories: dict, run: str, library_runs: list[str], settings: list[WienerSetting],
                     lives_h: dict[str, float], cache: dict) -> dict[WienerSetting, list[Cut | None]]:
    """Each Wiener setting's answer at each cut of ``run`` (prior, exponent and levels from ``library_runs``;
    fits and series kept in ``cache``); each point on its own, the earlier answer counting as bench.femto
    takes tellwave's. A point whose acceleration peak has reached 20 g: 0. Before the first predicting
    time: no answer."""
    grid = np.geomspace(1e-6, WIENER_HORIZON_H, WIENER_GRID)
    fits = cache.setdefault("fits", {})
    out: dict[WienerSetting, list[Cut | None]] = {s: [] for s in settings}
    for cut in CUTS:
        now_h = cut * lives_h[run]
        actual = _actual_h(histories, run, now_h, lives_h)
        cdfs: dict = {}
        for s in settings:
            pkey = (tuple(sorted(library_runs)), s.indicator, s.b)
            if pkey not in cache:
                cache[pkey] = wiener_prior(histories, library_runs, s.indicator, s.b, fits)
            prior = cache[pkey]
            found = []
            for pt in sorted(histories[run]):
                h = histories[run][pt]
                t, v, _ = point_arrays(h, LIMITED)
                if v[t <= now_h * 3600.0 + 1e-6][-1] >= LIMIT_G:
                    found.append((0.0, 0.0, 0.0, 0.0))
                    continue
                skey = (run, pt, cut, s.indicator)
                if skey not in cache:
                    cache[skey] = wiener_series(h, s.indicator, now_h * 3600.0)
                d = cache[skey]
                if d is None:
                    continue
                ckey = (pt, pkey, s.level, s.drift)
                if ckey not in cdfs:
                    cdfs[ckey] = wiener_cdf(prior, d, s.level, s.drift, grid)
                lives = lives_from_cdf(grid, cdfs[ckey], s.never)
                got = None if lives is None else answer([(lives, np.ones(len(lives)))])
                if got is not None:
                    found.append(got)
            out[s].append(earliest(found, actual))
    return out

def wiener_grid() -> list[WienerSetting]:
    """The Wiener settings weighed."""
    return [WienerSetting(ind, level, b, drift, never)
            for ind, level in (("accel_rms_g", "learned"), ("accel_peak_g", "learned"), ("accel_peak_g", "fixed"))
            for b in (1.0, 2.0, 0.0) for drift in ("updated", "prior") for never in ("never", "fails")]

def wiener_report(histories: dict, runs: list[str], lives_h: dict[str, float]) -> None:
    """Leave one run out for every Wiener setting, nested leave one out to choose one, and the in-sample
    upper bound (prior, exponent and levels from all six runs, the scored one included)."""
    settings = wiener_grid()
    cache: dict = {}
    outer = {r: score_wiener_run(histories, r, [x for x in runs if x != r], settings, lives_h, cache) for r in runs}
    print("\nWiener process with drift, first-passage time (Si et al. 2012; level and drift updated from a library "
          "prior, Si et al. 2013), "
          "leave one run out")
    print(f"{'setting':<72}{'n':>4}{'A':>7}{'A med':>7}{'cov':>7}  per run A " + " ".join(r[-3:] for r in runs))
    for s in settings:
        allc = [c for r in runs for c in outer[r][s]]
        print(f"{str(s):<72}{summary(allc)}  " + " ".join(f"{mean_a(outer[r][s]):.2f}" for r in runs))
    best = max(settings, key=lambda s: mean_a([c for r in runs for c in outer[r][s]]))
    print(f"best setting on the scored runs themselves (tuned on them): {best}, "
          f"{summary([c for r in runs for c in outer[r][best]])}")
    insample = {r: score_wiener_run(histories, r, runs, settings, lives_h, cache) for r in runs}
    best_in = max(settings, key=lambda s: mean_a([c for r in runs for c in insample[r][s]]))
    print(f"in sample (prior and levels from all six runs, the scored one included), best setting {best_in}: "
          f"{summary([c for r in runs for c in insample[r][best_in]])}  per run "
          + " ".join(f"{mean_a(insample[r][best_in]):.2f}" for r in runs))
    print("nested leave one out: the setting chosen on the other five runs (each left out of a library of four)")
    chosen: list[Cut | None] = []
    for r in runs:
        others = [x for x in runs if x != r]
        inner: dict[WienerSetting, list[Cut | None]] = {s: [] for s in settings}
        for j in others:
            for s, cs in score_wiener_run(histories, j, [x for x in others if x != j], settings, lives_h,
                                          cache).items():
                inner[s].extend(cs)
        pick = max(settings, key=lambda s: mean_a(inner[s]))
        chosen.extend(outer[r][pick])
        print(f"{r}: chose {pick} (inner A {mean_a(inner[pick]):.3f}), held out A {mean_a(outer[r][pick]):.3f}, "
              f"coverage {summary(outer[r][pick]).split()[-1]}")
    print(f"nested: n, A, A med, coverage {summary(chosen)}  per run "
          + " ".join(f"{mean_a(c):.2f}" for c in (chosen[i * len(CUTS):(i + 1) * len(CUTS)]
                                                    for i in range(len(runs)))))

# ------------------------------------------------ the Gaussian process alone: stable draws, calibrated intervals
#
# ``--gp-only`` scores the Gaussian-process settings alone (a few minutes instead of twenty):
#
# - Stable draws: the paths, thresholds and library growths are drawn by randomised quasi-Monte Carlo,
#   a scrambled Sobol point set (Owen 1997, "Scrambled net variance for integrals of smooth functions",
#   Annals of Statistics 25; scipy.stats.qmc), one dimension per principal component of the predictive
#   covariance that holds GP_MODES of its variance, one for the threshold (its inverse distribution
#   function) and one for the library growth (stratified over the library points, each drawn equally
#   often). The seed scrambles the set; the score's spread over GP_SEEDS is printed.
# - Why the intervals miss: the share of cuts whose actual life falls below the 80 % interval (the
#   bearing failed sooner than the 10th percentile) and above it, and the interval's width (log of 90th
#   over 10th percentile), per setting.
# - Calibrated intervals: recalibrated regression (Kuleshov, Fenner & Ermon 2018, "Accurate
#   uncertainties for deep learning using calibrated regression", ICML): the probability integral
#   transform of the actual life (the share of the predictive's lives below it) is collected on the
#   library alone, each library run left out in turn and scored with a library of the others; the
#   held-out run's predictive lives are then mapped through the quantile function of those values, so
#   that a level q of the answer is the level at which a share q of the library's actual lives fell.
#   Nothing of the scored run enters its own calibration.

GP_SEEDS = (20261205, 1, 2, 3, 4)

@dataclass(frozen=True)
class GpRaw:
    """One cut of a run under one setting: the actual remaining life (hours) and the lives (hours) of the
    earlier point's predictive (the smaller median), as drawn."""
    actual: float
    lives: np.ndarray

def gp_settings(everything: bool = False) -> list[LevelSetting]:
    """The Gaussian-process settings of ``level_grid``; unless ``everything``, those of the acceleration
    peak (the indicator a user's --limit is on) whose growth is pinned or drawn, to 20 g or to each
    point's own end levels. The free growth is left out: its interval misses late (the actual life under
    its 10th percentile at 69-83 % of the cuts); the run's ends score as the point's (0.141 and 0.211)."""
    return [s for s in level_grid() if s.method == "gaussian process"
            and (everything or (s.indicator == LIMITED and s.slope != "free" and s.ends != "run"))]





def gp_lives_rqmc(g: tuple[np.ndarray, np.ndarray, np.ndarray], s: LevelSetting, grow: np.ndarray,
                  ends: np.ndarray | None, above: float, fixed_level: float, seed: int) -> np.ndarray:
    """Remaining lives (hours) of one point under setting ``s`` from its predictive ``g`` (future hours,
    mean, principal parts), by randomised quasi-Monte Carlo (``engine.trend.pool.gp_lives_rqmc``)."""
    return _gp_lives_rqmc(g, s.slope == "drawn", grow, ends, above, fixed_level, seed)

ACT_BY_LEVELS = np.linspace(0.0025, 0.9975, 399)   # candidates of the act-by time: finer than percentiles

def act_by_fine(lives: np.ndarray) -> float:
    """``act_by_weighted`` of equal draws, among the lives' quantiles at ACT_BY_LEVELS: percentiles of a
    wide predictive lie about 5 % apart, where the score halves when late."""
    cands = np.unique(np.quantile(lives, ACT_BY_LEVELS))
    cands = cands[cands > 0]
    if cands.size == 0:
        return 0.0
    # the expectation over 2048 evenly spaced quantiles of the lives (their distribution, summarised)
    truth = np.maximum(np.quantile(lives, (np.arange(2048) + 0.5) / 2048), 1e-12)
    er = 100 * (truth[None, :] - cands[:, None]) / truth[None, :]
    return float(cands[int(np.argmax(challenge_score(er).mean(axis=1)))])

def score_gp(histories: dict, run: str, library_runs: list[str], settings: list[LevelSetting],
             lives_h: dict[str, float], seed: int, cache: dict) -> dict[LevelSetting, list[GpRaw | None]]:
    """Every Gaussian-process setting's predictive at each cut of ``run`` (as ``score_levels``, with stable
    draws); the predictives, which do not depend on the seed, are kept in ``cache``."""
    out: dict[LevelSetting, list[GpRaw | None]] = {s: [] for s in settings}
    indicators = {s.indicator for s in settings}
    ends = {(s.indicator, s.ends): end_levels(histories, library_runs, s.indicator, s.ends, True)
            for s in settings if s.ends != "fixed"}
    slopes = {ind: library_slopes(histories, library_runs, ind) for ind in indicators}
    for ci, cut in enumerate(CUTS):
        now_h = cut * lives_h[run]
        actual = _actual_h(histories, run, now_h, lives_h)
        arrays = {}
        for pt in sorted(histories[run]):
            for ind in indicators:
                t, v, hi = point_arrays(histories[run][pt], ind)
                k = t <= now_h * 3600.0 + 1e-6
                arrays[pt, ind] = (t[k] / 86400.0, v[k], hi[k])
        for s in settings:
            passed = {}
            for pt in sorted(histories[run]):
                days, v, hi = arrays[pt, s.indicator]
                passed[pt] = float(np.max(level_ratio(v, healthy_level(v, hi)[0], True)))
            found = []
            for pt in sorted(histories[run]):
                days, v, hi = arrays[pt, s.indicator]
                phi = healthy_level(v, hi)[0]
                if s.ends == "fixed" and v[-1] >= LIMIT_G:
                    found.append((0.0, np.zeros(1)))
                    continue
                grow = slopes[s.indicator]
                sd = float(np.std(grow, ddof=1)) if s.slope == "free" else PINNED_SD
                key = (run, ci, pt, s.indicator, tuple(library_runs), sd)
                if key not in cache:
                    g = gp_predictive_since_onset(days, v, hi, (float(np.mean(grow)), sd))
                    cache[key] = None if g is None else predictive_parts(g)
                if cache[key] is None:
                    continue
                above = max(passed.values()) if s.ends == "run" else passed[pt]
                lives = gp_lives_rqmc(cache[key], s, grow, None if s.ends == "fixed" else ends[s.indicator, s.ends],
                                      above, float(np.log(LIMIT_G / phi)), seed)
                found.append((float(np.median(lives)), lives))
            out[s].append(None if not found else GpRaw(actual, min(found, key=lambda f: f[0])[1]))
    return out

def pit(raw: GpRaw) -> float:
    """The probability integral transform of the actual life: the share of the predictive's lives below it."""
    return _pit(raw.lives, raw.actual)

def judge(raw: GpRaw | None, pits: np.ndarray | None = None) -> Cut | None:
    """The cut's scores from its predictive, recalibrated by the library's ``pits`` when given."""
    if raw is None:
        return None
    lives = raw.lives if pits is None or len(pits) == 0 else recalibrated(raw.lives, pits)
    med, lo, hi = (float(np.quantile(lives, q)) for q in (0.5, 0.1, 0.9))
    act = act_by_fine(lives)
    return Cut.judged(raw.actual, med, lo, hi, act)

def misses(raws: list[GpRaw | None]) -> str:
    """'below, above, width': shares of answered cuts whose actual life fell below the 10th or above the
    90th percentile of the predictive, and the median log ratio of the 90th to the 10th percentile."""
    got = [r for r in raws if r is not None]
    if not got:
        return ""
    p = np.array([pit(r) for r in got])
    width = np.median([np.log(max(np.quantile(r.lives, 0.9), 1e-6) / max(np.quantile(r.lives, 0.1), 1e-6))
                       for r in got])
    return f"{np.mean(p < 0.1):6.0%}{np.mean(p > 0.9):6.0%}{width:7.2f}"

def gp_methods(histories: dict, runs: list[str], lives_h: dict[str, float], seeds: tuple[int, ...],
               everything: bool = False) -> None:
    """The Gaussian-process settings alone: leave one run out under each seed (the spread of the mean A
    over the seeds), why the intervals miss, then each setting recalibrated on its library (nested: the
    calibration from the other five runs, each left out of a library of four), with an in-sample bound."""
    settings = gp_settings(everything)
    cache: dict = {}
    print("\nGaussian process alone, leave one run out, quasi-random draws (below / above: actual life under "
          "the 10th / over the 90th percentile; width: ln(q90 / q10))")
    outer = {seed: {r: score_gp(histories, r, [x for x in runs if x != r], settings, lives_h, seed, cache)
                    for r in runs} for seed in seeds}
    plain = {seed: {r: {s: [judge(c) for c in outer[seed][r][s]] for s in settings} for r in runs} for seed in seeds}
    first = seeds[0]
    print(f"{'setting':<58}{'n':>4}{'A':>7}{'A med':>7}{'cov':>7}{'below':>6}{'above':>6}{'width':>7}"
          f"{'A seeds':>16}  per run A " + " ".join(r[-3:] for r in runs))
    for s in settings:
        a = [mean_a([c for r in runs for c in plain[seed][r][s]]) for seed in seeds]
        print(f"{str(s):<58}{summary([c for r in runs for c in plain[first][r][s]])}"
              f"{misses([c for r in runs for c in outer[first][r][s]])}{min(a):8.3f}-{max(a):.3f}  "
              + " ".join(f"{mean_a(plain[first][r][s]):.2f}" for r in runs))
    # recalibrated on the library: PIT values of every other run, scored with a library of the rest
    print("\nrecalibrated on the library (Kuleshov et al. 2018), nested: each run's calibration from the "
          "other five, each left out of a library of four")
    inner_pits: dict[str, dict[LevelSetting, np.ndarray]] = {}
    for r in runs:
        others = [x for x in runs if x != r]
        got_pits: dict[LevelSetting, list[float]] = {s: [] for s in settings}
        for j in others:
            got = score_gp(histories, j, [x for x in others if x != j], settings, lives_h, first, cache)
            for s in settings:
                got_pits[s].extend(pit(c) for c in got[s] if c is not None)
        inner_pits[r] = {s: np.array(v) for s, v in got_pits.items()}
    recal = {seed: {r: {s: [judge(c, inner_pits[r][s]) for c in outer[seed][r][s]] for s in settings} for r in runs}
             for seed in seeds}
    print(f"{'setting':<58}{'n':>4}{'A':>7}{'A med':>7}{'cov':>7}{'A seeds':>16}  per run A "
          + " ".join(r[-3:] for r in runs))
    for s in settings:
        a = [mean_a([c for r in runs for c in recal[seed][r][s]]) for seed in seeds]
        print(f"{str(s):<58}{summary([c for r in runs for c in recal[first][r][s]])}{min(a):8.3f}-{max(a):.3f}  "
              + " ".join(f"{mean_a(recal[first][r][s]):.2f}" for r in runs))
    # in sample: library, prior growth and calibration from all six runs, the scored one among them
    inside = {r: score_gp(histories, r, runs, settings, lives_h, first, cache) for r in runs}
    print("in sample (library, growths and calibration from all six runs, the scored one included):")
    for s in settings:
        pits_all = np.array([pit(c) for r in runs for c in inside[r][s] if c is not None])
        print(f"{str(s):<58}{summary([judge(c) for r in runs for c in inside[r][s]])}  recalibrated "
              f"{summary([judge(c, pits_all) for r in runs for c in inside[r][s]])}")


# ------------------------------------------------- a linear opinion pool of three methods
#
# Methods whose errors differ can do better together than alone. The linear opinion pool (Stone 1961,
# "The opinion pool", Annals of Mathematical Statistics 32; Genest & Zidek 1986, "Combining probability
# distributions: a critique and an annotated bibliography", Statistical Science 1) pools their predictive
# distributions of the remaining life: F(x) = sum_k w_k F_k(x), the weights at least 0 and summing to 1.
# The three methods pooled, each as it is scored alone above:
#
# - ``exponential``: tellwave's Bayesian exponential model to 20 g, its Monte Carlo draws (bench.femto's);
# - ``gaussian process``: the GP to each point's learned end level with drawn growth (POOL_GP), recalibrated
#   on its library (Kuleshov et al. 2018): the calibration of a library L is the PIT values of each run i
#   of L scored with the library L less i;
# - ``hazards``: the Weibull proportional-hazards model in bearing form, its setting chosen as
#   ``hazard_report`` chooses it (the best mean score over the library's runs, each scored with a
#   library of the rest).
#
# Each method answers with the earlier of its points (the smaller median), as alone; its answer stands
# as its quantiles at engine.trend.pool.LEVELS. A method with no answer at a cut (before its own onset) leaves the
# pool; the others keep their weights, renormalised (all of them equal when those left weigh nothing).
# The act-by time is the point with the best expected challenge score under the pool: by linearity,
# sum_k w_k E_k[A(point)], so each method's expectation is computed once per cut and any weights read
# from it. Weights: "equal" (1/3 each, the un-tuned choice), or "nested": on a grid of step POOL_STEP
# over the simplex, the weights with the best mean score over the held-out run's library, each of its
# runs scored with a library of the rest (ties: the weights nearest equal). The GP's calibration and the
# hazards' setting inside that inner loop are the inner libraries' own (the hazards' setting is the one
# chosen for the outer fold, on the same five runs: the held-out run never enters).

POOL_METHODS = ("exponential", "gaussian process", "hazards")
POOL_STEP = 0.1                                  # the weights' grid on the simplex (66 triples of three)
POOL_GP = LevelSetting("gaussian process", LIMITED, "point", True, "drawn")
POOL_SEED = GP_SEEDS[0]
POOL_MIN_H = 1.0 / 3600.0                        # a median under one second counts as one second (bench.femto)


@dataclass(frozen=True)
class PoolCut:
    """One cut, ready to be pooled under any weights: the actual remaining life and the time elapsed
    (hours), and the methods' answers laid on common points (``engine.trend.pool.Pool``)."""
    run: str
    actual: float
    elapsed: float
    pool: Pool

    @property
    def answered(self) -> tuple[bool, ...]:
        return self.pool.answered


def pool_cut(run: str, actual: float, elapsed: float, lives: list[np.ndarray | None]) -> PoolCut | None:
    """A PoolCut from each method's remaining lives (hours, any number of them; None: no answer);
    None when no method answers."""
    pool = pool_of(lives)
    return None if pool is None else PoolCut(run, actual, elapsed, pool)


def pool_weights(c: PoolCut, weights: tuple[float, ...]) -> np.ndarray:
    """The weights of the methods that answered at the cut, renormalised (equal when they weigh nothing)."""
    return c.pool.weights(weights)


def pool_quantile(c: PoolCut, weights: tuple[float, ...], q: float) -> float:
    """The ``q`` quantile of the pool: the first point where its distribution function reaches q."""
    return c.pool.quantile(weights, q)


def pool_act_by(c: PoolCut, weights: tuple[float, ...]) -> float:
    """The point (above 0) with the best expected challenge score under the pool (0: none above 0)."""
    return c.pool.act_by(weights)


def pool_judge(c: PoolCut | None, weights: tuple[float, ...]) -> tuple[Cut, float] | None:
    """The cut's scores under the pool (``Cut``) and the pool's median (hours); None: no answer."""
    if c is None:
        return None
    med, lo, hi = (pool_quantile(c, weights, q) for q in (0.5, 0.1, 0.9))
    act = pool_act_by(c, weights)
    return Cut.judged(c.actual, med, lo, hi, act), med


def simplex(k: int, step: float) -> list[tuple[float, ...]]:
    """Every k-tuple of multiples of ``step`` at least 0 that sums to 1."""
    n = int(round(1 / step))
    return [tuple(i * step for i in (*combo, n - sum(combo))) for combo in itertools.product(range(n + 1), repeat=k - 1)
            if sum(combo) <= n]


def choose_weights(cuts: list[PoolCut | None], k: int, step: float = POOL_STEP) -> tuple[float, ...]:
    """The weights on the simplex grid with the best mean score A over the answered cuts; among equals
    the nearest to equal weights."""
    equal = np.full(k, 1.0 / k)

    def key(w: tuple[float, ...]) -> tuple[float, float]:
        got = [j[0].a for c in cuts if (j := pool_judge(c, w)) is not None]
        return round(float(np.mean(got)) if got else 0.0, 9), -float(np.sum((np.array(w) - equal) ** 2))

    return max(simplex(k, step), key=key)


def _exponential_lives(histories: dict, run: str, prior: Prior, now_h: float) -> np.ndarray | None:
    """tellwave's exponential model at the cut (as bench.femto projects it): the remaining lives (hours)
    of the point with the smaller median; a point at or past 20 g answers 0."""
    from bench.femto import point_single

    best: tuple[float, np.ndarray] | None = None
    for pt in sorted(histories[run]):
        h = histories[run][pt]
        t, v, hi = point_arrays(h, LIMITED)
        k = t <= now_h * 3600.0 + 1e-6
        if v[k][-1] >= LIMIT_G:
            got: tuple[float, np.ndarray] | None = (0.0, np.zeros(1))
        else:
            proj, life = exponential_life(t[k] / 86400.0, v[k], LIMIT_G, f"{LIMIT_G:g} g", hi[k], LIMITED,
                                          {LIMITED: prior}, single=point_single(h, LIMITED)[k])
            got = None if life is None or proj.days is None else (
                proj.days * 24.0, np.minimum(np.array(life.draws) * 24.0, NO_CROSSING_H))
        if got is not None and (best is None or got[0] < best[0]):
            best = got
    return None if best is None else best[1]


def _hazard_lives(histories: dict, run: str, fit: HazardFit, s: HazardSetting, now_h: float) -> np.ndarray | None:
    """The proportional-hazards remaining lives (hours) at the cut, as ``score_hazard_run`` answers
    (the unit with the smaller median)."""
    best: tuple[float, np.ndarray] | None = None
    for c in _units(histories[run], s.points, now_h * 3600.0):
        x = hazard_answer(c, fit, s)
        if x is not None and (best is None or float(np.median(x)) < best[0]):
            best = (float(np.median(x)), x)
    return None if best is None else best[1]


class PoolInputs:
    """The pooled methods' answers on any run with any library, computed once each (priors, GP
    predictives and calibrations, hazard fits and setting choices are cached)."""

    def __init__(self, histories: dict, runs: list[str], lives_h: dict[str, float], seed: int = POOL_SEED):
        self.h, self.runs, self.lives_h, self.seed = histories, runs, lives_h, seed
        self.gp_cache: dict = {}
        self._priors: dict[tuple[str, ...], Prior] = {}
        self._gp: dict[tuple[str, tuple[str, ...]], list[GpRaw | None]] = {}
        self._pits: dict[tuple[str, ...], np.ndarray] = {}
        self._fits: dict[tuple, HazardFit] = {}
        self._hazard_choice: dict[tuple[str, ...], HazardSetting] = {}
        self._cuts: dict[tuple[str, tuple[str, ...], tuple[str, ...]], list[PoolCut | None]] = {}

    def under(self, seed: int) -> PoolInputs:
        """The same inputs under another seed of the GP's draws, sharing what the seed does not change
        (priors, GP predictives, hazard fits and setting choices)."""
        other = PoolInputs(self.h, self.runs, self.lives_h, seed)
        other.gp_cache, other._priors, other._fits = self.gp_cache, self._priors, self._fits
        other._hazard_choice = self._hazard_choice
        return other

    def prior(self, lib: tuple[str, ...]) -> Prior:
        if lib not in self._priors:
            self._priors[lib] = prior_from(self.h, list(lib))
        return self._priors[lib]

    def gp(self, run: str, lib: tuple[str, ...]) -> list[GpRaw | None]:
        if (run, lib) not in self._gp:
            self._gp[run, lib] = score_gp(self.h, run, list(lib), [POOL_GP], self.lives_h, self.seed,
                                          self.gp_cache)[POOL_GP]
        return self._gp[run, lib]

    def pits(self, lib: tuple[str, ...]) -> np.ndarray:
        """The GP's calibration for a predictive made with library ``lib``: each run of it scored with the rest."""
        if lib not in self._pits:
            self._pits[lib] = np.array([pit(c) for i in lib for c in self.gp(i, tuple(x for x in lib if x != i))
                                        if c is not None])
        return self._pits[lib]

    def hazard_setting(self, lib: tuple[str, ...]) -> HazardSetting:
        """The bearing-form setting with the best mean score over ``lib``'s runs, each with a library of the rest."""
        if lib not in self._hazard_choice:
            family = [s for s in hazard_grid() if s.points == "bearing"]
            inner: dict[HazardSetting, list[Cut | None]] = {s: [] for s in family}
            for j in lib:
                for s, cs in score_hazard_run(self.h, j, [x for x in lib if x != j], family, self.lives_h).items():
                    inner[s].extend(cs)
            self._hazard_choice[lib] = max(family, key=lambda s: mean_a(inner[s]))
        return self._hazard_choice[lib]

    def hazard_fit(self, lib: tuple[str, ...], s: HazardSetting) -> HazardFit:
        key = (lib, s.points, s.clock, s.covariate, s.ridge)
        if key not in self._fits:
            data = [clock_of(c, s.clock, s.covariate) for r in lib for c in _units(self.h[r], s.points)
                    if c.onset_h is not None or s.clock == "run"]
            self._fits[key] = fit_hazard([d for d in data if len(d[0]) >= 3], s.ridge)
        return self._fits[key]

    def cuts(self, run: str, lib: tuple[str, ...], choice_lib: tuple[str, ...]) -> list[PoolCut | None]:
        """The pool's cuts of ``run`` with library ``lib``; the hazards' setting chosen on ``choice_lib``."""
        key = (run, lib, choice_lib)
        if key not in self._cuts:
            s = self.hazard_setting(choice_lib)
            fit = self.hazard_fit(lib, s)
            pits = self.pits(lib)
            gp = self.gp(run, lib)
            out: list[PoolCut | None] = []
            for ci, cut in enumerate(CUTS):
                now_h = cut * self.lives_h[run]
                actual = _actual_h(self.h, run, now_h, self.lives_h)
                raw = gp[ci]
                lives = [_exponential_lives(self.h, run, self.prior(lib), now_h),
                         None if raw is None else (recalibrated(raw.lives, pits) if len(pits) else raw.lives),
                         _hazard_lives(self.h, run, fit, s, now_h)]
                out.append(pool_cut(run, actual, self.lives_h[run] - actual, lives))
            self._cuts[key] = out
        return self._cuts[key]


def pool_prior_from(ins: PoolInputs, lib: tuple[str, ...]) -> PoolPrior:
    """What ``tellwave trend``'s pool needs, learned from the runs ``lib`` only (a fold's library): each
    point's end level and growth, the GP's calibration (each run of ``lib`` scored with the rest), the
    hazards' bearing-form setting chosen on ``lib`` (each run scored with the rest) and its fit on ``lib``."""
    h = ins.h
    spacing = float(np.median(np.concatenate([np.diff(h[r][pt][LIMITED][0]) for r in lib for pt in h[r]])))
    s = ins.hazard_setting(lib)
    return PoolPrior(f"pool prior learned from {len(lib)} accelerated laboratory run-to-failure tests",
                     LIMITED, LIMIT_G, spacing, end_levels(h, list(lib), LIMITED, "point", True),
                     library_slopes(h, list(lib), LIMITED), ins.pits(lib), s, ins.hazard_fit(lib, s), lib)


def _pool_row(name: str, judged: list[tuple[Cut, float] | None], cuts: list[PoolCut | None], runs: list[str]) -> str:
    """'name n A A-med coverage spread  per-run A' of judged cuts (in run order, len(CUTS) each)."""
    got = [(j, c) for j, c in zip(judged, cuts) if j is not None and c is not None]
    spread = float(np.std([np.log(c.actual / max(j[1], POOL_MIN_H)) for j, c in got])) if got else float("nan")
    per = [mean_a([j[0] for j in judged[i * len(CUTS):(i + 1) * len(CUTS)] if j is not None]) for i in range(len(runs))]
    return f"{name:<52}{summary([j[0] for j, _ in got])}{spread:8.2f}  " + " ".join(f"{a:.2f}" for a in per)


def pool_report(histories: dict, runs: list[str], lives_h: dict[str, float],
                seeds: tuple[int, ...] = (POOL_SEED,)) -> None:
    """The three methods alone and pooled (equal weights; nested weights), leave one run out, beside the
    naive baselines of the same cuts; the weights best on the scored runs themselves as a bound. Under
    each further seed of the GP's draws, the GP alone and the equal pool again (their spread over seeds)."""
    ins = PoolInputs(histories, runs, lives_h, seeds[0])
    outer: list[PoolCut | None] = []
    chosen: dict[str, tuple[float, ...]] = {}
    print("\nlinear opinion pool (Stone 1961; Genest & Zidek 1986) of tellwave's exponential model, the GP (learned "
          "end level, drawn growth, recalibrated) and proportional hazards (bearing form), leave one run out")
    for r in runs:
        lib = tuple(x for x in runs if x != r)
        cs = ins.cuts(r, lib, lib)
        outer.extend(cs)
        inner = [c for j in lib for c in ins.cuts(j, tuple(x for x in lib if x != j), lib)]
        chosen[r] = choose_weights(inner, len(POOL_METHODS))
        inner_a = mean_a([j[0] for c in inner if (j := pool_judge(c, chosen[r])) is not None])
        print(f"{r}: hazards setting {ins.hazard_setting(lib)}; weights chosen (exponential, GP, hazards) "
              + "(" + ", ".join(f"{w:.1f}" for w in chosen[r]) + f"), inner A {inner_a:.3f}", flush=True)
    k = len(POOL_METHODS)
    equal = tuple([1.0 / k] * k)
    print(f"\n{'method (act by A; A med; cov: 80 % interval; spread: sd of ln(actual / median))':<52}"
          f"{'n':>4}{'A':>7}{'A med':>7}{'cov':>7}{'spread':>8}  per run A " + " ".join(r[-3:] for r in runs))
    for i, name in enumerate(POOL_METHODS):
        alone = tuple(1.0 if m == i else 0.0 for m in range(k))
        judged = [None if c is None or not c.answered[i] else pool_judge(c, alone) for c in outer]
        print(_pool_row(f"{name} alone", judged, outer, runs))
    print(_pool_row("pool, equal weights (un-tuned)", [pool_judge(c, equal) for c in outer], outer, runs))
    nested = [pool_judge(c, chosen[runs[i // len(CUTS)]]) for i, c in enumerate(outer)]
    print(_pool_row("pool, weights chosen nested", nested, outer, runs))
    best = choose_weights(outer, k)
    shown = "(" + ",".join(f"{w:.1f}" for w in best) + ")"
    print(_pool_row(f"pool, weights best on the scored runs (a bound) {shown}", [pool_judge(c, best) for c in outer],
                    outer, runs))
    # naive baselines of the same cuts: the library's mean life less the time elapsed; fails now
    naive: list[float | None] = []
    now: list[float | None] = []
    for i, c in enumerate(outer):
        if c is None:
            naive.append(None)
            now.append(None)
            continue
        r = runs[i // len(CUTS)]
        base = max(0.0, float(np.mean([lives_h[x] for x in runs if x != r])) - c.elapsed)
        naive.append(float(challenge_score(100 * (c.actual - base) / c.actual)))
        now.append(float(challenge_score(100.0)))
    got = [x for x in naive if x is not None]
    print(f"{'naive (library mean life less elapsed), same cuts':<52}{len(got):4d}{np.mean(got):7.3f}"
          f"   fails now {np.mean([x for x in now if x is not None]):.3f}")
    # paired: the equal pool less the exponential model, cut by cut where both answer, by run
    alone_exp = (1.0, 0.0, 0.0)
    diff = [(i // len(CUTS), p[0].a - e[0].a) for i, c in enumerate(outer) if c is not None and c.answered[0]
            and (p := pool_judge(c, equal)) and (e := pool_judge(c, alone_exp))]
    by_run = [float(np.mean(d)) for k_ in range(len(runs)) if (d := [x for i, x in diff if i == k_])]
    print(f"equal pool less the exponential model, paired over {len(diff)} cuts: mean "
          f"{np.mean([d for _, d in diff]):+.3f}; per run " + " ".join(f"{d:+.2f}" for d in by_run)
          + f"; cuts better {sum(d > 0 for _, d in diff)}, worse {sum(d < 0 for _, d in diff)}")
    for seed in seeds[1:]:
        other = ins.under(seed)
        libs = {r: tuple(x for x in runs if x != r) for r in runs}
        cuts = [c for r in runs for c in other.cuts(r, libs[r], libs[r])]
        print(_pool_row(f"seed {seed}: gaussian process alone",
                        [None if c is None or not c.answered[1] else pool_judge(c, (0.0, 1.0, 0.0)) for c in cuts],
                        cuts, runs))
        print(_pool_row(f"seed {seed}: pool, equal weights", [pool_judge(c, equal) for c in cuts], cuts, runs),
              flush=True)


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--out", default="bench-out/femto", help="where bench.femto cached the histories")
    ap.add_argument("--data", default=None, help="the learning runs, if the histories are not cached yet")
    ap.add_argument("--wiener-only", action="store_true", help="score only the Wiener-process method (10-20 minutes)")
    ap.add_argument("--gp-only", action="store_true",
                    help="score only the Gaussian-process settings (stable draws, calibration; a few minutes)")
    ap.add_argument("--seeds", type=int, default=None,
                    help="with --gp-only: how many seeds of GP_SEEDS (default all); with --pool-only: the equal pool "
                         "again under the first N (default 1)")
    ap.add_argument("--gp-all", action="store_true", help="with --gp-only: every GP setting, the free growth too")
    ap.add_argument("--pool-only", action="store_true",
                    help="score only the linear opinion pool of the exponential model, the GP and proportional "
                         "hazards (equal and nested weights)")
    args = ap.parse_args()
    from bench.femto import DATA
    histories = load_histories(Path(args.data) if args.data else DATA, Path(args.out).resolve(), 2, False)
    runs = sorted(histories)
    lives_h = {r: max(max(h[LIMITED][0]) for h in histories[r].values()) / 3600.0 for r in runs}
    if args.wiener_only:
        wiener_report(histories, runs, lives_h)
        return 0
    if args.gp_only:
        gp_methods(histories, runs, lives_h, GP_SEEDS[:max(1, args.seeds or len(GP_SEEDS))], args.gp_all)
        return 0
    if args.pool_only:
        pool_report(histories, runs, lives_h, GP_SEEDS[:max(1, args.seeds or 1)])
        return 0
    settings = grid()
    priors: dict[tuple[str, ...], Prior] = {}

    def prior_of(names: list[str]) -> Prior:
        key = tuple(sorted(names))
        if key not in priors:
            priors[key] = prior_from(histories, list(key))
        return priors[key]

    outer = {r: score_run(histories, r, [x for x in runs if x != r], settings, lives_h,
                          prior_of([x for x in runs if x != r])) for r in runs}
    print("leave one run out, each setting (A: act-by score; A med: the median's; cov: 80 % interval coverage)")
    print(f"{'method':<58}{'n':>4}{'A':>7}{'A med':>7}{'cov':>7}  per run A " + " ".join(r[-3:] for r in runs))
    for s in settings:
        allc = [c for r in runs for c in outer[r][s]]
        print(f"{str(s):<58}{summary(allc)}  " + " ".join(f"{mean_a(outer[r][s]):.2f}" for r in runs))
    print("\nnested leave one out: the setting chosen on the other five runs (each left out of a library of four)")
    chosen_cuts: list[Cut | None] = []
    for r in runs:
        others = [x for x in runs if x != r]
        inner: dict[Setting, list[Cut | None]] = {s: [] for s in settings}
        for j in others:
            lib = [x for x in others if x != j]
            for s, cs in score_run(histories, j, lib, settings, lives_h, prior_of(lib)).items():
                inner[s].extend(cs)
        best = max(settings, key=lambda s: mean_a(inner[s]))
        chosen_cuts.extend(outer[r][best])
        print(f"{r}: chose {best} (inner A {mean_a(inner[best]):.3f}), held out A {mean_a(outer[r][best]):.3f}")
    print(f"nested: n, A, A med, coverage {summary(chosen_cuts)}")
    hazard_report(histories, runs, lives_h)
    level_methods(histories, runs, lives_h)
    wiener_report(histories, runs, lives_h)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
