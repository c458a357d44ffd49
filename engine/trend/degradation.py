"""The exponential degradation model with a prior, updated reading by reading (Bayesian).

Model (Gebraeel, Lawley, Li & Ryan 2005, "Residual-life distributions from
component degradation signals: a Bayesian approach", IIE Transactions 37,
543-557): after degradation starts, an indicator y grows as
y = phi + exp(theta + beta tau + e), tau the time since the start, phi the
healthy level, e normal noise of variance sigma^2. So L = log(y - phi) is a
straight line in tau with normal scatter, and with a bivariate normal prior
on (theta, beta) the posterior after n readings is again bivariate normal
(the conjugate update of the paper's section 3):

    Sigma_n = (Sigma_0^-1 + A^T A / s^2)^-1,   mu_n = Sigma_n (Sigma_0^-1 mu_0 + A^T L / s^2),

A the design matrix [1, tau]. Readings of a degrading bearing do not scatter
independently about the line: their departures run in long swings. The
likelihood's variance is therefore inflated by the AR(1) factor
(1 + rho) / (1 - rho), rho the lag-1 autocorrelation of the departures in the
learning runs (the variance of a mean of AR(1) data, e.g. Box & Jenkins,
"Time series analysis", the effective sample size n (1 - rho) / (1 + rho));
without it the posterior shrinks as if each reading were news, and the
interval closes around a wrong line.

Remaining life: the paper gives P(T <= t) for the noise-free line; a limit
is met by the first *reading* past it, and the readings scatter about the
line, so the time is drawn by Monte Carlo (seeded): parameters from the
posterior, then the readings run forward with AR(1) departures from the last
reading's own, to the first past the limit (a particle approach in the manner
of Li, Lei et al. 2015, IEEE Trans. Ind. Electronics 62). The median of the
draws is the projection; the 80 % interval runs from the 10th to the 90th
percentile.

The prior (mean and covariance of (theta, beta), sigma^2 and rho, in days) is
learned from run-to-failure histories by fitting each one's line after its
start of degradation (``learn_prior``): the paper's empirical prior.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

CONFIDENCE = 0.80
SAMPLES = 2000                # Monte Carlo draws of the posterior
SEED = 20260523               # fixed: the same readings give the same answer
MAX_STEPS = 5000              # steps of the forward run per draw
# how far ahead the forward runs go, in times the time since degradation began (at least 10 readings)
HORIZON_FACTOR = 50.0
MIN_RUN_READINGS = 5          # readings after the start of degradation a learning run needs


@dataclass(frozen=True)
class Prior:
    """Prior of the log-linear degradation parameters, per day, and where it came from."""
    mean: tuple[float, float]                       # theta (log units above the healthy level), beta (per day)
    cov: tuple[tuple[float, float], tuple[float, float]]
    noise_var: float                                # sigma^2 of one reading's log departure
    autocorrelation: float                          # lag-1 autocorrelation of the departures (rho)
    runs: int                                       # how many histories it was learned from
    source: str                                     # what it is, in words the report shows
    reading_interval_days: float = 0.0              # median spacing of the learning runs' readings

    @property
    def inflation(self) -> float:
        """How much the AR(1) departures weigh less than independent ones: (1 + rho) / (1 - rho)."""
        rho = min(max(self.autocorrelation, 0.0), 0.95)
        return (1 + rho) / (1 - rho)


@dataclass(frozen=True)
class Posterior:
    """The posterior of (theta, beta) after the readings since degradation began."""
    mean: np.ndarray        # (2,)
    cov: np.ndarray         # (2, 2)
    noise_var: float
    readings: int


@dataclass(frozen=True)
class Life:
    """Time from now to the limit: median, the interval's ends (None: beyond the horizon), in days."""
    median: float | None
    low: float | None
    high: float | None
    quantile_fn: object = None      # callable p -> days or None, for other quantiles
    draws: tuple[float, ...] = ()   # the Monte Carlo times, sorted (inf: no crossing within the horizon)

    def quantile(self, p: float) -> float | None:
        """The ``p`` quantile of the remaining life in days (None: beyond the horizon)."""
        return None if self.quantile_fn is None else self.quantile_fn(p)  # type: ignore[operator]


