"""The history of one indicator at one point of a machine, as arrays of days and values."""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime

import numpy as np

from ..history.record import indicator_label

DAYS_PER_MONTH = 365.25 / 12


@dataclass(frozen=True)
class Series:
    """One indicator of one point of a machine over time, oldest first, with the stored readings' ids."""
    machine: str
    point: str
    indicator: str
    times: tuple[datetime, ...]
    values: np.ndarray
    reading_ids: tuple[int, ...]

    @property
    def label(self) -> str:
        """The indicator's name as reports show it."""
        return indicator_label(self.indicator)

    @property
    def days(self) -> np.ndarray:
        """Days since the first reading of the series."""
        t0 = self.times[0]
        return np.array([(t - t0).total_seconds() / 86400.0 for t in self.times])

    def __len__(self) -> int:
        return len(self.values)


def _when(text: str) -> datetime:
    t = datetime.fromisoformat(text)
    return t.replace(tzinfo=None) if t.tzinfo is None else t


def series_by_point(rows: list[dict], machine: str) -> dict[str, dict[str, Series]]:
    """point -> indicator -> Series, from ``Store.history`` rows (oldest first)."""
    collected: dict[str, dict[str, list]] = {}
    for r in rows:
        point = r["point"] or r["channel"]
        for name, value in r["indicators"].items():
            collected.setdefault(point, {}).setdefault(name, []).append((_when(r["taken_at"]), value, r["id"]))
    out: dict[str, dict[str, Series]] = {}
    for point, by_name in collected.items():
        for name, items in by_name.items():
            items.sort(key=lambda x: x[0])
            out.setdefault(point, {})[name] = Series(machine, point, name, tuple(x[0] for x in items),
                                                     np.array([x[1] for x in items], dtype=float),
                                                     tuple(x[2] for x in items))
    return out
