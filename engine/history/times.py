"""When a reading was taken, as an ISO 8601 time, from whatever the logger, sidecar or route says.

Recorders differ: some write a full date and time, some only a time of day
(a snapshot logger's clock columns), some only a running index. A ``Clock``
(a start time and an interval) turns the last two into times: a time of day
is the first moment at or after the start that reads so (a run may cross
midnight, but must be shorter than a day); an index counts intervals from
the start. Each reading's time is found alone, so workers need no order.

Whatever is stated (any text, any YAML scalar, any number), ``resolve_time``
returns a datetime, None when nothing is stated, or raises a ``UsageError``
that says what was wrong: an hour of 25, an empty time, an index so large the
date passes the year 9999.
"""

from __future__ import annotations

import os
import re
from dataclasses import dataclass
from datetime import date, datetime, time, timedelta

from ..common.errors import UsageError

TIME_OF_DAY = re.compile(r"^\d{1,2}:\d{2}(:\d{2}(\.\d+)?)?$", re.ASCII)
INDEX = re.compile(r"^[0-9]+$")
MAX_TEXT = 64     # longer than any date and time ISO 8601 writes


def _shown(value) -> str:
    """A stated value for a message: its repr cut short (an integer of thousands of digits by its size)."""
    if isinstance(value, int) and not isinstance(value, bool) and abs(value).bit_length() > 200:
        return f"an integer of about {int(abs(value).bit_length() * 0.30103) + 1} digits"
    text = repr(value)
    return text if len(text) <= MAX_TEXT else text[:MAX_TEXT - 3] + "..."


def parse_time(value, *, what: str = "time") -> datetime:
    """A full date and time (or a date) as a datetime; a UsageError names what was wrong."""
    if isinstance(value, datetime):
        return value
    if isinstance(value, date):
        return datetime.combine(value, time())
    text = str(value).strip()
    try:
        if len(text) <= MAX_TEXT:
            return datetime.fromisoformat(text.replace("Z", "+00:00"))
    except (ValueError, OverflowError):
        pass
    raise UsageError(f"{what} must be an ISO 8601 date and time (2026-03-04T09:15:00), got {_shown(value)}")


def iso(t: datetime) -> str:
    """``t`` as ISO 8601, to the second unless it has a fraction of one."""
    return t.isoformat(timespec="microseconds" if t.microsecond else "seconds")


@dataclass(frozen=True)
class Clock:
    """Start time and interval for loggers that write only a time of day or an index."""

    start: datetime
    interval_s: float | None = None

    def at_index(self, index: float, *, what: str = "time") -> datetime:
        """The time of reading number ``index`` of a logger's run (start + index x interval)."""
        if self.interval_s is None:
            raise UsageError(f"{what} gives only an index ({_shown(index)}): the route needs clock: "
                             "{start, interval_s}")
        try:
            seconds = float(index) * self.interval_s
            if not seconds >= 0:        # negative or not a number
                raise ValueError
            return self.start + timedelta(seconds=seconds)
        except (OverflowError, ValueError):
            pass
        raise UsageError(f"{what}: index {_shown(index)} at {self.interval_s:g} s intervals from {iso(self.start)} "
                         "is not a time (an index counts intervals from 0, and the date must stay before "
                         "the year 10000)")

    def at_time_of_day(self, text: str, *, what: str = "time") -> datetime:
        """The first moment at or after the start whose clock reads ``text`` (runs shorter than a day)."""
        try:
            t = time.fromisoformat(_pad(text))
        except ValueError:
            raise UsageError(f"{what}: {text!r} is not a time of day (hours 0 to 23, minutes and seconds "
                             "0 to 59)") from None
        moment = datetime.combine(self.start.date(), t, tzinfo=self.start.tzinfo)
        if moment < self.start - timedelta(seconds=1):
            try:
                moment += timedelta(days=1)
            except OverflowError:
                raise UsageError(f"{what}: {text} after {iso(self.start)} falls after the year 9999") from None
        return moment


def _pad(text: str) -> str:
    head, _, frac = text.partition(".")
    parts = head.split(":")
    head = ":".join(p.zfill(2) for p in parts + ["00"] * (3 - len(parts)))
    return head + (("." + (frac + "000000")[:6]) if frac else "")


def resolve_time(stated, clock: Clock | None, *, what: str) -> datetime | None:
    """The time of a reading from what its file, sidecar or route states (None when nothing does).

    ``stated`` may be an ISO date-time, a time of day (needs ``clock``) or a
    number (a running index; needs ``clock`` with an interval). Anything
    else, an empty text included, is a ``UsageError`` naming ``what``.
    """
    if stated is None:
        return None
    if isinstance(stated, (datetime, date)):
        return parse_time(stated, what=what)
    if isinstance(stated, (int, float)) and not isinstance(stated, bool):
        if clock is None:
            raise UsageError(f"{what} gives only an index ({_shown(stated)}); give the route a clock: "
                             "{start, interval_s}")
        return clock.at_index(stated, what=what)
    text = str(stated).strip()
    if not text:
        raise UsageError(f"{what} is empty: give an ISO 8601 date and time (2026-03-04T09:15:00) or leave it out")
    if TIME_OF_DAY.fullmatch(text):
        if clock is None:
            raise UsageError(f"{what} gives only a time of day ({text}); give the route a clock: {{start}} "
                             "or a date")
        return clock.at_time_of_day(text, what=what)
    if INDEX.fullmatch(text):
        if len(text) > MAX_TEXT:
            raise UsageError(f"{what}: an index of {len(text)} digits is not a time")
        return resolve_time(int(text), clock, what=what)
    return parse_time(text, what=what)


def reading_time(stated, stated_from: str, reading, first_file, clock: Clock | None, *, what: str) -> tuple[str, str]:
    """A reading's time (ISO 8601) and where it came from: as stated (``stated_from``: "route",
    "command line"), else the file's own timestamp, else the date the file was last modified."""
    for value, origin in ((stated, stated_from), (reading.timestamp, "file")):
        when = resolve_time(value, clock, what=what)      # None only when nothing is stated
        if when is not None:
            return iso(when), origin
    # to the second: a file system's fraction of a second is no part of when a reading was taken
    return iso(datetime.fromtimestamp(os.path.getmtime(first_file)).replace(microsecond=0)), "file modified"
