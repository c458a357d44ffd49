"""The trend document in text, Markdown, HTML (with SVG plots) or JSON."""

from __future__ import annotations

import json

TEMPLATES = {"text": "trend.txt.j2", "md": "trend.md.j2", "html": "trend.html.j2"}


def _days(d) -> str:
    if d is None:
        return "open"
    if d <= 0:
        return "now"
    if d >= 60:
        return f"{d / (365.25 / 12):.1f} months"
    if d >= 2:
        return f"{d:.0f} days"
    return f"{d * 24:.1f} h"


def render_trend(doc: dict, fmt: str) -> str:
    from ..report.render import environment

    if fmt == "json":
        return json.dumps(doc, indent=2, ensure_ascii=False) + "\n"
    env = environment()
    env.filters["days"] = _days
    return env.get_template(TEMPLATES[fmt]).render(doc=doc)
