"""Render a report document with the Jinja templates in templates/, escaped per format.

HTML is autoescaped by Jinja; Markdown and plain text pass every value
through their own escape (``engine.escape``) as the environment's
``finalize`` step, so no template can forget one. JSON is RFC 8259 JSON
(``engine.jsonout``): never NaN or Infinity.
"""

from __future__ import annotations

from pathlib import Path

import jinja2
import markupsafe

from ..errors import UsageError
from ..jsonout import dumps
from ..outfile import write_whole
from ..paths import TEMPLATES
from .. import escape

FORMATS = {"text": "report.txt.j2", "md": "report.md.j2", "html": "report.html.j2"}
_FINALIZE = {"text": escape.text_value, "md": escape.markdown}


def _pct(x) -> str:
    return f"{100 * x:.0f} %"


def environment(fmt: str | None = None) -> jinja2.Environment:
    """The Jinja environment over templates/: autoescape for .html templates, and for
    ``fmt`` "md" or "text" every value escaped for Markdown or the terminal."""
    env = jinja2.Environment(
        loader=jinja2.FileSystemLoader(str(TEMPLATES)),
        autoescape=jinja2.select_autoescape(enabled_extensions=("html", "html.j2"), default_for_string=False),
        undefined=jinja2.StrictUndefined, trim_blocks=True, lstrip_blocks=True, keep_trailing_newline=True,
        finalize=_FINALIZE.get(fmt))
    env.filters["pct"] = _pct
    env.filters["signed"] = lambda x: f"{100 * x:+.0f} %"
    env.filters["md"] = escape.markdown
    env.filters["md_code"] = escape.markdown_code
    env.filters["term"] = escape.terminal
    env.filters["css_string"] = lambda text: markupsafe.Markup(escape.css_string(text))
    return env


def render(doc: dict, fmt: str) -> str:
    """The report in ``fmt``: text, md, html or json."""
    if fmt == "json":
        return dumps(doc) + "\n"
    if fmt not in FORMATS:
        raise UsageError(f"unknown report format {fmt!r}; use text, md, html or json")
    return environment(fmt).get_template(FORMATS[fmt]).render(doc=doc)


def write_atomically(path, text: str, inputs=()) -> Path:
    """Write ``text`` to ``path`` whole or not at all, never over one of ``inputs``
    (see ``engine.outfile``: checks, fsync, rename, stale-part cleaning)."""
    return write_whole(path, text, inputs)
