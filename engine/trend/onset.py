"""When degradation began (the "first predicting time"): the health indicator leaves its healthy
band, mean + k standard deviations of its early readings, for several readings in a row
(Li, Lei et al. 2015, "An improved exponential model for predicting remaining useful life of
rolling element bearings", IEEE Trans. Ind. Electronics 62; the settings are in
rulebooks/trend/onset.yaml). Before it the answer is "no degradation yet", not a projection.
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


def early_count(n: int, s: HealthSettings) -> int:
    """How many of the first readings make the healthy band: a fraction of the history, within
    [early_min, early_max] (a fraction 0 takes early_min, a fixed count)."""
    return int(min(s.early_max, max(s.early_min, round(s.early_fraction * n))))


def first_predicting_time(health: np.ndarray, settings: HealthSettings | None = None) -> Onset:
    """The first reading of the first run of ``readings_in_row`` readings above the healthy band,
    as the rule would have declared it reading by reading: at each new reading the band is made of
    that history's early readings, and the first declaration stands (a band that widens as the
    history grows never takes back a start already declared)."""
    s = settings or shipped_settings()
    x = np.asarray(health, float)
    n = len(x)
    row = s.readings_in_row
    if n < early_count(n, s) + row:
        k = early_count(n, s)
        return Onset(None, min(k, n), float("nan"),
                     f"{n} reading(s): too few to tell whether degradation has begun (the healthy band needs "
                     f"{k}, then {row} more in a row out of it)")
    k, high = 0, float("nan")
    for m in range(1, n + 1):             # the history as it stood after reading m
        k = early_count(m, s)
        if m < k + row:
            continue
        early = x[:k]
        high = float(np.mean(early) + s.band_sd * np.std(early, ddof=1))
        if np.all(x[m - row:m] > high):
            start = m - row
            while start > k and x[start - 1] > high:
                start -= 1
            return Onset(start, k, high, f"the health indicator left its healthy band (mean + {s.band_sd:g} sd "
                                         f"of the first {k} readings) at reading {start + 1} and stayed out "
                                         f"{row} readings in a row")
    return Onset(None, k, high, f"no degradation yet: the health indicator has not left its healthy band "
                                f"(mean + {s.band_sd:g} sd of the first {k} readings) for {row} readings in a row")