def line_fit(tau: np.ndarray, log_y: np.ndarray) -> tuple[np.ndarray, float, float]:
    """Least-squares (theta, beta), the residual variance and the residuals' lag-1 autocorrelation."""
    a = np.column_stack([np.ones_like(tau), tau])
    coef, *_ = np.linalg.lstsq(a, log_y, rcond=None)
    r = log_y - a @ coef
    var = float(np.sum(r ** 2) / max(1, len(r) - 2))
    rho = float(np.corrcoef(r[:-1], r[1:])[0, 1]) if len(r) > 3 and np.std(r[:-1]) > 0 and np.std(r[1:]) > 0 else 0.0
    return coef, var, rho


def learn_prior(histories: list[tuple[np.ndarray, np.ndarray]], source: str,
                reading_interval_days: float = 0.0) -> Prior:
    """The empirical prior from run-to-failure histories: each one's (tau in days since degradation
    began, log(y - phi)) after its start. Mean and covariance of the fitted lines; the noise
    variance and autocorrelation pooled (means over the runs)."""
    fits = [line_fit(np.asarray(t, float), np.asarray(ly, float)) for t, ly in histories
            if len(t) >= MIN_RUN_READINGS]
    if len(fits) < 2:
        raise ValueError(f"a prior needs at least 2 histories with {MIN_RUN_READINGS} readings after "
                         f"degradation began; {len(fits)} given")
    coefs = np.array([f[0] for f in fits])
    cov = np.cov(coefs.T)
    mean = coefs.mean(axis=0)
    return Prior((float(mean[0]), float(mean[1])),
                 ((float(cov[0, 0]), float(cov[0, 1])), (float(cov[1, 0]), float(cov[1, 1]))),
                 float(np.mean([f[1] for f in fits])), float(np.mean([f[2] for f in fits])), len(fits), source,
                 reading_interval_days)


def vague_prior(source: str, reading_interval_days: float = 1.0) -> Prior:
    """A prior that lets the readings speak: centred on no growth, with a standard deviation of 10
    log units for the level and of 10 log units per reading interval for the growth, wider than any
    vibration shows, whatever the time scale of the readings."""
    step = reading_interval_days if reading_interval_days > 0 else 1.0
    return Prior((0.0, 0.0), ((100.0, 0.0), (0.0, (10.0 / step) ** 2)), 0.0, 0.0, 0, source)


def update(prior: Prior, tau: np.ndarray, log_y: np.ndarray) -> Posterior:
    """The conjugate normal update of the prior by the readings (tau in days since degradation began).

    With a vague prior the noise variance is estimated from the readings themselves.
    """
    tau = np.asarray(tau, float)
    log_y = np.asarray(log_y, float)
    a = np.column_stack([np.ones_like(tau), tau])
    s0 = np.array(prior.cov, float)
    m0 = np.array(prior.mean, float)
    noise = prior.noise_var
    if noise <= 0:
        noise = line_fit(tau, log_y)[1] if len(tau) > 2 else 1.0
        noise = max(noise, 1e-6)
    s2 = noise * prior.inflation
    p0 = np.linalg.inv(s0)
    cov = np.linalg.inv(p0 + a.T @ a / s2)
    mean = cov @ (p0 @ m0 + a.T @ log_y / s2)
    return Posterior(mean, cov, noise, len(tau))


LEVEL_READINGS = 5            # the latest readings that tell the current level when the rate comes from the prior


def rate_from_prior(prior: Prior, tau: np.ndarray, log_y: np.ndarray) -> Posterior:
    """The parameters when the readings since degradation began do not rise: the rate from the prior
    alone (the rates of the learned histories), the line through the current level.

    A bearing's level can fall back for a while after degradation began, as a fresh defect's sharp
    edges are worn smooth before the damage spreads (the "healing" stage of run-to-failure tests,
    from memory: Williams et al. 2001, Mechanical Systems and Signal Processing 15); a fit through
    that stretch says the damage shrinks, which the exponential model cannot mean. The readings then
    tell the level, not the rate: the level c is the mean of the latest ``LEVEL_READINGS`` log
    readings (variance: the likelihood's, over their number) at their mean time t_c, beta is the
    prior's, theta = c - beta t_c, so var theta = var c + t_c^2 var beta and cov(theta, beta) =
    -t_c var beta (derived)."""
    tau = np.asarray(tau, float)[-LEVEL_READINGS:]
    log_y = np.asarray(log_y, float)[-LEVEL_READINGS:]
    t_c, c = float(np.mean(tau)), float(np.mean(log_y))
    var_c = max(prior.noise_var, 1e-6) * prior.inflation / len(tau)
    mu_b, var_b = prior.mean[1], prior.cov[1][1]
    mean = np.array([c - mu_b * t_c, mu_b])
    cov = np.array([[var_c + t_c ** 2 * var_b, -t_c * var_b], [-t_c * var_b, var_b]])
    return Posterior(mean, cov, prior.noise_var, len(tau))


