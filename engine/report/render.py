"""The one output layer: every document (diagnosis, plan, route summary, trend, demo index) becomes
text, Markdown, HTML or JSON here, with the Jinja templates in templates/.

``render(doc, fmt, kind)`` is the one way a document becomes text; no other module builds a Jinja
environment. ``KINDS`` says where each kind's templates live (``templates/<kind>/``, one file per
format) and which formats it has; every HTML template extends ``templates/base.html.j2``, the one
home of the CSS. Every value a template prints passes through its format's escape
(``engine.common.escape``) as the environment's ``finalize`` step, so no template can forget one:
Markdown (``escape.markdown``), plain text and the terminal (``escape.text_value``), HTML
(``escape.html_value``, then Jinja's autoescape). Filters that build markup (``md_code``, ``url``)
return text already escaped for it; ``script`` inlines a shipped script of ``templates/`` (``plots.js``, the
HTML plots' zoom and cursors), so a page needs nothing from the network. JSON is RFC 8259 JSON
(``engine.common.jsonout``): never NaN or Infinity. A template is given ``doc`` and nothing else.

Compiling a report's template took about 45 ms of every ``tellwave diagnose``; each format's
environment keeps the compiled code in the user's cache folder (``common.paths.user_cache``,
``compiled-templates/``): Jinja's bytecode cache, which compiles afresh when the template's text
changes, under a key that also holds the format, this file (the environment's options), Jinja's
and Python's versions. A folder that cannot be read or written, or a spoilt file, only means a
compile; the folder is kept to a bounded number of files (``common.paths.trim``).
"""

from __future__ import annotations

import hashlib
import os
import sys
from collections.abc import Callable
from dataclasses import dataclass
from functools import cache
from pathlib import Path

import jinja2
import markupsafe

from ..common import escape
from ..common.errors import UsageError
from ..common.jsonout import dumps
from ..common.outfile import write_whole
from ..common.paths import TEMPLATES, trim, user_cache

EXTENSIONS = {"text": "txt", "md": "md", "html": "html"}     # a format's template file: NAME.EXT.j2
_FINALIZE: dict[str | None, Callable] = {"text": escape.text_value, "md": escape.markdown, "html": escape.html_value}


@dataclass(frozen=True)
class Kind:
    """A kind of document: what a user calls it, its template (``templates/`` + ``stem`` + ``.EXT.j2``)
    and the formats it is written in (JSON always, besides these)."""
    what: str
    stem: str
    formats: tuple[str, ...] = ("text", "md", "html")

    def template(self, fmt: str) -> str:
        """The template file of format ``fmt``, relative to ``templates/``."""
        return f"{self.stem}.{EXTENSIONS[fmt]}.j2"


KINDS = {
    "diagnosis": Kind("report", "diagnosis/report"),
    "plan": Kind("plan", "plan/plan"),
    "route": Kind("route summary", "route/summary"),
    "trend": Kind("trend", "trend/trend"),
    "learning": Kind("learning report", "learning/learning"),
    "demo": Kind("demo index", "demo/index", ("html",)),
}
FORMATS = {fmt: KINDS["diagnosis"].template(fmt) for fmt in KINDS["diagnosis"].formats}


def _pct(x) -> str:
    return f"{100 * x:.0f} %"


def _days(d) -> str:
    """A time to act in words: "open" (no projection), "now", minutes, hours, days or months."""
    if d is None:
        return "open"
    if d <= 0:
        return "now"
    if d >= 60:
        return f"{d / (365.25 / 12):.1f} months"
    if d >= 2:
        return f"{d:.0f} days"
    if d * 24 >= 1:
        return f"{d * 24:.1f} h"
    return f"{d * 1440:.1f} min"    # a remaining life can be shorter than an hour


@cache
def _script(name: str) -> markupsafe.Markup:
    """The shipped script ``templates/NAME`` to inline in a ``<script>`` element of a page."""
    text = (TEMPLATES / name).read_text(encoding="utf-8")
    if "</" in text or not name.endswith(".js"):     # a script must not end its own element
        raise ValueError(f"{name} cannot be inlined in a <script> element")
    return markupsafe.Markup(text)


COMPILED = "compiled-templates"        # under the user's cache folder


@cache
def _this_file() -> str:
    """The SHA-256 of this module's text (the environments' options), or "" when it cannot be read."""
    try:
        return hashlib.sha256(Path(__file__).read_bytes()).hexdigest()
    except OSError:
        return ""


