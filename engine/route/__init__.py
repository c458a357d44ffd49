"""Whole routes: route and plant files, a process pool or a Dask cluster, the summary."""

from __future__ import annotations

from .files import Route, Task, load_folder, load_route, route_inputs
from .runner import EXTENSIONS as FORMATS
from .runner import RouteOutcome, run_route, summary_paths
from .summary import route_summary


def render_summary(doc: dict, fmt: str) -> str:
    """The route summary in ``fmt``: text, md, html or json, every value escaped for its format."""
    from ..report.render import render_document

    return render_document(doc, fmt, {f: f"route.{ext}.j2" for f, ext in FORMATS.items() if f != "json"},
                           what="route summary")


__all__ = ["FORMATS", "Route", "RouteOutcome", "Task", "load_folder", "load_route", "render_summary",
           "route_inputs", "route_summary", "run_route", "summary_paths"]
