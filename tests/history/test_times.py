"""Reading times from full dates, times of day and running indices."""

from __future__ import annotations

from datetime import datetime

import pytest

from engine.common.errors import UsageError
from engine.history.times import Clock, resolve_time

CLOCK = Clock(datetime(2026, 3, 4, 22, 0), interval_s=10.0)


@pytest.mark.parametrize("stated, expected", [
    ("2026-03-05T09:15:00", datetime(2026, 3, 5, 9, 15)),
    (datetime(2026, 3, 5, 9, 15), datetime(2026, 3, 5, 9, 15)),
    ("23:30:05.5", datetime(2026, 3, 4, 23, 30, 5, 500000)),          # same day as the start
    ("01:10", datetime(2026, 3, 5, 1, 10)),                          # after midnight: the next day
    (6, datetime(2026, 3, 4, 22, 1)),                                # index: 6 intervals of 10 s
    ("12", datetime(2026, 3, 4, 22, 2)),
], ids=["iso", "datetime", "time-of-day", "past-midnight", "index", "index-text"])
def test_times_resolve(stated, expected):
    assert resolve_time(stated, CLOCK, what="t") == expected


@pytest.mark.parametrize("stated, clock, problem", [
    ("09:00", None, "time of day"),
    (5, None, "only an index"),
    (5, Clock(datetime(2026, 1, 1)), "interval_s"),
    ("last tuesday", CLOCK, "ISO 8601"),
], ids=["time-of-day-no-clock", "index-no-clock", "index-no-interval", "nonsense"])
def test_times_that_cannot_resolve_say_why(stated, clock, problem):
    with pytest.raises(UsageError, match=problem):
        resolve_time(stated, clock, what="t")


def test_nothing_stated_is_none():
    assert resolve_time(None, CLOCK, what="t") is None
