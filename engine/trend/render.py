"""The trend document in text, Markdown, HTML (with SVG plots) or JSON."""

from __future__ import annotations

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
    """The trend in ``fmt``: text, md, html or json, every value escaped for its format."""
    from ..report.render import render_document

    return render_document(doc, fmt, TEMPLATES, what="trend", filters={"days": _days})
