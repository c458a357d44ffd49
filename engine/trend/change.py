"""Change against a machine's own baseline: the ISO 20816-3 change criterion and a rate per month.

ISO 20816-3 judges a machine twice: by the zone of its level, and by a
change of its level against its own normal (steady-state) value. A change
greater than 25 % of the zone B/C boundary is significant even while the
level stays in zone B (ISO 20816-3:2022, evaluation criterion II; from
memory). The baseline here is the median of the first readings stored.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .series import DAYS_PER_MONTH, Series

ISO_CHANGE_FRACTION_OF_BC = 0.25   # ISO 20816-3:2022 criterion II (from memory)
BASELINE_MIN, BASELINE_MAX = 3, 10


def baseline_count(n: int) -> int:
    """How many of the first readings form the baseline: 3, or a quarter of a long history, at most 10."""
    return max(1, min(n, max(BASELINE_MIN, min(BASELINE_MAX, n // 4))))


def baseline(values: np.ndarray) -> float:
    """The machine's own baseline: the median of the first readings of a series."""
    return float(np.median(values[:baseline_count(len(values))]))


@dataclass(frozen=True)
class Change:
    """A series' change from its baseline to its latest reading, and its rate per month."""
    baseline: float
    latest: float
    change: float             # latest - baseline, in the indicator's unit
    change_pct: float | None  # of the baseline
    rate_per_month: float | None
    readings: int


def change_of(s: Series, since: int = 0) -> Change:
    """Latest against baseline; the rate is the least-squares slope from reading ``since`` on."""
    base = baseline(s.values)
    latest = float(s.values[-1])
    rate = None
    days = s.days[since:]
    if len(days) >= 2 and days[-1] > days[0]:
        rate = float(np.polyfit(days, s.values[since:], 1)[0] * DAYS_PER_MONTH)
    return Change(base, latest, latest - base, 100.0 * (latest - base) / base if base > 0 else None, rate, len(s))


@dataclass(frozen=True)
class IsoChange:
    """The ISO 20816-3 change criterion on velocity: a change of more than 25 % of the B/C
    boundary is significant, even within zone B."""
    criterion_mm_s: float     # 25 % of the B/C boundary
    change_mm_s: float
    significant: bool
    bc_mm_s: float


def iso_change(velocity: Change, bc_mm_s: float) -> IsoChange:
    """ISO 20816-3 criterion II on overall velocity: |change| > 25 % of the B/C boundary."""
    limit = ISO_CHANGE_FRACTION_OF_BC * bc_mm_s
    return IsoChange(limit, velocity.change, abs(velocity.change) > limit, bc_mm_s)
