"""Projected time to a limit, with an interval, or an honest "no projection".

Method: find where the rise began (CUSUM, ``changepoint``), then fit the
readings since then with a degradation model and solve for the time the fit
reaches the limit. Two models:

- exponential, y = phi + theta exp(b t), the exponential degradation model
  used for rolling bearings (Gebraeel, Lawley, Li & Ryan 2005, "Residual-
  life distributions from component degradation signals: a Bayesian
  approach", IIE Transactions 37), whose damage feeds itself. phi is the
  healthy level: the baseline when a change point was found (readings not
  above it are left out of the fit), else 0; log(y - phi) is fitted with a
  straight line;
- linear, y = a + b t, for a level that creeps (unbalance build-up, wear).

``growth="exponential"`` takes the Bayesian path instead (``degradation``):
the point's health indicator (``health``) must first leave its healthy band
(``onset``: before that, "no degradation yet"), then the exponential model's
parameters, with a prior learned from run-to-failure histories (or a vague
one, and the projection says which), are updated by the readings since then,
and the median time to the limit is given with the 10th-90th percentile
interval and an "act by" time: the single estimate with the best expected
score over the remaining-life draws when a late estimate costs four times as
fast as an early one (the PHM 2012 challenge score halves at 5 % late and at
20 % early; ``degradation.act_by``). When the readings since the start do not rise (a level
that falls back for a while after a defect starts), a learned prior gives the
rate and the readings only the current level (``degradation.rate_from_prior``);
with a vague prior there is no rate to borrow and no projection.

``growth="auto"`` keeps the one with the smaller squared error in the
indicator's own unit. The time is where the fitted line reaches the limit;
its interval is where the line's 80 % confidence band (Student t, n - 2
degrees of freedom, intercept and slope together) reaches it: the inverse
regression (calibration) interval of Fieller's method. When the slope's own
80 % interval reaches zero, the rise is not established and no time is
projected (the band then never closes on the late side).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .change import baseline_count
from .changepoint import cusum_onset
from .degradation import HORIZON_FACTOR, Life, Prior, act_by, prior_for, rate_from_prior, remaining_life, update
from .health import shipped_settings, smooth_log
from .onset import first_predicting_time

CONFIDENCE = 0.80
MIN_BAYES_READINGS = 2         # readings since degradation began for the update (the prior carries the rest)
MIN_FIT_READINGS = 3
MIN_READINGS_FOR_ONSET = 8     # fewer: no baseline to tell a change from, fit them all


@dataclass(frozen=True)
class Projection:
    """When a series is projected to reach a limit, with an interval and the method, or why not."""
    limit: float
    limit_label: str
    days: float | None            # from the last reading to the limit (None: no projection)
    low_days: float | None        # early end of the interval
    high_days: float | None       # late end (None: open-ended)
    method: str
    reason: str                   # why there is no projection, or what the fit rests on
    onset_index: int | None = None
    fit_days: tuple[float, ...] = ()     # the fitted curve, for plots (days since the first reading)
    fit_values: tuple[float, ...] = ()
    act_by_days: float | None = None     # the time to act on (best expected score; Bayesian path)
    prior: str = ""                      # which prior the Bayesian path used
    risen_fold: float | None = None      # degradation declared by the rise test: latest over the healthy level

    @property
    def seconds(self) -> float | None:
        """``days`` in seconds."""
        return None if self.days is None else self.days * 86400.0

    @property
    def projected(self) -> bool:
        """Whether there is a projection (``days`` known)."""
        return self.days is not None


@dataclass(frozen=True)
class _Line:
    a: float        # intercept
    b: float        # slope
    se_b: float     # standard error of the slope
    s: float        # residual standard deviation
    n: int
    t_mean: float
    sxx: float


def _fit(t: np.ndarray, y: np.ndarray) -> _Line:
    """Least-squares straight line with what its confidence band needs."""
    n = len(t)
    tm = float(t.mean())
    sxx = float(np.sum((t - tm) ** 2))
    b = float(np.sum((t - tm) * (y - y.mean())) / sxx)
    a = float(y.mean() - b * tm)
    resid = y - (a + b * t)
    s = float(np.sqrt(np.sum(resid ** 2) / (n - 2))) if n > 2 else 0.0
    return _Line(a, b, s / np.sqrt(sxx), s, n, tm, sxx)


def _crossing(line: _Line, level: float, q: float) -> tuple[float, float, float | None]:
    """Times where the line, and the two edges of its confidence band, reach ``level``.

    Solves (c - b u)^2 = q^2 s^2 (1/n + u^2 / Sxx) for u = t - mean(t), with
    c = level - a - b mean(t) (Fieller's inverse regression interval).
    """
    c = level - line.a - line.b * line.t_mean
    k = (q * line.s) ** 2
    centre = line.t_mean + c / line.b
    qa = line.b ** 2 - k / line.sxx
    qb = -2 * line.b * c
    qc = c ** 2 - k / line.n
    disc = qb ** 2 - 4 * qa * qc
    if qa <= 0 or disc < 0:
        return centre, centre, None
    r1, r2 = sorted(((-qb - np.sqrt(disc)) / (2 * qa), (-qb + np.sqrt(disc)) / (2 * qa)))
    return centre, line.t_mean + r1, line.t_mean + r2


def project(days: np.ndarray, values: np.ndarray, limit: float, limit_label: str,
            growth: str = "auto", *, health: np.ndarray | None = None, indicator: str = "",
            priors: dict[str, Prior] | None = None, single: np.ndarray | None = None,
            healthy: int | None = None) -> Projection:
    """Time from the last reading until the indicator reaches ``limit``.

    ``days``: times of the readings (any origin); ``growth``: exponential
    (the Bayesian model after the start of degradation), linear or auto
    (least squares after a CUSUM change point). ``health``: the point's
    health indicator at the same readings (default: made of ``values``); ``single``: the log of its
    single readings, unsmoothed (the onset rule's second test; default: of ``values`` when ``health``
    is made of them, else that test is off);
    ``indicator``: the stored name, to find its prior among ``priors``
    (default: the shipped ones); ``healthy``: how many of the first readings may make the healthy band
    (those before the first confident fault call; None: any; ``onset.first_predicting_time``).
    """
    from scipy.stats import t as student

    days = np.asarray(days, dtype=float)
    values = np.asarray(values, dtype=float)
    n = len(values)

    def none(reason, method="none", onset=None):
        return Projection(limit, limit_label, None, None, None, method, reason, onset)

    if n == 0:
        return none("no readings")
    if values[-1] >= limit:
        return Projection(limit, limit_label, 0.0, 0.0, 0.0, "reached", "the last reading is at or past the limit")
    if growth == "exponential":
        return exponential_life(days, values, limit, limit_label, health, indicator, priors, single,
                                healthy=healthy)[0]
    if n < MIN_FIT_READINGS:
        return none(f"{n} reading(s); at least {MIN_FIT_READINGS} are needed")
    phi = 0.0
    if n >= MIN_READINGS_FOR_ONSET:
        onset = cusum_onset(values, baseline_count(n))
        if onset is None:
            return none("no rise from the baseline (CUSUM on log level)", "CUSUM")
        method = "CUSUM change point, then "
        phi = float(np.median(values[:baseline_count(n)]))
    else:
        onset, method = None, f"all {n} readings (too few for a change point), "
    t, y = days[onset or 0:], values[onset or 0:]
    if len(t) < MIN_FIT_READINGS or t[-1] <= t[0]:
        return none(f"only {len(t)} reading(s) since the rise began at reading {(onset or 0) + 1}", method + "too few",
                    onset)
    fits = {}
    if growth in ("auto", "linear"):
        line = _fit(t, y)
        fits["linear"] = (line, t, lambda v: v, lambda v: v, float(np.sum((y - (line.a + line.b * t)) ** 2)))
    above = y > phi
    if growth in ("auto", "exponential") and np.count_nonzero(above) >= MIN_FIT_READINGS and limit > phi:
        ta, ya = t[above], y[above]
        line = _fit(ta, np.log(ya - phi))
        fits["exponential"] = (line, ta, lambda v: np.log(np.asarray(v) - phi), lambda v: phi + np.exp(v),
                               float(np.sum((y - (phi + np.exp(line.a + line.b * t))) ** 2)))
    if not fits:
        return none("too few readings above the healthy level for an exponential fit", method + "exponential", onset)
    model = min(fits, key=lambda k: fits[k][4])
    line, used, g, g_inv, _ = fits[model]
    method += f"{model} fit of {len(used)} readings"
    q = float(student.ppf(0.5 + CONFIDENCE / 2, line.n - 2)) if line.n > 2 else np.inf
    curve_t = np.linspace(t[0], t[-1], 20)
    fit_days, fit_values = tuple(curve_t), tuple(g_inv(line.a + line.b * curve_t))
    if not line.b - q * line.se_b > 0:
        return Projection(limit, limit_label, None, None, None, method,
                          f"the rise is not established: the slope's {CONFIDENCE:.0%} interval reaches zero",
                          onset, fit_days, fit_values)
    centre, early, late = _crossing(line, float(g(limit)), q)
    now = t[-1]
    reason = (f"{CONFIDENCE:.0%} interval where the fit's confidence band reaches the limit "
              f"(inverse regression); growth {line.b:.3g} per day in {'log ' if model == 'exponential' else ''}units")
    return Projection(limit, limit_label, max(0.0, centre - now), max(0.0, early - now),
                      None if late is None else max(0.0, late - now), method, reason, onset, fit_days, fit_values)


def exponential_life(days: np.ndarray, values: np.ndarray, limit: float, limit_label: str,
                     health: np.ndarray | None, indicator: str,
                     priors: dict[str, Prior] | None,
                     single: np.ndarray | None = None, *, healthy: int | None = None) -> tuple[Projection, Life | None]:
    """The Bayesian exponential model's projection and the remaining-life draws it rests on (None when
    there is no projection): what ``project(..., growth="exponential")`` gives, with the draws for a
    bench that weighs them against another method's (bench/femto_compare.py)."""
    settings = shipped_settings()
    if health is None:
        hi, single = smooth_log(values, settings.smooth_readings), smooth_log(values, 1)
    else:
        hi = np.asarray(health, float)
    on = first_predicting_time(hi, settings, single=single, days=days, healthy=healthy)
    method = "first predicting time, then Bayesian exponential model"
    if on.index is None:
        return Projection(limit, limit_label, None, None, None, "first predicting time", on.reason), None
    phi = float(np.median(values[:on.early]))
    # declared by the rise test: how many times its healthy level this indicator now stands
    fold = None if on.fold is None else float(values[-1] / phi) if phi > 0 else on.fold
    if not limit > phi:
        return Projection(limit, limit_label, None, None, None, method,
                          f"the limit {limit:g} is not above the healthy level {phi:.4g}", on.index), None
    t, y = days[on.index:], values[on.index:]
    if len(t) < MIN_BAYES_READINGS:
        return Projection(limit, limit_label, None, None, None, method,
                          f"{len(t)} reading(s) since degradation began; {MIN_BAYES_READINGS} are needed",
                          on.index, risen_fold=fold), None
    floor = 0.1 * phi if phi > 0 else max(1e-12, 0.1 * float(np.max(np.abs(values))))
    tau = t - t[0]
    log_y = np.log(np.maximum(y - phi, floor))
    spacing = float(np.median(np.diff(days))) if len(days) > 1 else 0.0
    prior = prior_for(indicator, spacing, priors)
    post = update(prior, tau, log_y)
    rate = f"growth {post.mean[1]:.3g} per day in log units"
    if post.mean[1] <= 0 and prior.runs:
        post = rate_from_prior(prior, tau, log_y)
        rate = (f"the readings since do not rise (the level can fall back for a while after a defect starts), so "
                f"the growth is the prior's, {post.mean[1]:.3g} per day in log units, from the current level")
    departure = float(log_y[-1] - (post.mean[0] + post.mean[1] * tau[-1]))
    life = remaining_life(post, float(tau[-1]), float(np.log(limit - phi)), interval=max(spacing, 1e-9),
                          last_departure=departure, autocorrelation=prior.autocorrelation if prior.runs else 0.0,
                          confidence=CONFIDENCE)
    curve = np.linspace(0.0, float(tau[-1]), 20)
    fit_days = tuple(t[0] + curve)
    fit_values = tuple(phi + np.exp(post.mean[0] + post.mean[1] * curve))
    used = prior.source
    if life.median is None:
        return Projection(limit, limit_label, None, None, None, method,
                          f"the model does not reach the limit within {HORIZON_FACTOR:g} times the time since "
                          f"degradation began (growth {post.mean[1]:.3g} per day in log units)", on.index,
                          fit_days, fit_values, prior=used, risen_fold=fold), None
    reason = (f"{on.reason}; {len(t)} reading(s) since; median and {CONFIDENCE:.0%} interval "
              f"(10th to 90th percentile) of the time the model reaches the limit; {rate}; prior: {used}")
    return Projection(limit, limit_label, life.median, life.low, life.high, method, reason, on.index,
                      fit_days, fit_values, act_by_days=act_by(life), prior=used, risen_fold=fold), life
