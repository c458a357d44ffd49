"""The history of every machine: a SQLite store of diagnosed readings, and what goes in it."""

from __future__ import annotations

from .record import INDICATORS, content_hash, record_of
from .store import SCHEMA_VERSION, Store, default_store_path
from .times import Clock, parse_time, resolve_time

__all__ = ["INDICATORS", "SCHEMA_VERSION", "Clock", "Store", "content_hash", "default_store_path",
           "parse_time", "record_of", "resolve_time"]
