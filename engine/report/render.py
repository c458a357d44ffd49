"""Render every document (diagnosis, plan, route summary, trend) with the Jinja templates in
templates/, escaped per format.

``render_document`` is the one way a document becomes text: every value a
template prints passes through its format's escape (``engine.common.escape``) as the
environment's ``finalize`` step, so no template can forget one: Markdown
(``escape.markdown``), plain text and the terminal (``escape.text_value``), HTML
(``escape.html_value``, then Jinja's autoescape). Filters that build markup
(``md_code``, ``url``) return text already escaped for it. JSON is RFC 8259 JSON
(``engine.common.jsonout``): never NaN or Infinity.
"""

from __future__ import annotations

from pathlib import Path

import jinja2
import markupsafe

from ..common.errors import UsageError
from ..common.jsonout import dumps
from ..common.outfile import write_whole
from ..common.paths import TEMPLATES
from ..common import escape

FORMATS = {"text": "report.txt.j2", "md": "report.md.j2", "html": "report.html.j2"}
_FINALIZE = {"text": escape.text_value, "md": escape.markdown, "html": escape.html_value}


def _pct(x) -> str:
    return f"{100 * x:.0f} %"


def environment(fmt: str | None = None) -> jinja2.Environment:
    """The Jinja environment over templates/: autoescape for .html templates, and for ``fmt``
    "md", "text" or "html" every value escaped for Markdown, the terminal or the page."""
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
    env.filters["url"] = escape.url_path
    return env


def render_document(doc: dict, fmt: str, templates: dict[str, str], *, what: str = "report",
                    filters: dict | None = None) -> str:
    """``doc`` in ``fmt``: JSON, or the template ``templates[fmt]`` with every value escaped for ``fmt``."""
    if fmt == "json":
        return dumps(doc) + "\n"
    if fmt not in templates:
        raise UsageError(f"unknown {what} format {fmt!r}; use {', '.join(templates)} or json")
    env = environment(fmt)
    env.filters.update(filters or {})
    return env.get_template(templates[fmt]).render(doc=doc)


def render(doc: dict, fmt: str) -> str:
    """The report in ``fmt``: text, md, html or json."""
    return render_document(doc, fmt, FORMATS)


def write_atomically(path, text: str, inputs=()) -> Path:
    """Write ``text`` to ``path`` whole or not at all, never over one of ``inputs``
    (see ``engine.common.outfile``: checks, fsync, rename, stale-part cleaning)."""
    return write_whole(path, text, inputs)
