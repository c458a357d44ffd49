"""Trends of stored readings: change against baseline, the ISO 20816-3 change criterion,
rates per month, change-point detection and projection to a limit."""

from __future__ import annotations

from .change import baseline, change_of, iso_change
from .changepoint import cusum_onset
from .facts import trend_facts
from .projection import Projection, project
from .report import trend_document, trend_from_rows
from .series import Series, series_by_point

__all__ = ["Projection", "Series", "baseline", "change_of", "cusum_onset", "iso_change", "project",
           "series_by_point", "trend_document", "trend_facts", "trend_from_rows"]
