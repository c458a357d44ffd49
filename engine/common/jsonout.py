"""JSON output that is always RFC 8259 JSON.

Python's ``json`` writes ``NaN`` and ``Infinity`` for non-finite floats, which
no strict JSON parser accepts. Every JSON tellwave prints or writes goes
through ``dumps``: a non-finite number becomes ``null`` (the value is
unknown), numpy scalars and arrays become plain numbers and lists, and
``allow_nan=False`` makes any that slipped through an error, not bad output.
Text that is hashed, not shown, goes through ``canonical``.
"""

from __future__ import annotations

import json
import math
from pathlib import PurePath

import numpy as np


def plain(value):
    """``value`` with only JSON types: dict (text keys), list, str, finite number, bool, None."""
    if isinstance(value, dict):
        return {str(k): plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [plain(v) for v in value]
    if isinstance(value, np.ndarray):
        return [plain(v) for v in value.tolist()]
    if isinstance(value, (bool, np.bool_)):
        return bool(value)
    if isinstance(value, (int, np.integer)):
        return int(value)
    if isinstance(value, (float, np.floating)):
        number = float(value)
        return number if math.isfinite(number) else None
    if isinstance(value, PurePath):
        return str(value)
    return value


def dumps(value, indent: int | None = 2) -> str:
    """RFC 8259 JSON text of ``value`` (non-finite numbers as null)."""
    return json.dumps(plain(value), indent=indent, ensure_ascii=False, allow_nan=False)


def canonical(value) -> str:
    """One line of JSON text of ``value`` with sorted keys, ASCII only, anything else as its ``str``:
    the text a key is hashed from (``history.record.reading_key``). Stored keys depend on every
    byte of it, so it never changes: a change would make every stored reading look new."""
    return json.dumps(value, sort_keys=True, default=str)