class CompiledTemplates(jinja2.FileSystemBytecodeCache):
    """Compiled templates kept in ``folder`` for the environment of ``fmt``. Jinja compiles afresh when
    a template's text changes (its checksum); the key holds everything else the code depends on."""

    def __init__(self, folder: Path, fmt: str):
        super().__init__(str(folder), "%s.code")
        self.salt = "|".join(("tellwave compiled template 1", fmt, _this_file(), jinja2.__version__, sys.version))

    def get_cache_key(self, name: str, filename: str | None = None) -> str:
        """The file a template's code is kept in: its name and place with the salt."""
        text = f"{self.salt}|{name}|{filename}"
        return hashlib.sha256(text.encode("utf-8", "surrogatepass")).hexdigest()

    def load_bytecode(self, bucket) -> None:
        """The kept code, if any; a file that cannot be read as such leaves the template to compile."""
        try:
            super().load_bytecode(bucket)
        except Exception:     # a spoilt or foreign file: compile, and write it afresh
            bucket.reset()

    def dump_bytecode(self, bucket) -> None:
        """Keep the code; a folder that cannot be made or written is no error."""
        try:
            os.makedirs(self.directory, exist_ok=True)
            super().dump_bytecode(bucket)
        except OSError:
            return
        trim(Path(self.directory))


def _compiled(fmt: str | None) -> CompiledTemplates | None:
    """The compiled-template store of ``fmt``'s environment; None for the unescaped one (tests read
    templates with it) or without a user cache folder or a readable source of this module."""
    place = user_cache()
    if fmt is None or place is None or not _this_file():
        return None
    return CompiledTemplates(place / COMPILED, fmt)


@cache
def environment(fmt: str | None = None) -> jinja2.Environment:
    """The Jinja environment over templates/, one per format: autoescape for .html templates, and for
    ``fmt`` "md", "text" or "html" every value escaped for Markdown, the terminal or the page.
    Without ``fmt`` nothing is escaped: for reading templates (tests), never for rendering."""
    env = jinja2.Environment(
        loader=jinja2.FileSystemLoader(str(TEMPLATES)),
        autoescape=jinja2.select_autoescape(enabled_extensions=("html", "html.j2"), default_for_string=False),
        undefined=jinja2.StrictUndefined, trim_blocks=True, lstrip_blocks=True, keep_trailing_newline=True,
        finalize=_FINALIZE.get(fmt), bytecode_cache=_compiled(fmt))
    env.filters["pct"] = _pct
    env.filters["signed"] = lambda x: f"{100 * x:+.0f} %"
    env.filters["days"] = _days
    env.filters["md"] = escape.markdown
    env.filters["md_code"] = escape.markdown_code
    env.filters["term"] = escape.terminal
    env.filters["css_string"] = lambda text: markupsafe.Markup(escape.css_string(text))
    env.filters["url"] = escape.url_path
    env.filters["script"] = _script
    env.filters["hz_in"] = _hz_in
    return env


def _hz_in(text: str, doc: dict) -> str:
    """Words with frequencies in Hz in the units ``doc["units"]`` chose (a plan's: frequency, and the
    speed of the shaft orders are of); as they are when the document chose none."""
    from ..common.units import ShownUnits

    units = doc.get("units") if isinstance(doc, dict) else None
    if not units:
        return text
    return ShownUnits(units["frequency"]).reword_hz(text, units.get("orders_of_hz"))


def render(doc: dict, fmt: str, kind: str = "diagnosis") -> str:
    """The document ``doc`` of ``kind`` (a key of ``KINDS``) in ``fmt``: JSON, or its template for
    ``fmt`` with every value escaped for ``fmt``."""
    if kind not in KINDS:
        raise ValueError(f"no document kind {kind!r}; the kinds are {', '.join(KINDS)}")
    k = KINDS[kind]
    if fmt == "json":
        return dumps(doc) + "\n"
    if fmt not in k.formats:
        raise UsageError(f"unknown {k.what} format {fmt!r}; use {', '.join(k.formats)} or json")
    return environment(fmt).get_template(k.template(fmt)).render(doc=doc)


def write_atomically(path, text: str, inputs=()) -> Path:
    """Write ``text`` to ``path`` whole or not at all, never over one of ``inputs``
    (see ``engine.common.outfile``: checks, fsync, rename, stale-part cleaning)."""
    return write_whole(path, text, inputs)
