"""Baseline, the ISO 20816-3 change criterion and the rate per month."""

from __future__ import annotations

from datetime import datetime, timedelta

import numpy as np
import pytest

from engine.trend import change_of, iso_change
from engine.trend.series import Series


def _series(values, every_days=30.0):
    t0 = datetime(2026, 1, 1)
    times = tuple(t0 + timedelta(days=every_days * i) for i in range(len(values)))
    return Series("M", "P1H", "velocity_rms_mm_s", times, np.array(values, dtype=float), tuple(range(len(values))))


# ISO 20816-3:2022 criterion II (from memory): a change greater than 25 % of the B/C boundary is
# significant; group 2 rigid B/C = 2.8 mm/s (check-values.md, ISO 20816-3 table, recalled) -> 0.7 mm/s
@pytest.mark.parametrize("latest, significant", [(2.45, True), (2.35, False), (0.9, True)],
                         ids=["rise-within-B", "small-rise", "fall"])
def test_iso_change_criterion(latest, significant):
    c = change_of(_series([1.7, 1.7, 1.7, latest]))
    ic = iso_change(c, bc_mm_s=2.8)
    assert ic.criterion_mm_s == pytest.approx(0.7)
    assert ic.significant is significant


def test_rate_per_month_is_the_slope():
    c = change_of(_series([1.0, 1.5, 2.0, 2.5], every_days=365.25 / 12))
    assert c.rate_per_month == pytest.approx(0.5)
    assert c.baseline == pytest.approx(1.5) and c.change_pct == pytest.approx(100 * (2.5 - 1.5) / 1.5)


@pytest.mark.parametrize("level", [0.0004, 1.7, 3.3e5])
def test_a_steady_series_has_no_rate(level):
    # a least-squares slope of equal values is 0 (derived); the fit's rounding left -9.6e-20 per month,
    # printed beside a "+0" change
    c = change_of(_series([level] * 6, every_days=30.0))
    assert c.rate_per_month == 0.0


def test_a_small_true_rise_keeps_its_rate():
    # 1 part in a million per month is far above the values' rounding: kept (derived)
    values = [1.0 + 1e-6 * k for k in range(4)]
    c = change_of(_series(values, every_days=365.25 / 12))
    assert c.rate_per_month == pytest.approx(1e-6, rel=1e-3)