def remaining_life(post: Posterior, now: float, log_limit: float | np.ndarray, *, interval: float,
                   last_departure: float, autocorrelation: float, confidence: float = CONFIDENCE,
                   samples: int = SAMPLES, seed: int = SEED) -> Life:
    """Median and ``confidence`` interval of the time from ``now`` (days since degradation began)
    until a reading first reaches ``log_limit`` (the log of the limit less the healthy level; or
    one per draw, ``samples`` of them, when the limit itself is uncertain: a failure level learned
    from ended histories, bench/femto_compare.py).

    Monte Carlo over the posterior: each draw of (theta, beta) runs forward in
    steps of the reading ``interval`` (coarser when the horizon needs more than
    ``MAX_STEPS``) with AR(1) departures that start from the last reading's own
    departure from the drawn line (``last_departure`` is that reading's log less
    the posterior mean line), and stops at the first step past the limit; the crossing time is
    interpolated linearly between that step and the one before (not rounded to a whole step).
    """
    rng = np.random.default_rng(seed)
    draws = rng.multivariate_normal(post.mean, post.cov, size=samples, method="cholesky")
    theta, beta = draws[:, 0], draws[:, 1]
    horizon = HORIZON_FACTOR * max(now, 10 * interval, 1e-9)
    steps = int(min(MAX_STEPS, max(1, np.ceil(horizon / max(interval, 1e-12)))))
    step = horizon / steps
    rho = min(max(autocorrelation, 0.0), 0.95) ** (step / interval) if interval > 0 else 0.0
    sd = np.sqrt(post.noise_var)
    mean_now = post.mean[0] + post.mean[1] * now
    e = (mean_now + last_departure) - (theta + beta * now)       # each draw's departure at the last reading
    hit = np.full(samples, np.inf)
    alive = np.ones(samples, bool)
    before = theta + beta * now + e                              # each draw's level at the last reading
    for k in range(1, steps + 1):
        tau = now + k * step
        e = rho * e + np.sqrt(1 - rho ** 2) * sd * rng.standard_normal(samples)
        level = theta + beta * tau + e
        crossed = alive & (level >= log_limit)
        # where between the two steps the level reached the limit, on the straight line between them:
        # the time is not rounded to whole reading intervals
        rise = np.where(crossed, level - before, 1.0)
        part = np.clip((log_limit - before) / np.where(rise > 0, rise, 1.0), 0.0, 1.0)
        hit[crossed] = (k - 1 + part[crossed]) * step
        alive &= ~crossed
        before = level
        if not alive.any():
            break
    ordered = np.sort(hit)

    def q(p: float) -> float | None:
        v = float(ordered[min(samples - 1, int(np.floor(p * samples)))])
        return None if not np.isfinite(v) else v

    tail = (1.0 - confidence) / 2
    return Life(q(0.5), q(tail), q(1.0 - tail), q, tuple(ordered.tolist()))


def challenge_score(error_pct: np.ndarray | float) -> np.ndarray:
    """The IEEE PHM 2012 challenge score of estimates with percent error Er = 100 (actual - estimate) /
    actual: exp(ln 2 Er / 5) when late (Er <= 0), exp(-ln 2 Er / 20) when early (the challenge's
    published description, as quoted in ../shared/datasets/README.md section 4b)."""
    er = np.asarray(error_pct, float)
    return np.where(er <= 0, np.exp(np.log(2) * np.minimum(er, 0) / 5), np.exp(-np.log(2) * np.maximum(er, 0) / 20))


def act_by(life: Life) -> float | None:
    """The single time to act on: the estimate with the best expected challenge score over the
    remaining-life draws (Bayes decision: a late estimate costs four times as fast as an early one),
    searched among the draws' 1st to 99th percentiles. A draw that never crosses scores as 100 % early."""
    d = np.asarray(life.draws, float)
    if d.size == 0 or not np.isfinite(d[0]):
        return None
    candidates = np.unique(np.quantile(d[np.isfinite(d)], np.linspace(0.01, 0.99, 99)))
    candidates = candidates[candidates > 0]
    if candidates.size == 0:
        return 0.0
    finite = np.isfinite(d)[None, :]
    truth = np.where(finite, np.maximum(np.where(np.isfinite(d), d, 1.0), 1e-12), 1.0)
    er = np.where(finite, 100 * (truth - candidates[:, None]) / truth, 100.0)
    return float(candidates[int(np.argmax(challenge_score(er).mean(axis=1)))])


