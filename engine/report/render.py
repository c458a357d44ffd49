"""Render a report document with the Jinja templates in templates/ (autoescape for HTML)."""

from __future__ import annotations

import json
import os
import tempfile
from pathlib import Path

import jinja2

from ..errors import UsageError
from ..paths import TEMPLATES

FORMATS = {"text": "report.txt.j2", "md": "report.md.j2", "html": "report.html.j2"}


def _pct(x) -> str:
    return f"{100 * x:.0f} %"


def environment() -> jinja2.Environment:
    """The Jinja environment over templates/ (autoescape for .html templates)."""
    env = jinja2.Environment(
        loader=jinja2.FileSystemLoader(str(TEMPLATES)),
        autoescape=jinja2.select_autoescape(enabled_extensions=("html", "html.j2"), default_for_string=False),
        undefined=jinja2.StrictUndefined, trim_blocks=True, lstrip_blocks=True, keep_trailing_newline=True)
    env.filters["pct"] = _pct
    env.filters["signed"] = lambda x: f"{x:+.2f}"
    return env


def render(doc: dict, fmt: str) -> str:
    """The report in ``fmt``: text, md, html or json."""
    if fmt == "json":
        return json.dumps(doc, indent=2, ensure_ascii=False) + "\n"
    if fmt not in FORMATS:
        raise UsageError(f"unknown report format {fmt!r}; use text, md, html or json")
    return environment().get_template(FORMATS[fmt]).render(doc=doc)


def write_atomically(path, text: str) -> Path:
    """Write ``text`` to ``path`` through a temporary file in the same folder, so a
    failure never leaves a half-written report in place of a good one."""
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=path.parent)
    try:
        with os.fdopen(fd, "w", encoding="utf-8") as f:
            f.write(text)
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(tmp, 0o666 & ~umask)
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return path
