"""Reports: the report document, its plots and its rendering (text, Markdown, HTML, JSON)."""

from .document import report_document
from .render import FORMATS, render, write_atomically

__all__ = ["FORMATS", "render", "report_document", "write_atomically"]
