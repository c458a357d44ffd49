"""Whole routes: route and plant files, a process pool or a Dask cluster, the summary."""

from __future__ import annotations

from .files import Route, Task, load_folder, load_route, route_inputs
from .runner import EXTENSIONS as FORMATS
from .runner import RouteOutcome, run_route, summary_paths
from .summary import route_summary


def render_summary(doc: dict, fmt: str) -> str:
    """The route summary in ``fmt``: text, md, html or json."""
    import json

    from ..report.render import environment

    if fmt == "json":
        return json.dumps(doc, indent=2, ensure_ascii=False) + "\n"
    return environment().get_template(f"route.{FORMATS[fmt]}.j2").render(doc=doc)


__all__ = ["FORMATS", "Route", "RouteOutcome", "Task", "load_folder", "load_route", "render_summary",
           "route_inputs", "route_summary", "run_route", "summary_paths"]
