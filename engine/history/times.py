"""When a reading was taken, as an ISO 8601 time, from whatever the logger, sidecar or route says.

Recorders differ: some write a full date and time, some only a time of day
(a snapshot logger's clock columns), some only a running index. A ``Clock``
(a start time and an interval) turns the last two into times: a time of day
is the first moment at or after the start that reads so (a run may cross
midnight, but must be shorter than a day); an index counts intervals from
the start. Each reading's time is found alone, so workers need no order.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from datetime import date, datetime, time, timedelta

from ..errors import UsageError

TIME_OF_DAY = re.compile(r"^\d{1,2}:\d{2}(:\d{2}(\.\d+)?)?$")


def parse_time(value, *, what: str = "time") -> datetime:
    """A full date and time (or a date) as a datetime; a UsageError names what was wrong."""
    if isinstance(value, datetime):
        return value
    if isinstance(value, date):
        return datetime.combine(value, time())
    try:
        return datetime.fromisoformat(str(value).strip().replace("Z", "+00:00"))
    except ValueError:
        raise UsageError(f"{what} must be an ISO 8601 date and time (2026-03-04T09:15:00), got {value!r}") from None


def iso(t: datetime) -> str:
    return t.isoformat(timespec="microseconds" if t.microsecond else "seconds")


@dataclass(frozen=True)
class Clock:
    """Start time and interval for loggers that write only a time of day or an index."""

    start: datetime
    interval_s: float | None = None

    def at_index(self, index: float) -> datetime:
        if self.interval_s is None:
            raise UsageError("a reading gives only an index: the route needs clock: {start, interval_s}")
        return self.start + timedelta(seconds=float(index) * self.interval_s)

    def at_time_of_day(self, text: str) -> datetime:
        """The first moment at or after the start whose clock reads ``text`` (runs shorter than a day)."""
        t = time.fromisoformat(_pad(text))
        moment = datetime.combine(self.start.date(), t, tzinfo=self.start.tzinfo)
        if moment < self.start - timedelta(seconds=1):
            moment += timedelta(days=1)
        return moment


def _pad(text: str) -> str:
    head, _, frac = text.partition(".")
    parts = head.split(":")
    head = ":".join(p.zfill(2) for p in parts + ["00"] * (3 - len(parts)))
    return head + (("." + (frac + "000000")[:6]) if frac else "")


def resolve_time(stated, clock: Clock | None, *, what: str) -> datetime | None:
    """The time of a reading from what its file, sidecar or route states (None when nothing does).

    ``stated`` may be an ISO date-time, a time of day (needs ``clock``) or a
    number (a running index; needs ``clock`` with an interval).
    """
    if stated is None or stated == "":
        return None
    if isinstance(stated, (int, float)) and not isinstance(stated, bool):
        if clock is None:
            raise UsageError(f"{what} gives only an index ({stated}); give the route a clock: {{start, interval_s}}")
        return clock.at_index(stated)
    text = str(stated).strip()
    if TIME_OF_DAY.match(text):
        if clock is None:
            raise UsageError(f"{what} gives only a time of day ({text}); give the route a clock: {{start}} "
                             "or a date")
        return clock.at_time_of_day(text)
    if re.fullmatch(r"\d+", text):
        return resolve_time(int(text), clock, what=what)
    return parse_time(text, what=what)
