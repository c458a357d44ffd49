"""Escaping per output format, for text that comes from users' files.

Machine names, channel names, file names and rule texts are written by
people (or by a hostile file) and end up in reports and on the terminal.
Each output format gets its own escape:

- ``terminal``: control characters (ESC starts a terminal escape sequence;
  C1 controls; the bidirectional overrides that reorder what a reader sees)
  are shown as ``\\x1b``-style codes instead of acting on the terminal.
- ``markdown``: the characters Markdown and GitHub tables give meaning to
  (``|`` ends a table cell, ``<`` starts raw HTML, ``*``, ``_``, backquotes and
  brackets start emphasis, code and links, ``&`` before ``name;`` an entity) are
  escaped with a backslash, never as HTML entities, so a name reads as written both
  rendered and as plain text ("Randall & Antoni"); line breaks become spaces so one
  value cannot start a new block.
- ``html``: Jinja autoescapes ``<``, ``>``, ``&`` and quotes; ``html_value`` first
  shows control characters as codes (a page saved and shown with ``cat`` acts on
  the terminal too). ``css_string`` quotes a value for the print style sheet.
- ``url_path``: a file path as a relative link: every character but letters,
  digits and ``/._-~`` percent-encoded, so no name can become a ``javascript:``
  link, end the attribute or the Markdown link, or point somewhere else.

``engine.report.render`` renders every document (diagnosis, plan, route
summary, trend, demo index) with the one of these that fits its format as the
Jinja environment's ``finalize`` step, so no template can forget one; text on
the terminal that no template makes goes through ``terminal`` or ``one_line``.

``Verbatim`` marks text a template filter has already made safe (a Markdown
code span), so the environment's finalize step leaves it alone.
"""

from __future__ import annotations

import re
from urllib.parse import quote

import markupsafe

# C0 controls except tab and newline, DEL, C1 controls, and the Unicode bidi
# embedding, override and isolate controls (the "Trojan Source" characters)
_CONTROL = re.compile("[\x00-\x08\x0b-\x1f\x7f-\x9f\u061c\u200e\u200f\u202a-\u202e\u2066-\u2069]")
_MARKDOWN_PUNCT = re.compile(r"([\\`*_{}\[\]|~#!])")
_LINE_BREAKS = re.compile(r"[\r\n\u2028\u2029]+")
_ENTITY = re.compile(r"&(?=#[0-9]{1,7};|#[xX][0-9a-fA-F]{1,6};|[A-Za-z][A-Za-z0-9]{0,31};)")   # a character reference


class Verbatim(str):
    """Text already escaped for its format."""


def _code(ch: str) -> str:
    n = ord(ch)
    return f"\\x{n:02x}" if n < 0x100 else f"\\u{n:04x}"


def terminal(text) -> str:
    """``text`` with every control character shown as an escape code (tab and newline kept)."""
    return _CONTROL.sub(lambda m: _code(m.group()), str(text))


def one_line(text) -> str:
    """``terminal`` text on one line: line breaks shown as ``\\n``, tabs as spaces."""
    s = str(text).replace("\r", "\\r").replace("\n", "\\n").replace("\t", " ")
    return terminal(s.replace("\u2028", "\\u2028").replace("\u2029", "\\u2029"))


def markdown(text) -> str:
    """``text`` safe inside a Markdown paragraph, list item or table cell."""
    if isinstance(text, Verbatim):
        return text
    s = terminal(_LINE_BREAKS.sub(" ", str(text))).replace("\t", " ")
    s = _MARKDOWN_PUNCT.sub(r"\\\1", s)
    # backslash escapes, not HTML entities: Markdown is read as text too, and "Randall &amp; Antoni"
    # reads wrong there. CommonMark lets a backslash escape any ASCII punctuation: "\<" cannot open raw
    # HTML or an autolink, "\>" a block quote, and "\&" only where "&" would start an entity
    # ("&lt;", "&#60;"); a plain "&" is left as written.
    s = s.replace("<", "\\<").replace(">", "\\>")
    s = _ENTITY.sub(r"\\&", s)
    # a value that starts like a list item (bullet or number) or a setext underline must not become one
    s = re.sub(r"^([-+=])(?=\s|$)", r"\\\1", s)
    return re.sub(r"^(\d{1,9})([.)])(?=\s|$)", r"\1\\\2", s)


def markdown_code(text) -> Verbatim:
    """``text`` as a Markdown code span: a fence longer than any run of backquotes in it,
    ``|`` escaped as GitHub tables require even inside code."""
    s = terminal(_LINE_BREAKS.sub(" ", str(text))).replace("|", "\\|")
    longest = max((len(run) for run in re.findall(r"`+", s)), default=0)
    fence = "`" * (longest + 1)
    pad = " " if s.startswith("`") or s.endswith("`") or not s.strip() else ""
    return Verbatim(f"{fence}{pad}{s}{pad}{fence}")


_CSS_PLAIN = re.compile(r"[A-Za-z0-9 .,:_()/+#%-]")


def css_string(text) -> str:
    """``text`` as a quoted CSS string (for a printed page's running header): every character
    but letters, digits, space and plain punctuation becomes a CSS escape, so no value can end
    the string, the rule or the ``<style>`` element, and line breaks cannot start a new line."""
    s = _LINE_BREAKS.sub(" ", str(text))
    return '"' + "".join(ch if _CSS_PLAIN.fullmatch(ch) else f"\\{ord(ch):x} " for ch in s) + '"'


def html_value(value):
    """A value for an autoescaped HTML page: text with control characters shown as codes (Jinja then
    escapes it); markup a filter made safe (``Markup``: a joined list, a plot) keeps its markup, with
    its control characters shown as codes too; other values pass as they are."""
    if isinstance(value, markupsafe.Markup):
        return markupsafe.Markup(terminal(value))
    if not isinstance(value, str):
        return value
    return terminal(value)


def url_path(text) -> Verbatim:
    """A relative file path as a link target: percent-encoded but for ``/``, letters, digits and
    ``._-~``, so it stays a path (never a ``javascript:`` or other scheme) in HTML and Markdown."""
    return Verbatim(quote(str(text), safe="/"))


def text_value(text) -> str:
    """A value in the plain-text report: terminal-safe and on one line."""
    if isinstance(text, Verbatim):
        return text
    return terminal(_LINE_BREAKS.sub(" ", str(text)))
