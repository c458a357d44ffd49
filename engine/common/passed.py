"""Documents that passed their JSON Schema, remembered between processes so the check is not run again.

Validating the shipped rulebooks with jsonschema took about a tenth of a whole ``tellwave
diagnose`` (and importing jsonschema more), on every run, for files that had not changed. A
verdict is a pure function of three things, and its key is made of all three:

- the schema, as loaded (its text, canonical);
- the document's data exactly as read: mappings, lists, text, integers, floats, true, false and
  null, written with their types (``repr``: ``1`` and ``'1'`` and ``1.0`` differ); data holding
  anything else is never remembered;
- the validator: jsonschema's and referencing's installed files (path, size and modification
  time of each package's first module), so an upgrade starts afresh.

Only a pass is remembered, as an empty file named by the SHA-256 of the key, under the user's
cache folder (``common.paths.user_cache``); a document with a problem is checked every time,
so its error is always the validator's own. Nothing read from the folder is ever parsed: a file
either exists or it does not. A folder that cannot be made or written leaves every check run
in full, without a word; a remembered pass is written under a temporary name and renamed. The
folder is kept to a bounded number of passes (``common.paths.trim``).
"""

from __future__ import annotations

import hashlib
import os
from functools import cache
from importlib.util import find_spec
from pathlib import Path

from .paths import trim

FORMAT = "tellwave schema pass 1"      # change when the key's make-up changes
FOLDER = "schema-passes"               # under the user's cache folder
_VALIDATOR_PACKAGES = ("jsonschema", "referencing", "jsonschema_specifications")
_PLAIN = (str, int, float, bool, type(None))


@cache
def folder() -> Path | None:
    """Where passes are remembered, or None when there is no user cache folder."""
    from .paths import user_cache

    place = user_cache()
    return place / FOLDER if place is not None else None


@cache
def _validator_stamp() -> str:
    """The installed validator's files: a reinstall or an upgrade changes it."""
    parts = []
    for name in _VALIDATOR_PACKAGES:
        spec = find_spec(name)
        origin = spec.origin if spec is not None else None
        if origin is None:
            parts.append(f"{name}:-")
            continue
        st = os.stat(origin)
        parts.append(f"{name}:{origin}:{st.st_size}:{st.st_mtime_ns}")
    return "|".join(parts)


def _plain(data) -> bool:
    """True when ``data`` is made only of the JSON data model's types (its ``repr`` is then faithful)."""
    stack = [data]
    while stack:
        value = stack.pop()
        if isinstance(value, dict):
            stack.extend(value.keys())
            stack.extend(value.values())
        elif isinstance(value, list):
            stack.extend(value)
        elif type(value) not in _PLAIN:     # exact types: a subclass may show itself differently
            return False
    return True


def key(schema_text: str, data) -> str | None:
    """The name a pass of ``data`` against the schema is remembered by, or None (not to be remembered)."""
    if not _plain(data):
        return None
    digest = hashlib.sha256()
    for part in (FORMAT, _validator_stamp(), schema_text, repr(data)):
        digest.update(part.encode("utf-8", "surrogatepass"))
        digest.update(b"\0")
    return digest.hexdigest()


def remembered(name: str | None) -> bool:
    """Whether a pass under ``name`` was remembered."""
    place = folder()
    return name is not None and place is not None and (place / name).is_file()


def remember(name: str | None) -> None:
    """Remember a pass under ``name``; any failure leaves it unremembered, silently."""
    place = folder()
    if name is None or place is None:
        return
    try:
        place.mkdir(parents=True, exist_ok=True)
        part = place / f".{name}.{os.getpid()}.part"
        part.write_bytes(b"")
        os.replace(part, place / name)
    except OSError:
        return
    trim(place)


__all__ = ["folder", "key", "remember", "remembered"]
