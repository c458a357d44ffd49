"""A second remaining-life answer: three methods pooled, each run to where the library's tests ended.

The pool (Stone 1961, "The opinion pool", Annals of Mathematical Statistics 32; Genest & Zidek 1986,
"Combining probability distributions: a critique and an annotated bibliography", Statistical
Science 1) is linear: F(x) = sum_k w_k F_k(x), equal weights (1/3 each, the un-tuned choice), of

- ``exponential``: the Bayesian exponential model (``projection.exponential_life``) to the level at
  which the library's tests were stopped (``PoolPrior.end_level``), its Monte Carlo draws;
- ``gaussian process``: Gaussian-process regression of the log ratio of the indicator to its healthy
  level since the first predicting time (Rasmussen & Williams 2006, "Gaussian processes for machine
  learning"; squared exponential + linear + constant), its growth pinned to the library's mean and
  each path going on at a growth drawn from the library's points (a bootstrap of the library), each
  path's first crossing of a failure level drawn from the library points' own end levels (a random
  threshold, Gebraeel et al. 2005), then recalibrated (Kuleshov, Fenner & Ermon 2018, "Accurate
  uncertainties for deep learning using calibrated regression", ICML): level q of the answer is the
  predictive's quantile at the q-quantile of the library's PIT values;
- ``hazards``: a Weibull proportional-hazards model with a condition covariate (Jardine, Anderson &
  Mann 1987, Quality and Reliability Engineering International 3), h(s) = (beta / eta) (s / eta)^(beta - 1)
  exp(gamma z(s)), z the larger of a bearing's points' degradation ratios; the remaining life is the
  conditional survival given survival to now (Banjevic, Jardine, Makis & Ennis 2001, INFOR 39).

A method with no answer (before its own onset) leaves the pool; the others keep their weights,
renormalised. The act-by time is the point with the best expected PHM 2012 challenge score under the
pool: by linearity sum_k w_k E_k[A(point)].

Everything the GP and the hazards need is learned on ended run-to-failure histories by the bench
(``bench.femto --write-prior``) and read from the ``pool:`` section of rulebooks/trend/prior.yaml
(``read_pool_prior``). The methods were weighed in bench/femto_compare.py; they live here, and the bench
imports them. Times are in hours, as the library's lives are (1.4 to 7.8 h).
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np

from .degradation import HORIZON_FACTOR, Prior, challenge_score
from .health import shipped_settings, smooth_log
from .onset import first_predicting_time

NO_CROSSING_H = 1e6          # a draw that never reaches the limit: so late that any estimate is 100 % early

# ------------------------------------------------------------------ the pool

METHODS = ("exponential", "gaussian process", "hazards")
LEVELS = (np.arange(512) + 0.5) / 512        # each method's answer stands as its quantiles at these
EQUAL = (1 / 3, 1 / 3, 1 / 3)


@dataclass(frozen=True)
class Pool:
    """Each method's answer laid on common points (the union of their quantiles, hours, sorted): its
    distribution function and the expected challenge score of acting there (a row of zeros: no answer)."""
    points: np.ndarray
    cdf: np.ndarray
    expected: np.ndarray
    answered: tuple[bool, ...]

    def weights(self, weights: tuple[float, ...]) -> np.ndarray:
        """The weights of the methods that answered, renormalised (equal when they weigh nothing)."""
        w = np.array(weights, float) * np.array(self.answered, float)
        return w / w.sum() if w.sum() > 0 else np.array(self.answered, float) / sum(self.answered)

    def quantile(self, weights: tuple[float, ...], q: float) -> float:
        """The ``q`` quantile of the pool: the first point where its distribution function reaches q."""
        f = self.weights(weights) @ self.cdf
        return float(self.points[min(len(self.points) - 1, int(np.searchsorted(f, q - 1e-12)))])

    def act_by(self, weights: tuple[float, ...]) -> float:
        """The point (above 0) with the best expected challenge score under the pool (0: none above 0)."""
        e = self.weights(weights) @ self.expected
        ok = self.points > 0
        return float(self.points[ok][int(np.argmax(e[ok]))]) if ok.any() else 0.0


def pool_of(lives: list[np.ndarray | None]) -> Pool | None:
    """The pool of each method's remaining lives (hours, any number of them; None: no answer); None when
    no method answers."""
    qs = [None if x is None else np.quantile(np.asarray(x, float), LEVELS) for x in lives]
    got = [q for q in qs if q is not None]
    if not got:
        return None
    points = np.unique(np.concatenate(got))
    cdf = np.zeros((len(qs), len(points)))
    expected = np.zeros((len(qs), len(points)))
    for k, q in enumerate(qs):
        if q is None:
            continue
        cdf[k] = np.searchsorted(np.sort(q), points, side="right") / len(q)
        truth = np.maximum(q, 1e-12)
        er = 100 * (truth[None, :] - points[:, None]) / truth[None, :]
        expected[k] = challenge_score(er).mean(axis=1)
    return Pool(points, cdf, expected, tuple(q is not None for q in qs))


# ------------------------------------------------------------------ shared: healthy level, regular readings

def healthy_level(v: np.ndarray, hi: np.ndarray) -> tuple[float, int | None, int]:
    """(healthy level phi, onset index or None, early readings) of a point: the median of the early
    readings that made the healthy band, as the exponential model takes it."""
    on = first_predicting_time(hi, shipped_settings())
    return float(np.median(v[:on.early])), on.index, on.early


def level_ratio(v: np.ndarray, phi: float, smooth: bool) -> np.ndarray:
    """Log ratio of each reading (or of the trailing mean to it) to the healthy level."""
    x = smooth_log(v, shipped_settings().smooth_readings) if smooth else np.log(np.maximum(v, 1e-12))
    return x - np.log(phi)


def regular(t: np.ndarray) -> np.ndarray:
    """Which readings to learn from: keep readings at least 0.9 of the usual spacing apart, and the last
    (where the history ended). A burst of closely spaced readings (the learning excerpt keeps every tenth
    snapshot and then the last 20, 10 s apart) otherwise weighs its minutes as much as the hours before."""
    keep = np.zeros(len(t), bool)
    if len(t) == 0:
        return keep
    step = 0.9 * float(np.median(np.diff(t))) if len(t) > 1 else 0.0
    last = -np.inf
    for i, x in enumerate(t):
        if x - last >= step:
            keep[i], last = True, x
    keep[-1] = True
    return keep


# ------------------------------------------------------------------ Weibull proportional hazards

HAZARD_QUANTILES = 1000            # equally spaced probabilities that stand for the remaining-life distribution
HAZARD_HORIZON_H = 100.0           # the longest remaining life looked at (the learning runs last 1.4 to 7.8 h)
TREND_READINGS = 6                 # regular readings (about 10 min) the condition's recent slope is fitted over
GAMMA_BOUND = 30.0                 # |gamma| at most this: exp(30 x 3 log units) is already beyond any float use
# the search keeps beta within 0.1-20 and eta within 0.01-10^4 hours: wider than any bearing life of the
# runs' hours, and a likelihood that runs off to its edge (the condition explaining everything, the clock
# nothing) is held there instead of overflowing
LOG_BETA_BOUNDS = (np.log(0.1), np.log(20.0))
LOG_ETA_BOUNDS_H = (np.log(0.01), np.log(1e4))


@dataclass(frozen=True)
class Condition:
    """A bearing's condition as it stood at a time: its regular readings (hours since its history began),
    the covariate z at each (the larger of its points' degradation ratios, at least 0), and its first
    predicting time (the earlier of its points'; None: no degradation yet)."""
    t_h: np.ndarray
    z: np.ndarray
    onset_h: float | None


def ratio_and_onset(t_s: np.ndarray, values: np.ndarray) -> tuple[np.ndarray, float | None]:
    """A point's degradation ratio at each reading (the smoothed log health indicator less the mean of
    its healthy band) and its first predicting time in hours (None: not yet), from onset.yaml's rule."""
    s = shipped_settings()
    hi = smooth_log(values, s.smooth_readings)
    on = first_predicting_time(hi, s)
    ratio = hi - float(np.mean(hi[:max(on.early, 1)]))
    return ratio, None if on.index is None else float(t_s[on.index]) / 3600.0


def condition_from(points: list[tuple[np.ndarray, np.ndarray]], upto_s: float = np.inf) -> Condition:
    """The condition of a bearing from its points' health-indicator sources, each (seconds since the
    bearing's history began, values), at or before ``upto_s``: each point's healthy band and onset found
    on those readings only, as they stood then."""
    base, z, onsets = None, None, []
    for t, v in points:
        t, v = np.asarray(t, float), np.asarray(v, float)
        k = t <= upto_s + 1e-6
        ratio, on = ratio_and_onset(t[k], v[k])
        if on is not None:
            onsets.append(on)
        if base is None or z is None:
            base, z = t[k], ratio
        else:       # each reading of the first point takes the other point's latest reading not after it
            idx = np.clip(np.searchsorted(t[k], base, side="right") - 1, 0, len(ratio) - 1)
            z = np.maximum(z, ratio[idx])
    assert base is not None and z is not None
    keep = regular(base)
    return Condition(base[keep] / 3600.0, np.maximum(z[keep], 0.0), min(onsets) if onsets else None)


def clock_of(c: Condition, clock: str, covariate: str = "now") -> tuple[np.ndarray, np.ndarray]:
    """(clock times, covariate) of a condition's readings on the setting's clock: every reading on the
    run clock; from the first predicting time on, less it, on the onset clock. The covariate is the
    condition at each reading, or the highest so far (damage does not heal: a level that falls back
    after a rise is the defect's edges wearing smooth, Williams et al. 2001, from memory)."""
    z = c.z if covariate == "now" else np.maximum.accumulate(c.z)
    if clock == "run":
        return c.t_h, z
    assert c.onset_h is not None
    k = c.t_h >= c.onset_h - 1e-9
    return c.t_h[k] - c.onset_h, z[k]


def _stacked(runs: list[tuple[np.ndarray, np.ndarray]]) -> tuple[np.ndarray, ...]:
    """The runs' intervals end to end (start, end, covariate over it) and each run's end and covariate there."""
    lo = np.concatenate([s[:-1] for s, _ in runs])
    hi = np.concatenate([s[1:] for s, _ in runs])
    z = np.concatenate([z[:-1] for _, z in runs])
    return lo, hi, z, np.array([max(s[-1], 1e-9) for s, _ in runs]), np.array([z[-2] for _, z in runs])


def hazard_nll(params: np.ndarray, data: tuple[np.ndarray, ...], ridge: float) -> float:
    """Negative log likelihood of (log beta, log eta, gamma) over run-to-failure histories (``_stacked``),
    each ended by its failure at its last reading; the covariate holds each reading's value until the
    next (the value known before the failure drives its hazard), plus the ridge penalty on gamma."""
    lb, le, g = (float(x) for x in params)
    if not (LOG_BETA_BOUNDS[0] <= lb <= LOG_BETA_BOUNDS[1] and LOG_ETA_BOUNDS_H[0] <= le <= LOG_ETA_BOUNDS_H[1]
            and abs(g) <= GAMMA_BOUND):
        return 1e300
    lo, hi, z, end, z_end = data
    beta, eta = np.exp(lb), np.exp(le)
    cum = float(np.sum(np.exp(g * z) * ((hi / eta) ** beta - (lo / eta) ** beta)))
    log_h = float(np.sum(lb - le + (beta - 1) * np.log(end / eta) + g * z_end))
    return 0.5 * ridge * g ** 2 + cum - log_h


@dataclass(frozen=True)
class HazardFit:
    """A fitted Weibull proportional-hazards model (hours)."""
    beta: float
    eta_h: float
    gamma: float


def fit_hazard(runs: list[tuple[np.ndarray, np.ndarray]], ridge: float) -> HazardFit:
    """Maximum (penalised) likelihood over the runs (scipy.optimize, Nelder-Mead from a plain Weibull
    start: beta 2, eta the mean life, gamma 0)."""
    from scipy.optimize import minimize

    life = float(np.mean([s[-1] for s, _ in runs]))
    data = _stacked(runs)
    best = None
    for g0 in (0.0, 1.0, 3.0):
        r = minimize(hazard_nll, np.array([np.log(2.0), np.log(life), g0]), args=(data, ridge),
                     method="Nelder-Mead", options={"xatol": 1e-6, "fatol": 1e-9, "maxiter": 4000})
        if best is None or r.fun < best.fun:
            best = r
    assert best is not None
    lb, le, g = best.x
    return HazardFit(float(np.exp(lb)), float(np.exp(le)), float(g))


def hazard_lives(fit: HazardFit, s0: float, z0: float, slope: float) -> np.ndarray:
    """Remaining lives (hours) at HAZARD_QUANTILES equally spaced probabilities of the conditional
    distribution given survival to ``s0`` on the model's clock (Banjevic et al. 2001), the condition
    held at ``z0`` (slope 0: closed form) or going on at ``slope`` per hour (numerical integration of
    the hazard on a fine grid). A probability the horizon does not reach gets NO_CROSSING_H."""
    p = (np.arange(HAZARD_QUANTILES) + 0.5) / HAZARD_QUANTILES
    need = -np.log1p(-p)                                  # cumulative hazard to reach probability p
    b, eta = fit.beta, fit.eta_h
    if slope <= 0:
        scale = np.exp(fit.gamma * z0)
        u = eta * ((s0 / eta) ** b + need / scale) ** (1 / b) - s0
        return np.where(u <= HAZARD_HORIZON_H, np.maximum(u, 0.0), NO_CROSSING_H)
    u = np.concatenate([[0.0], np.geomspace(1e-4, HAZARD_HORIZON_H, 4000)])
    s = s0 + u
    h = (b / eta) * (np.maximum(s, 1e-12) / eta) ** (b - 1) * np.exp(np.clip(fit.gamma * (z0 + slope * u), -700, 700))
    cum = np.concatenate([[0.0], np.cumsum(0.5 * (h[1:] + h[:-1]) * np.diff(u))])
    out = np.interp(need, cum, u)
    return np.where(need <= cum[-1], out, NO_CROSSING_H)


def recent_slope(c: Condition) -> float:
    """The condition's slope per hour over its last TREND_READINGS regular readings (least squares)."""
    t, z = c.t_h[-TREND_READINGS:], c.z[-TREND_READINGS:]
    return float(np.polyfit(t, z, 1)[0]) if len(t) >= 3 and np.ptp(t) > 0 else 0.0


# ------------------------------------------------------------------ Gaussian-process regression

GP_GRID = 300                  # future times of the predictive paths, geometric from one reading spacing
GP_READINGS = 80               # readings since the onset the regression keeps at most (evenly, the last kept)
GP_BOUNDS = ((np.log(1e-3), np.log(3.0)),      # sd of the squared-exponential part (log units)
             (np.log(0.05), np.log(5.0)),      # its length scale, in times the time since the onset
             (np.log(1e-3), np.log(3.0)))      # white noise sd (one reading's scatter)
PINNED_SD = 1e-3               # the growth's prior sd when it is pinned to the library's mean
GP_CONSTANT_SD = 1.0           # prior sd of the level at the onset, log units (a factor e either way: wide)
GP_PATHS_LOG2 = 14             # 16384 quasi-random points per answer
GP_MODES = 0.9999              # share of the predictive variance kept in the drawn components
GP_RQMC_GRID = 100             # future times kept of the GP_GRID (the crossing interpolated between)
GP_MAX_MODES = 16              # at most this many components (the rest hold less than 1e-4 of it)
GP_SEED = 20261205             # fixed: the same readings give the same answer


def _gp_kernel(a: np.ndarray, b: np.ndarray, p: np.ndarray, slope_sd: float) -> np.ndarray:
    """Squared exponential + linear + constant (Rasmussen & Williams 2006, eqs. 2.31 and 4.9, section 4.2.4):
    the linear and constant terms are the explicit basis [1, x] with a normal prior on its coefficients
    (section 2.7), the slope's sd learned from the library."""
    sf, ell = np.exp(p[:2])
    return (sf ** 2 * np.exp(-0.5 * (a[:, None] - b[None, :]) ** 2 / ell ** 2) + slope_sd ** 2 * np.outer(a, b)
            + GP_CONSTANT_SD ** 2)


def _gp_cov(x: np.ndarray, p: np.ndarray, slope_sd: float) -> np.ndarray:
    return _gp_kernel(x, x, p, slope_sd) + (np.exp(2 * p[2]) + 1e-8) * np.eye(len(x))


def gp_neg_log_likelihood(p: np.ndarray, x: np.ndarray, y: np.ndarray, slope_sd: float) -> float:
    """Minus the log marginal likelihood of the readings (Rasmussen & Williams 2006, eq. 2.30)."""
    try:
        chol = np.linalg.cholesky(_gp_cov(x, p, slope_sd))
    except np.linalg.LinAlgError:
        return 1e12
    alpha = np.linalg.solve(chol.T, np.linalg.solve(chol, y))
    return float(0.5 * y @ alpha + np.sum(np.log(np.diag(chol))) + 0.5 * len(x) * np.log(2 * np.pi))


def gp_fit(x: np.ndarray, y: np.ndarray, slope_sd: float) -> np.ndarray:
    """Log hyperparameters (sd and length of the squared exponential, noise sd) with the largest marginal
    likelihood, from two starts (scipy's L-BFGS-B)."""
    from scipy.optimize import minimize

    best = None
    for start in (np.log([0.3, 0.3, 0.2]), np.log([0.1, 1.0, 0.1])):
        r = minimize(gp_neg_log_likelihood, start, args=(x, y, slope_sd), method="L-BFGS-B", bounds=GP_BOUNDS)
        if best is None or r.fun < best.fun:
            best = r
    assert best is not None
    return np.asarray(best.x)


def gp_predictive(x: np.ndarray, y: np.ndarray, p: np.ndarray, slope_sd: float,
                  future: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Mean and covariance of the latent level at the ``future`` inputs (Rasmussen & Williams 2006,
    eqs. 2.22-2.24)."""
    chol = np.linalg.cholesky(_gp_cov(x, p, slope_sd))
    kf = _gp_kernel(future, x, p, slope_sd)
    mean = kf @ np.linalg.solve(chol.T, np.linalg.solve(chol, y))
    v = np.linalg.solve(chol, kf.T)
    return mean, _gp_kernel(future, future, p, slope_sd) - v.T @ v


def gp_predictive_since_onset(days: np.ndarray, v: np.ndarray, hi: np.ndarray,
                              slope: tuple[float, float]) -> tuple[np.ndarray, np.ndarray, np.ndarray] | None:
    """(future times in hours from the last reading, mean and covariance of the latent log ratio to the
    healthy level there), fitted to the readings since the first predicting time with the library's
    mean growth ``slope[0]`` per hour as the prior mean and ``slope[1]`` as its sd; None before the onset
    or with fewer than 5 readings since."""
    phi, index, _ = healthy_level(v, hi)
    if index is None or len(v) - index < 5:
        return None
    t = (days[index:] - days[index]) * 24.0
    elapsed = float(t[-1])
    if elapsed <= 0:
        return None
    keep = np.unique(np.round(np.linspace(0, len(t) - 1, min(len(t), GP_READINGS))).astype(int))
    x = t[keep] / elapsed
    y = np.log(np.maximum(v[index:][keep], 1e-12) / phi) - slope[0] * t[keep]
    p = gp_fit(x, y, slope[1] * elapsed)
    spacing = float(np.median(np.diff(days))) * 24.0
    ahead = np.geomspace(max(spacing / elapsed, 1e-4), HORIZON_FACTOR, GP_GRID)
    mean, cov = gp_predictive(x, y, p, slope[1] * elapsed, 1.0 + ahead)
    return ahead * elapsed, mean + slope[0] * (1.0 + ahead) * elapsed, cov


@functools.lru_cache(maxsize=8)
def rqmc_uniforms(dims: int, seed: int) -> np.ndarray:
    """2 ** GP_PATHS_LOG2 points of a scrambled Sobol set in ``dims`` dimensions (Owen 1997); read only."""
    from scipy.stats import qmc

    u = np.asarray(qmc.Sobol(dims, scramble=True, seed=seed).random_base2(GP_PATHS_LOG2))
    u.flags.writeable = False
    return u


def principal_parts(mean: np.ndarray, cov: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(mean, columns sd x direction of the covariance's principal components, the largest first, as many
    as hold GP_MODES of its variance, at most GP_MAX_MODES)."""
    w, vec = np.linalg.eigh(0.5 * (cov + cov.T))
    order = np.argsort(w)[::-1]
    w, vec = np.maximum(w[order], 0.0), vec[:, order]
    total = float(np.sum(w))
    k = 1 if total <= 0 else min(GP_MAX_MODES, int(np.searchsorted(np.cumsum(w) / total, GP_MODES)) + 1)
    return mean, vec[:, :k] * np.sqrt(w[:k])[None, :]


def predictive_parts(g: tuple[np.ndarray, np.ndarray, np.ndarray]) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(future hours, mean, principal parts) of a predictive (future hours, mean, covariance) on every
    k-th future time, GP_RQMC_GRID of them (the crossing is interpolated between: a coarser grid will do),
    its principal components taken on that grid: a 300-point eigendecomposition took a second of a
    loaded machine's time per point in ``tellwave trend``, the 100-point one a thirtieth of the work."""
    future_h, mean, cov = g
    every = max(1, len(future_h) // GP_RQMC_GRID)
    return (future_h[::every], *principal_parts(mean[::every], cov[::every, ::every]))


def rqmc_paths(mean: np.ndarray, parts: np.ndarray, u: np.ndarray) -> np.ndarray:
    """Paths of the Gaussian predictive (``principal_parts``) from the uniforms ``u``, one column per
    component."""
    from scipy.stats import norm

    z = norm.ppf(np.clip(u[:, :parts.shape[1]], 1e-12, 1 - 1e-12))
    return mean[None, :] + z @ parts.T


def threshold_quantiles(ends: np.ndarray, above: float, u: np.ndarray) -> np.ndarray:
    """A normal of the ends' mean and standard deviation, truncated below at ``above`` (the level already
    passed without failing), at the uniforms ``u`` (its inverse distribution function)."""
    from scipy.stats import truncnorm

    m, sd = float(np.mean(ends)), max(float(np.std(ends, ddof=1)), 1e-3)
    a = min((above - m) / sd, 30.0)
    return np.asarray(truncnorm(a, np.inf, loc=m, scale=sd).ppf(u))


def crossing_interpolated(future_h: np.ndarray, paths: np.ndarray, thresholds: np.ndarray) -> np.ndarray:
    """Each path's first future time at or past its own threshold (never: NO_CROSSING_H), interpolated
    linearly between the grid times either side of the crossing: the grid's steps (about 4 % of the time
    since the onset) are near the 5 % by which the challenge score halves when late, so a crossing snapped
    to the grid moved the act-by time, and the score, from seed to seed."""
    crossed = paths >= thresholds[:, None]
    i = np.argmax(crossed, axis=1)
    rows = np.arange(len(paths))
    before = np.maximum(i - 1, 0)
    lo, hi = paths[rows, before], paths[rows, i]
    frac = np.where((i > 0) & (hi > lo), (thresholds - lo) / np.where(hi > lo, hi - lo, 1.0), 1.0)
    t = future_h[before] + np.clip(frac, 0.0, 1.0) * (future_h[i] - future_h[before])
    return np.where(crossed.any(axis=1), t, NO_CROSSING_H)


def gp_lives_rqmc(g: tuple[np.ndarray, np.ndarray, np.ndarray], drawn: bool, grow: np.ndarray,
                  ends: np.ndarray | None, above: float, fixed_level: float, seed: int = GP_SEED) -> np.ndarray:
    """Remaining lives (hours) of one point from its predictive ``g`` (future hours, mean, principal parts),
    by randomised quasi-Monte Carlo: each path (``drawn``: going on at a growth of the library's ``grow``,
    every one equally often) to its own failure level drawn from ``ends`` above ``above``, or to
    ``fixed_level`` when ``ends`` is None (log ratios to the healthy level)."""
    future_h, mean, parts = g
    every = max(1, len(future_h) // GP_RQMC_GRID)      # the crossing is interpolated: a coarser grid will do
    future_h, mean, parts = future_h[::every], mean[::every], parts[::every]     # (``predictive_parts``: done)
    u = rqmc_uniforms(GP_MAX_MODES + 2, seed)
    paths = rqmc_paths(mean, parts, u[:, :GP_MAX_MODES])
    if drawn:             # stratified: every library growth equally often
        own = np.sort(grow)[np.minimum((u[:, -1] * len(grow)).astype(int), len(grow) - 1)]
        paths = paths + (own - np.mean(grow))[:, None] * future_h[None, :]
    thresholds = (np.full(len(u), fixed_level) if ends is None else threshold_quantiles(ends, above, u[:, -2]))
    return crossing_interpolated(future_h, paths, thresholds)


def pit(lives: np.ndarray, actual: float) -> float:
    """The probability integral transform of the actual life: the share of the predictive's lives below it."""
    return float(np.mean(lives < actual) + 0.5 * np.mean(lives == actual))


def recalibrated(lives: np.ndarray, pits: np.ndarray) -> np.ndarray:
    """The lives at the levels where the library's actual lives fell: level q of the answer is the
    predictive's quantile at the q-quantile of the library's PIT values (Kuleshov et al. 2018)."""
    levels = (np.arange(len(lives)) + 0.5) / len(lives)
    return np.quantile(lives, np.clip(np.quantile(pits, levels), 0.0, 1.0))


# ------------------------------------------------------------------ the prior and the answer

@dataclass(frozen=True)
class HazardSetting:
    """One setting of the proportional-hazards model."""
    clock: str        # "run": hours since the history began; "onset": hours since its first predicting time
    covariate: str    # "now": the condition at each reading; "highest": the highest condition so far
    future: str       # "hold": the condition stays at its current value; "trend": it goes on at its recent slope
    ridge: float      # a normal prior on gamma, sd 1 / sqrt(ridge) (0: plain maximum likelihood)
    points: str = "bearing"   # "bearing": the larger of its points' conditions; "each": every point alone

    def __str__(self) -> str:
        clock = "run clock" if self.clock == "run" else "clock from onset"
        ridge = "ML" if self.ridge == 0 else f"ridge {self.ridge:g}"
        return f"hazards ({self.points}, {clock}, z {self.covariate}, {self.future}, {ridge})"


@dataclass(frozen=True)
class PoolPrior:
    """What the pool needs, learned on ended run-to-failure histories (the ``pool:`` section)."""
    name: str                       # what it is, in words the report shows
    indicator: str                  # the stored indicator the pool projects (the acceleration peak)
    end_level: float                # where the library's tests were stopped, in the indicator's unit
    reading_interval_s: float       # the library's usual reading spacing
    end_levels: np.ndarray          # each library point's end level, log ratio to its healthy level (trailing mean)
    growths_per_h: np.ndarray       # each library point's growth since its onset, log units per hour
    calibration: np.ndarray         # the GP's PIT values on the library (each run scored with the rest)
    hazard: HazardSetting
    hazard_fit: HazardFit
    runs: tuple[str, ...] = ()


@dataclass(frozen=True)
class PointHistory:
    """One point's readings for the pool: days (any origin), values of the pooled indicator, its health
    indicator and single readings at them (``health.health_of``), and its health-indicator source as
    (seconds since the bearing's history began, values) for the hazards' condition."""
    days: np.ndarray
    values: np.ndarray
    health: np.ndarray
    single: np.ndarray | None
    source_s: np.ndarray
    source: np.ndarray


@dataclass(frozen=True)
class PoolAnswer:
    """The pooled remaining life of a point in hours (None: no method answers), what each method gave."""
    lives: tuple[np.ndarray | None, ...]
    pool: Pool | None
    reasons: tuple[str, ...]

    def quantile(self, q: float) -> float | None:
        """The ``q`` quantile of the equal pool, hours (None: no method answers)."""
        return None if self.pool is None else self.pool.quantile(EQUAL, q)

    def act_by(self) -> float | None:
        """The act-by time of the equal pool, hours (None: no method answers)."""
        return None if self.pool is None else self.pool.act_by(EQUAL)


def exponential_lives(h: PointHistory, exp_prior: Prior, end_level: float, indicator: str) -> np.ndarray | None:
    """The exponential model's remaining lives (hours) to ``end_level`` (0 at or past it; None: no answer)."""
    from .projection import exponential_life

    if h.values[-1] >= end_level:
        return np.zeros(1)
    proj, life = exponential_life(h.days, h.values, end_level, f"{end_level:g}", h.health, indicator,
                                  {indicator: exp_prior}, single=h.single)
    if life is None or proj.days is None:
        return None
    return np.minimum(np.array(life.draws) * 24.0, NO_CROSSING_H)


def gp_lives(h: PointHistory, prior: PoolPrior, seed: int = GP_SEED) -> np.ndarray | None:
    """The GP's remaining lives (hours) of one point to its drawn end level, recalibrated (None: no answer)."""
    grow = prior.growths_per_h
    g = gp_predictive_since_onset(h.days, h.values, h.health, (float(np.mean(grow)), PINNED_SD))
    if g is None:
        return None
    phi = healthy_level(h.values, h.health)[0]
    above = float(np.max(level_ratio(h.values, phi, True)))
    lives = gp_lives_rqmc(predictive_parts(g), True, grow, prior.end_levels, above, 0.0, seed)
    return recalibrated(lives, prior.calibration) if len(prior.calibration) else lives


def hazard_answer(c: Condition, fit: HazardFit, s: HazardSetting) -> np.ndarray | None:
    """The proportional-hazards remaining lives (hours) of a condition (None before its onset)."""
    if c.onset_h is None:
        return None
    s0 = c.t_h[-1] - (0.0 if s.clock == "run" else c.onset_h)
    slope = max(recent_slope(c), 0.0) if s.future == "trend" else 0.0
    z0 = float(c.z[-1] if s.covariate == "now" else np.max(c.z))
    return hazard_lives(fit, s0, z0, slope)


def pooled(point: PointHistory, bearing: list[PointHistory], prior: PoolPrior, exp_prior: Prior,
           seed: int = GP_SEED) -> PoolAnswer:
    """The pool of the three methods for ``point``; the hazards judge the bearing it sits on by all of
    ``bearing``'s points (the point among them)."""
    exp = exponential_lives(point, exp_prior, prior.end_level, prior.indicator)
    gp = gp_lives(point, prior, seed)
    hz = hazard_answer(condition_from([(b.source_s, b.source) for b in bearing]), prior.hazard_fit, prior.hazard)
    lives = (exp, gp, hz)
    reasons = tuple("answers" if x is not None else
                    ("no degradation yet, or too few readings since" if m != "hazards" else
                     "no degradation yet at the bearing's points") for m, x in zip(METHODS, lives, strict=True))
    return PoolAnswer(lives, pool_of(list(lives)), reasons)


# ------------------------------------------------------------------ reading the prior and the settings

POOL_SCHEMA = "pool-prior.schema.json"
SETTINGS_FILE_NAME = "pool.yaml"


def read_pool_prior(path) -> PoolPrior | None:
    """The ``pool:`` section of a prior file (None: the file has none); a RulebookError naming the file,
    line and field when it is there but wrong."""
    from ..common.errors import RulebookError
    from ..common.yamlfile import read_yaml, validate

    doc = read_yaml(path, RulebookError)
    if not isinstance(doc.data, dict) or "pool" not in doc.data:
        return None
    validate(doc, POOL_SCHEMA, RulebookError)
    p = doc.data["pool"]
    g, hz = p["gp"], p["hazards"]
    for name in ("end_levels", "growths_per_h"):
        if float(np.std(g[name], ddof=1)) <= 0:
            raise RulebookError(f"pool.gp.{name}: every value is the same; a learned spread is needed",
                                path=doc.path, line=doc.line_of(["pool", "gp", name]))
    return PoolPrior(str(p["name"]), str(p["indicator"]), float(p["end_level"]), float(p["reading_interval_s"]),
                     np.array(g["end_levels"], float), np.array(g["growths_per_h"], float),
                     np.array(g["calibration"], float),
                     HazardSetting(hz["clock"], hz["covariate"], hz["future"], float(hz["ridge"])),
                     HazardFit(float(hz["beta"]), float(hz["eta_h"]), float(hz["gamma"])), tuple(p["runs"]))


def pool_document(prior: PoolPrior, source: str) -> dict:
    """The ``pool:`` section that ``read_pool_prior`` reads back (``source``: how it was learned)."""
    return {"pool": {
        "name": prior.name, "source": source, "runs": list(prior.runs), "indicator": prior.indicator,
        "end_level": prior.end_level, "reading_interval_s": round(prior.reading_interval_s, 3), "weights": "equal",
        "gp": {"end_levels": [round(float(x), 6) for x in prior.end_levels],
               "growths_per_h": [round(float(x), 6) for x in prior.growths_per_h],
               "calibration": [round(float(x), 6) for x in prior.calibration]},
        "hazards": {"clock": prior.hazard.clock, "covariate": prior.hazard.covariate, "future": prior.hazard.future,
                    "ridge": prior.hazard.ridge, "beta": round(prior.hazard_fit.beta, 6),
                    "eta_h": round(prior.hazard_fit.eta_h, 6), "gamma": round(prior.hazard_fit.gamma, 6)}}}


@functools.cache
def shipped_pool_prior() -> PoolPrior | None:
    """The pool's prior tellwave ships (rulebooks/trend/prior.yaml ``pool:``), learned by bench/femto.py."""
    from ..common.paths import RULEBOOKS
    from .degradation import PRIOR_FILE_NAME

    return read_pool_prior(RULEBOOKS / "trend" / PRIOR_FILE_NAME)


@dataclass(frozen=True)
class PoolSettings:
    """When the pool answers (rulebooks/trend/pool.yaml): the reading spacing it is kept within."""
    spacing_factor: float
    source: str


def read_pool_settings(path) -> PoolSettings:
    """rulebooks/trend/pool.yaml; a RulebookError naming the file, line and field otherwise."""
    from ..common.errors import RulebookError
    from ..common.yamlfile import read_yaml

    doc = read_yaml(path, RulebookError)
    p = doc.data.get("pool") if isinstance(doc.data, dict) else None
    if not isinstance(p, dict):
        raise RulebookError("expected a mapping 'pool'", path=doc.path, line=1)
    f = p.get("spacing_factor")
    if isinstance(f, bool) or not isinstance(f, (int, float)) or not 1 < f <= 1e6:
        raise RulebookError(f"pool.spacing_factor: expected a number above 1, got {f!r}", path=doc.path,
                            line=doc.line_of(["pool", "spacing_factor"]) or 1)
    if not isinstance(p.get("source"), str) or not p["source"].strip():
        raise RulebookError("pool.source: a threshold needs its source", path=doc.path,
                            line=doc.line_of(["pool"]) or 1)
    return PoolSettings(float(f), p["source"])


@functools.cache
def shipped_pool_settings() -> PoolSettings:
    """The shipped settings (rulebooks/trend/pool.yaml)."""
    from ..common.paths import RULEBOOKS

    return read_pool_settings(RULEBOOKS / "trend" / SETTINGS_FILE_NAME)


def spacing_off(spacing_s: float, prior: PoolPrior, settings: PoolSettings) -> str | None:
    """Why the pool is off for a history whose readings are ``spacing_s`` apart (None: it is on)."""
    if spacing_s <= 0:
        return "fewer than two readings"
    ratio = spacing_s / prior.reading_interval_s
    if 1 / settings.spacing_factor < ratio < settings.spacing_factor:
        return None
    return (f"off: these readings are {_duration(spacing_s)} apart, the library's {_duration(prior.reading_interval_s)}"
            f" ({ratio:.3g} times; the pool is kept within {settings.spacing_factor:g} times, "
            f"rulebooks/trend/{SETTINGS_FILE_NAME}): it was learned on accelerated tests lasting hours")


def _duration(s: float) -> str:
    for unit, size in (("days", 86400.0), ("h", 3600.0), ("min", 60.0)):
        if s >= size:
            return f"{s / size:.3g} {unit}"
    return f"{s:.3g} s"


# ------------------------------------------------------------------ the trend's second answer

LABEL = "as the library's run-to-failure tests ended"
QUANTILES_SHOWN = (0.05, 0.1, 0.25, 0.5, 0.75, 0.9, 0.95)


def _days(hours: float | None) -> float | None:
    return None if hours is None or not np.isfinite(hours) or hours >= NO_CROSSING_H else float(hours) / 24.0


def _secs(hours: float | None) -> float | None:
    d = _days(hours)
    return None if d is None else d * 86400.0


def pool_section(point: str, used: dict, sources: dict, bearing_of: dict[str, str] | None = None, *,
                 prior: PoolPrior | None = None, settings: PoolSettings | None = None,
                 exp_prior: Prior | None = None) -> dict | None:
    """The pooled answer of ``point`` for the trend document (None: no pool prior, or the point does not
    store the pooled indicator). ``used``: point -> indicator -> Series (the readings used, after any
    repair); ``sources``: point -> the Series its health indicator is made of; ``bearing_of``: point ->
    the bearing it sits at (the machine file; a point missing is a bearing of its own)."""
    from .degradation import shipped_priors
    from .health import health_of

    prior = shipped_pool_prior() if prior is None else prior
    if prior is None or prior.indicator not in used.get(point, {}):
        return None
    settings = shipped_pool_settings() if settings is None else settings
    exp_prior = shipped_priors().get(prior.indicator) if exp_prior is None else exp_prior
    s = used[point][prior.indicator]
    bearing = (bearing_of or {}).get(point)
    group = sorted(p for p in used if bearing is not None and (bearing_of or {}).get(p) == bearing
                   and prior.indicator in used[p] and sources.get(p) is not None) or [point]
    out: dict = {"label": LABEL, "indicator": prior.indicator, "end_level": prior.end_level,
                 "end_label": f"{prior.end_level:g}" + (" g" if prior.indicator.endswith("_g") else ""),
                 "prior": prior.name,
                 "weights": "equal", "methods": list(METHODS), "bearing": bearing,
                 "hazard_points": group, "on": False, "projected": False, "reason": "",
                 "days": None, "seconds": None, "low_days": None, "low_seconds": None, "high_days": None,
                 "high_seconds": None, "act_by_days": None, "act_by_seconds": None, "quantiles": [],
                 "answered": []}
    spacing_s = float(np.median(np.diff(s.days))) * 86400.0 if len(s) > 1 else 0.0
    off = spacing_off(spacing_s, prior, settings)
    if off is None and exp_prior is None:
        off = f"off: no learned prior of the exponential model for {prior.indicator}"
    if off is not None:
        out["reason"] = off
        return out
    out["on"] = True
    t0 = min(used[p][prior.indicator].times[0] for p in group)

    def history(p: str) -> PointHistory:
        x = used[p][prior.indicator]
        src = sources[p]
        keep = [i for i, t in enumerate(src.times) if t >= x.times[0]] or list(range(len(src)))
        src_s = np.array([(src.times[i] - t0).total_seconds() for i in keep])
        return PointHistory(x.days, x.values, health_of(src, x), health_of(src, x, single=True), src_s,
                            src.values[keep])

    if sources.get(point) is None:
        out["reason"] = "no health indicator at the point (no acceleration level stored)"
        return out
    assert exp_prior is not None
    got = pooled(history(point), [history(p) for p in group], prior, exp_prior)
    out["answered"] = [m for m, x in zip(METHODS, got.lives, strict=True) if x is not None]
    if got.pool is None:
        out["reason"] = "no method answers yet: " + "; ".join(f"{m}: {r}" for m, r in
                                                             zip(METHODS, got.reasons, strict=True))
        return out
    med, lo, hi, act = got.quantile(0.5), got.quantile(0.1), got.quantile(0.9), got.act_by()
    out.update(projected=_days(med) is not None, days=_days(med), seconds=_secs(med), low_days=_days(lo),
               low_seconds=_secs(lo), high_days=_days(hi), high_seconds=_secs(hi), act_by_days=_days(act),
               act_by_seconds=_secs(act),
               quantiles=[{"p": q, "days": _days(got.quantile(q)), "seconds": _secs(got.quantile(q))}
                          for q in QUANTILES_SHOWN])
    missing = [m for m in METHODS if m not in out["answered"]]
    out["reason"] = (f"linear opinion pool, equal weights, of {', '.join(out['answered'])}"
                     + (f" ({', '.join(missing)}: no answer yet, left out)" if missing else "")
                     + f"; each run to {out['end_label']} or to the library's end levels")
    if not out["projected"]:
        out["reason"] += f"; the median lies beyond {HAZARD_HORIZON_H:g} h"
    return out
