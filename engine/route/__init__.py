"""Whole routes: route and plant files, a process pool or a Dask cluster, the summary."""

from __future__ import annotations

from .files import Route, Task, load_folder, load_route, route_inputs
from .runner import EXTENSIONS as FORMATS
from .runner import RouteOutcome, run_route, summary_paths
from .summary import route_summary

__all__ = ["FORMATS", "Route", "RouteOutcome", "Task", "load_folder", "load_route", "route_inputs",
           "route_summary", "run_route", "summary_paths"]
