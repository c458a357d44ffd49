"""A sidecar's column map: what each column of a headerless table holds.

Loggers often write bare numbers: clock columns (hour, minute, second,
microsecond) or a time column, then one column per channel, no header. A
sidecar ``columns: [hour, minute, second, microsecond, horizontal, vertical]``
names them in order. Clock columns give the reading's time of day (taken
from the first row); ``time_s`` gives the sample rate; ``skip`` drops a
column; any other name is a channel of that name.
"""

from __future__ import annotations

import numpy as np

from ..common.errors import ReadingError
from .formats import RawReading, sample_interval_s

CLOCK = ("hour", "minute", "second", "microsecond")
ROLES = CLOCK + ("time_s", "skip")


def apply_column_map(raw: RawReading, columns: list[str], path: str, sidecar: str) -> RawReading:
    """``raw`` with its columns renamed, clock and time columns turned into metadata."""
    if len(columns) != len(raw.arrays):
        raise ReadingError(f"the sidecar's columns name {len(columns)} columns, the file has {len(raw.arrays)}",
                           path=sidecar)
    role = dict(zip(columns, raw.arrays))
    keep = [i for i, c in enumerate(columns) if c not in ROLES]
    if not keep:
        raise ReadingError("the sidecar's columns name no signal column", path=sidecar)
    meta = dict(raw.meta)
    fs = raw.fs_hz
    clock = [c for c in CLOCK if c in role]
    if clock:
        if "hour" not in role or "minute" not in role:
            raise ReadingError("clock columns need at least hour and minute", path=sidecar)
        seconds = role.get("second", np.zeros(1))[0] + role.get("microsecond", np.zeros(1))[0] * 1e-6
        h, m = int(role["hour"][0]), int(role["minute"][0])
        if not (0 <= h < 24 and 0 <= m < 60 and 0 <= seconds < 61):
            raise ReadingError(f"clock columns give no time of day in the first row ({h}:{m}:{seconds})", path=path)
        whole = int(seconds)
        meta["timestamp"] = f"{h:02d}:{m:02d}:{whole:02d}.{int(round((seconds - whole) * 1e6)):06d}"
    if "time_s" in role:
        fs = 1.0 / sample_interval_s(role["time_s"], "the time_s column", path)
    units = [raw.units[i] if i < len(raw.units) else None for i in keep]
    return RawReading([columns[i] for i in keep], [raw.arrays[i] for i in keep], fs, units,
                      raw.full_scale, [raw.points[i] if i < len(raw.points) else None for i in keep], meta)
