"""Projected time to a limit, with an interval, or an honest "no projection".

Method: find where the rise began (CUSUM, ``changepoint``), then fit the
readings since then with a degradation model and solve for the time the fit
reaches the limit. Two models:

- exponential, y = a exp(b t), fitted as a straight line to log y: the form
  of the exponential degradation models used for rolling bearings
  (Gebraeel, Lawley, Li & Ryan 2005, "Residual-life distributions from
  component degradation signals: a Bayesian approach", IIE Transactions
  37), whose damage feeds itself;
- linear, y = a + b t, for a level that creeps (unbalance build-up, wear).

``growth="auto"`` keeps the one with the smaller squared error in the
indicator's own unit. The interval comes from the slope's 80 % confidence
interval (Student t, n - 2 degrees of freedom) with the fitted level at the
last reading held: a steeper slope gives the early end, a shallower the late
end. When that interval of the slope reaches zero, the rise is not
established and no time is projected.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .change import baseline_count
from .changepoint import cusum_onset

CONFIDENCE = 0.80
MIN_FIT_READINGS = 3
MIN_READINGS_FOR_ONSET = 8     # fewer: no baseline to tell a change from, fit them all


@dataclass(frozen=True)
class Projection:
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

    @property
    def projected(self) -> bool:
        return self.days is not None


def _fit(t: np.ndarray, y: np.ndarray):
    """Least-squares line: intercept, slope, standard error of the slope."""
    n = len(t)
    tm = t.mean()
    sxx = float(np.sum((t - tm) ** 2))
    b = float(np.sum((t - tm) * (y - y.mean())) / sxx)
    a = float(y.mean() - b * tm)
    resid = y - (a + b * t)
    s2 = float(np.sum(resid ** 2) / (n - 2)) if n > 2 else 0.0
    return a, b, np.sqrt(s2 / sxx)


def project(days: np.ndarray, values: np.ndarray, limit: float, limit_label: str,
            growth: str = "auto") -> Projection:
    """Time from the last reading until the indicator reaches ``limit``.

    ``days``: times of the readings (any origin); ``growth``: exponential,
    linear or auto.
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
    if n < MIN_FIT_READINGS:
        return none(f"{n} reading(s); at least {MIN_FIT_READINGS} are needed")
    if n >= MIN_READINGS_FOR_ONSET:
        onset = cusum_onset(values, baseline_count(n))
        if onset is None:
            return none("no rise from the baseline (CUSUM on log level)", "CUSUM")
        method = "CUSUM change point, then "
    else:
        onset, method = 0, f"all {n} readings (too few for a change point), "
    t, y = days[onset:], values[onset:]
    if len(t) < MIN_FIT_READINGS or t[-1] <= t[0]:
        return none(f"only {len(t)} reading(s) since the rise began at reading {onset + 1}", method + "too few", onset)
    q = float(student.ppf(0.5 + CONFIDENCE / 2, len(t) - 2)) if len(t) > 2 else np.inf
    fits = {}
    if growth in ("auto", "linear"):
        a, b, se = _fit(t, y)
        fits["linear"] = (a, b, se, lambda v: v, lambda v: v, float(np.sum((y - (a + b * t)) ** 2)))
    if growth in ("auto", "exponential") and np.all(y > 0):
        a, b, se = _fit(t, np.log(y))
        fits["exponential"] = (a, b, se, np.log, np.exp, float(np.sum((y - np.exp(a + b * t)) ** 2)))
    if not fits:
        return none("values not positive: no exponential fit", method + "exponential", onset)
    model = min(fits, key=lambda k: fits[k][5])
    a, b, se, g, g_inv, _ = fits[model]
    method += f"{model} fit of {len(t)} readings"
    lo_b, hi_b = b - q * se, b + q * se
    curve_t = np.linspace(t[0], t[-1], 20)
    fit_days, fit_values = tuple(curve_t), tuple(g_inv(a + b * curve_t))
    if not lo_b > 0:
        return Projection(limit, limit_label, None, None, None, method,
                          f"the rise is not established: the slope's {CONFIDENCE:.0%} interval reaches zero",
                          onset, fit_days, fit_values)
    gap = max(0.0, g(limit) - (a + b * t[-1]))
    reason = f"slope {CONFIDENCE:.0%} interval {lo_b:.3g} to {hi_b:.3g} per day ({'log ' if model == 'exponential' else ''}units)"
    return Projection(limit, limit_label, gap / b, gap / hi_b if np.isfinite(hi_b) else 0.0, gap / lo_b,
                      method, reason, onset, fit_days, fit_values)
