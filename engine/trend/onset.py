"""When degradation began (the "first predicting time"): the health indicator leaves its healthy
band, mean + k standard deviations of its early readings, for several readings in a row
(Li, Lei et al. 2015, "An improved exponential model for predicting remaining useful life of
rolling element bearings", IEEE Trans. Ind. Electronics 62; the settings are in
rulebooks/trend/onset.yaml). Before it the answer is "no degradation yet", not a projection.

Two tests run side by side, as in a combined scheme of quality control (Lucas 1982, "Combined
Shewhart-CUSUM quality control schemes", Journal of Quality Technology 14: a smoothing test for
small sustained shifts, a test on single values for large ones): the smoothed indicator
(a trailing mean) out of its band ``readings_in_row`` times in a row finds a slow rise that the
scatter of single readings hides; the single readings out of their own band ``single_in_row`` times
in a row find a clear rise within a few readings, where the mean would first have to fill its window
(on a monthly route the smoothed test alone needs 14 surveys). A burst of fewer single readings
than ``single_in_row`` declares nothing by the second test, and the first needs a run longer than
its window.

Where no healthy band can be made yet (fewer readings than it needs, or fewer healthy readings: those before
the first confident fault call at the point's bearing, ``healthy``), a third test stands in: the latest
``rise_in_row`` single readings all ``rise_ratio`` times their healthy level or more (an order of magnitude,
far past any healthy scatter; the settings and their source are in onset.yaml) declare degradation under way.
Without that, "too few to tell" stays the answer.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .health import HealthSettings, shipped_settings


@dataclass(frozen=True)
class Onset:
    """Where degradation began (None: not yet), and the band it left."""
    index: int | None        # first reading of the run that stayed above the band
    early: int               # readings that made the band
    band_high: float         # upper edge of the healthy band, in the indicator's (log) units
    reason: str
    fold: float | None = None   # declared by the rise test: the latest reading in times its healthy level


def early_count(n: int, s: HealthSettings) -> int:
    """How many of the first readings make the healthy band: a fraction of the history, within
    [early_min, early_max] (a fraction 0 takes early_min, a fixed count)."""
    return int(min(s.early_max, max(s.early_min, round(s.early_fraction * n))))


def _band(x: np.ndarray, k: int, s: HealthSettings) -> float:
    """Upper edge of the healthy band of ``x`` made of its first ``k`` values."""
    return float(np.mean(x[:k]) + s.band_sd * np.std(x[:k], ddof=1))


def _run_above(x: np.ndarray, high: float) -> int:
    """How many of the latest values are above ``high`` in a row."""
    above = np.asarray(x) > high
    return len(above) if above.all() else int(np.argmin(above[::-1]))


def single_test_needed(days: np.ndarray | None, s: HealthSettings) -> bool:
    """Whether the single-reading test joins the smoothed one: only where ``readings_in_row`` readings, at
    the history's median spacing (``days``, in days), span longer than ``single_slower_than_days`` (the
    smoothed test alone would then be too late to act on). Without times, the test joins."""
    if days is None or len(days) < 2:
        return True
    return s.readings_in_row * float(np.median(np.diff(np.asarray(days, float)))) > s.single_slower_than_days


def _declared(v: np.ndarray, m: int, run: int, k: int, band_high: float, onset_high: float, who: str,
              s: HealthSettings) -> Onset | None:
    """The start declared after reading ``m`` when its last ``run`` values of ``v`` all stand above
    ``band_high``: the first reading of the stretch above it, back to the band's ``k`` early readings."""
    if not np.all(v[m - run:m] > band_high):
        return None
    start = m - run
    while start > k and v[start - 1] > band_high:
        start -= 1
    return Onset(start, k, onset_high, f"{who} healthy band (mean + {s.band_sd:g} sd of the first {k} readings) "
                                       f"at reading {start + 1} and stayed out {run} readings in a row")


