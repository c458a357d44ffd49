"""Change against a machine's own baseline: the ISO 20816-3 change criterion and a rate per month
(the slope of the latest readings, not of the whole history).

ISO 20816-3 judges a machine twice: by the zone of its level, and by a
change of its level against its own normal (steady-state) value. A change
greater than 25 % of the zone B/C boundary is significant even while the
level stays in zone B (ISO 20816-3:2022, evaluation criterion II; from
memory). The baseline here is the median of the first readings stored, and
never includes the latest reading (the one judged against it). A percent
change is given only from ``param.trend_change_min_readings`` readings on
(rulebooks/parameters.yaml); a quantity in dB over a floor gets its dB
difference instead, since a percent of a logarithm means nothing.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cache

import numpy as np

from .series import DAYS_PER_MONTH, Series

ISO_CHANGE_FRACTION_OF_BC = 0.25   # ISO 20816-3:2022 criterion II (from memory)
BASELINE_MIN, BASELINE_MAX = 3, 10
# the rate per month is the least-squares slope of the latest readings, this many: the present
# direction (a slope over the whole history says a level that rose and fell back still rises);
# 4, the fewest whose line keeps 2 degrees of freedom for its scatter (common practice)
RATE_READINGS = 4


@cache
def min_change_readings() -> int:
    """Readings a series needs before a percent change is given (``param.trend_change_min_readings``)."""
    from ..reasoning import load_rulebook

    return int(load_rulebook().parameters["trend_change_min_readings"].value)


def is_db(indicator: str) -> bool:
    """Whether an indicator is in dB (its name ends in ``_db``): a difference, never a percent."""
    return indicator.endswith("_db")


def baseline_count(n: int, healthy: int | None = None) -> int:
    """How many of the first readings form the baseline: 3, or a quarter of a long history, at most 10,
    and never the latest (0 for a single reading: it has no baseline); at most the ``healthy`` first
    readings when some are known healthy (``baseline``)."""
    k = max(0, min(n - 1, max(BASELINE_MIN, min(BASELINE_MAX, n // 4))))
    return min(k, healthy) if healthy else k


def baseline(values: np.ndarray, healthy: int | None = None) -> float | None:
    """The machine's own baseline: the median of the first readings of a series (None for one reading);
    ``healthy``: how many of the first readings are healthy (those before the first confident fault call at
    the point; None or 0: not known, the first readings as they are), the baseline is made of those only."""
    k = baseline_count(len(values), healthy)
    return float(np.median(values[:k])) if k else None


@dataclass(frozen=True)
class Change:
    """A series' change from its baseline to its latest reading, and its rate per month."""
    baseline: float | None
    latest: float
    change: float | None      # latest - baseline, in the indicator's unit (dB for dB quantities)
    change_pct: float | None  # of the baseline; None for dB, too few readings or a baseline at zero
    rate_per_month: float | None   # least-squares slope of the latest ``rate_readings`` readings
    readings: int
    baseline_readings: int = 0
    rate_readings: int = 0


def change_of(s: Series, since: int = 0, min_readings: int | None = None, healthy: int | None = None) -> Change:
    """Latest against baseline (the change), and the least-squares slope of the latest ``RATE_READINGS``
    readings from reading ``since`` on (the rate): two different things, which can differ in sign when
    a level rose and is now falling back.

    ``min_readings``: readings needed for a percent change (default ``min_change_readings()``); ``healthy``: the
    first readings known healthy, the baseline's (``baseline``).
    """
    need = min_change_readings() if min_readings is None else min_readings
    base = baseline(s.values, healthy)
    latest = float(s.values[-1])
    rate = None
    first = max(since, len(s) - RATE_READINGS)
    days = s.days[first:]
    if len(days) >= 2 and days[-1] > days[0]:
        values = np.asarray(s.values[first:], float)
        slope = float(np.polyfit(days, values, 1)[0])
        # a rise over the window smaller than the values' own rounding is no rise (a steady series gave -9.6e-20)
        if abs(slope * (days[-1] - days[0])) <= 1e-9 * float(np.max(np.abs(values))):
            slope = 0.0
        rate = slope * DAYS_PER_MONTH
    change = None if base is None else latest - base
    pct = None
    if change is not None and base is not None and base > 0 and len(s) >= need and not is_db(s.indicator):
        pct = 100.0 * change / base
    return Change(base, latest, change, pct, rate, len(s), baseline_count(len(s), healthy),
                  len(days) if rate is not None else 0)


@dataclass(frozen=True)
class IsoChange:
    """The ISO 20816-3 change criterion on velocity: a change of more than 25 % of the B/C
    boundary is significant, even within zone B."""
    criterion_mm_s: float     # 25 % of the B/C boundary
    change_mm_s: float
    significant: bool
    bc_mm_s: float


def iso_change(velocity: Change, bc_mm_s: float) -> IsoChange | None:
    """ISO 20816-3 criterion II on overall velocity: |change| > 25 % of the B/C boundary (None
    without a baseline)."""
    if velocity.change is None:
        return None
    limit = ISO_CHANGE_FRACTION_OF_BC * bc_mm_s
    return IsoChange(limit, velocity.change, abs(velocity.change) > limit, bc_mm_s)
