"""Reports: the diagnosis document, its plots, and the one output layer that renders every document
(diagnosis, plan, route summary, trend, demo index) as text, Markdown, HTML or JSON."""

from .document import report_document
from .render import FORMATS, KINDS, render, write_atomically

__all__ = ["FORMATS", "KINDS", "render", "report_document", "write_atomically"]