def _risen(y: np.ndarray, healthy: int, s: HealthSettings, words: str) -> Onset | None:
    """Degradation under way by the rise test: the latest ``rise_in_row`` values of ``y`` (logs) all at least
    ``rise_ratio`` times the healthy level, the median of the first readings before them (at most
    ``early_min``, none of them past ``healthy``); None when they are not, or no reading is left for the level."""
    n, run = len(y), s.rise_in_row
    b = min(s.early_min, healthy, n - run)
    if s.rise_ratio <= 1 or b < 1:
        return None
    level = float(np.median(y[:b]))
    high = level + float(np.log(s.rise_ratio))
    if not np.all(y[n - run:] >= high):
        return None
    start = n - run
    while start > 1 and y[start - 1] >= high:        # back to where the readings first stood that high
        start -= 1
    early = min(b, start)                             # the healthy level: the readings before the rise only
    fold = float(np.exp(y[-1] - float(np.median(y[:early]))))
    return Onset(start, early, high, f"degradation under way: the latest {run} single readings stand "
                                     f"{s.rise_ratio:g} times their healthy level (the median of the first {b}) or "
                                     f"more, from reading {start + 1}; the latest is {fold:.0f} times the level of the "
                                     f"{early} reading(s) before ({words}: the rise test stands in for the healthy "
                                     "band)", fold)


def first_predicting_time(health: np.ndarray, settings: HealthSettings | None = None, *,
                          single: np.ndarray | None = None, days: np.ndarray | None = None,
                          healthy: int | None = None) -> Onset:
    """The first reading of the first run of ``readings_in_row`` readings of the (smoothed) health
    indicator above its healthy band, or of ``single_in_row`` single readings above theirs
    (``single``: the log of the single readings at the same readings; None, or readings close enough in
    time (``days``, see ``single_test_needed``): the smoothed test alone),
    as the rule would have declared it reading by reading: at each new reading the bands are made of
    that history's early readings, and the first declaration stands (a band that widens as the
    history grows never takes back a start already declared). ``healthy``: how many of the first readings
    may make the band (those before the first confident fault call; None: any); where the band cannot be
    made, the rise test (``_risen``) stands in."""
    s = settings or shipped_settings()
    x = np.asarray(health, float)
    n = len(x)
    row = s.readings_in_row
    one = s.single_in_row if single is not None and s.single_in_row > 0 and single_test_needed(days, s) else 0
    y = np.asarray(single, float) if one else x
    fewest = min(row, one) if one else row
    words = f"{row} in a row of the {s.smooth_readings}-reading mean" + (f", or {one} single readings in a row,"
                                                                      if one else "")
    cap = n if healthy is None else max(0, min(int(healthy), n))
    capped = cap < min(n, s.early_min)        # readings called faulty leave too few for the band
    if n < early_count(n, s) + fewest or capped:
        k = early_count(n, s)
        few = (f"only {cap} healthy reading(s), before the first confident fault call: too few for a healthy "
               f"band (it needs {s.early_min})" if capped else
               f"{n} reading(s): too few to tell whether degradation has begun (the healthy band needs "
               f"{k}, then {words} out of it)")
        why = (f"only {cap} healthy reading(s) before the first confident fault call" if capped else
               f"{n} reading(s) are too few for a healthy band")
        risen = _risen(np.asarray(single if single is not None else x, float), cap, s, why)
        return risen or Onset(None, min(k, n, cap), float("nan"), few)
    k, high, high1 = 0, float("nan"), float("nan")
    for m in range(1, n + 1):             # the history as it stood after reading m
        k = min(early_count(m, s), cap)
        if m < k + fewest:
            continue
        high = _band(x, k, s)
        if m >= k + row and (on := _declared(x, m, row, k, high, high, "the health indicator left its", s)):
            return on
        if one:
            high1 = _band(y, k, s)
            if on := _declared(y, m, one, k, high1, high, "single readings left their", s):
                return on
    out = _run_above(y, high1) if one and np.isfinite(high1) else _run_above(x, high) if np.isfinite(high) else 0
    band = f"mean + {s.band_sd:g} sd of the first {k} readings"
    what = "the single readings are" if one else "the health indicator is"
    if out:
        return Onset(None, k, high, f"no degradation yet: {what} out of the healthy band ({band}) for the last "
                                    f"{out} reading(s); {words} declare degradation")
    return Onset(None, k, high, f"no degradation yet: {what} within the healthy band ({band}) at the last "
                                f"reading; {words} out of it declare degradation")