PRIOR_FILE_NAME = "prior.yaml"
# a prior learned on readings this many times closer or farther apart than the series' own is
# from another kind of life (hours of an accelerated test against months of a plant): not used
TIME_SCALE_FACTOR = 10.0


def read_priors(path) -> dict[str, Prior]:
    """Priors by indicator from a prior file; a RulebookError naming the file, line and field otherwise."""
    from ..common.errors import RulebookError
    from ..common.yamlfile import read_yaml

    doc = read_yaml(path, RulebookError)
    data = doc.data
    if not isinstance(data, dict) or not isinstance(data.get("priors"), dict) or not data["priors"]:
        raise RulebookError("expected a mapping 'priors' of indicator -> prior", path=doc.path, line=1)
    return {str(name): _one_prior(doc, str(name), p) for name, p in data["priors"].items()}


def _one_prior(doc, name: str, p) -> Prior:
    """One indicator's prior from a prior file, checked field by field."""
    from ..common.errors import RulebookError

    where = ["priors", name]

    def bad(field, problem):
        return RulebookError(f"priors.{name}.{field}: {problem}", path=doc.path,
                             line=doc.line_of(where + [field]) or doc.line_of(where))

    if not isinstance(p, dict):
        raise bad("(all)", "expected a mapping")

    def num(field, low=-1e9, high=1e9):
        v = p.get(field)
        if isinstance(v, bool) or not isinstance(v, (int, float)) or not low <= v <= high:
            raise bad(field, f"expected a number from {low:g} to {high:g}, got {v!r}")
        return float(v)

    cov = p.get("cov")
    if (not isinstance(cov, list) or len(cov) != 2 or not all(isinstance(r, list) and len(r) == 2 for r in cov)
            or not all(isinstance(x, (int, float)) and not isinstance(x, bool) for r in cov for x in r)):
        raise bad("cov", "expected a 2 x 2 list of numbers")
    c = np.array(cov, float)
    if not np.allclose(c, c.T) or np.any(np.linalg.eigvalsh(c) <= 0):
        raise bad("cov", "not a covariance matrix (symmetric, positive definite)")
    runs = p.get("runs")
    if not isinstance(runs, list) or len(runs) < 2:
        raise bad("runs", "expected the list of the histories it was learned from (at least 2)")
    return Prior((num("theta_mean"), num("beta_mean_per_day")),
                 ((float(c[0, 0]), float(c[0, 1])), (float(c[1, 0]), float(c[1, 1]))),
                 num("noise_var", 0.0, 100.0), num("autocorrelation", -1.0, 1.0), len(runs),
                 str(p.get("name") or p.get("source", "")), num("reading_interval_s", 0.0, 1e9) / 86400.0)


def shipped_priors() -> dict[str, Prior]:
    """The priors tellwave ships (rulebooks/trend/prior.yaml), learned by bench/femto.py."""
    from ..common.paths import RULEBOOKS
    return _read_cached(str(RULEBOOKS / "trend" / PRIOR_FILE_NAME))


_CACHE: dict[str, dict[str, Prior]] = {}


def _read_cached(path: str) -> dict[str, Prior]:
    if path not in _CACHE:
        _CACHE[path] = read_priors(path)
    return _CACHE[path]


def prior_for(indicator: str, reading_interval_days: float, priors: dict[str, Prior] | None = None) -> Prior:
    """The prior to use for ``indicator``: a learned one of the same indicator and time scale, else vague."""
    priors = shipped_priors() if priors is None else priors
    p = priors.get(indicator)
    if p is None:
        return vague_prior(f"vague prior: no learned prior of {indicator}", reading_interval_days)
    if p.reading_interval_days > 0 and reading_interval_days > 0:
        ratio = reading_interval_days / p.reading_interval_days
        if not 1 / TIME_SCALE_FACTOR <= ratio <= TIME_SCALE_FACTOR:
            return vague_prior(f"vague prior: the learned prior of {indicator} comes from readings "
                               f"{p.reading_interval_days * 86400:g} s apart, these are "
                               f"{reading_interval_days * 86400:g} s apart", reading_interval_days)
    return p
