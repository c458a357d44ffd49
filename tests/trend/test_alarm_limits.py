"""Derived alarm limits stand a usable margin above the mean, even from readings that repeat closely."""

from __future__ import annotations

from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pytest

from engine.trend.alarm_limits import MIN_SPREAD_FRACTION, derive_limits


def _store(values):
    rows = [{"id": i, "taken_at": f"2026-01-{i + 1:02d}T09:00:00", "point": "GOUTH", "channel": "GOUTH",
             "indicators": {"accel_rms_g": v}} for i, v in enumerate(values)]
    return SimpleNamespace(history=lambda machine, point=None: rows, reading=lambda i: {},
                           top_hypothesis=lambda i: None, path=Path("M2.sqlite"))


def test_limits_from_low_scatter_history_keep_a_margin_of_the_route_repeatability():
    # 16 healthy readings scattering 0.3 % (the new user's simulated GOUTH, item 16: alert 0.06181 and danger
    # 0.06227 on a mean of 0.06136): the sd is raised to 10 % of the mean (common practice: route readings
    # rarely repeat better), so alert = 1.3 x mean and danger = 1.6 x mean at 3 and 6 sd
    v = 0.06136 * (1 + 0.003 * np.random.default_rng(16).standard_normal(16))
    (a,) = derive_limits(_store(list(v)), "MX-3")["alarms"]
    assert MIN_SPREAD_FRACTION == pytest.approx(0.10)
    assert a["alert"] == pytest.approx(1.3 * v.mean(), rel=1e-3)
    assert a["danger"] == pytest.approx(1.6 * v.mean(), rel=1e-3)
    assert "raised to 10 % of the mean" in a["source"]


def test_limits_from_a_scattered_history_are_mean_plus_k_sd_unchanged():
    v = 1.0 * (1 + 0.3 * np.random.default_rng(3).standard_normal(12)).clip(0.2)
    (a,) = derive_limits(_store(list(v)), "MX-3")["alarms"]
    assert a["alert"] == pytest.approx(v.mean() + 3 * v.std(ddof=1), rel=1e-3)     # mean + 3 sd (common practice)
    assert "raised" not in a["source"]
