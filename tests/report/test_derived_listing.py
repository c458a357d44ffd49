"""The facts derived along the way are listed one per line (text) or as a table (HTML, Markdown), each with
its certainty and rule, instead of one paragraph of sentences run together."""

from __future__ import annotations

import re

import pytest

from engine.machine import load_machine
from engine.pipeline import diagnose, document_of
from engine.reasoning import Reasoner, load_rulebook
from engine.report import render
from engine.simulation import as_reading, simulate

from support import ROOT, HtmlChecker


@pytest.fixture(scope="module")
def doc():
    m = load_machine(ROOT / "cases/machines/rw2-raw-water-pump.yaml")
    sim = simulate(m, "outer-race", "pump_nde", 3, None, 12800.0, 3.0, 4)
    out = document_of(diagnose(as_reading(sim, "rw2-test.wav"), m, Reasoner(load_rulebook())))
    assert len(out["chain"]) > 4      # a bearing family on several channels derives one fact per view
    return out


def test_text_gives_each_derived_fact_its_own_line(doc):
    text = render(doc, "text")
    head, _, rest = text.partition("  derived along the way (")
    assert rest.startswith(f"{len(doc['chain'])} facts, the first 3; the JSON report has all):\n")
    lines = rest.split("\n\n", 1)[0].splitlines()[1:]
    assert len(lines) == 3
    for line, f in zip(lines, doc["chain"]):
        assert re.match(r"^    [+-]\d+ %  \S+: ", line) and f["rule"] in line and f["because"] in line


def test_html_and_markdown_give_a_table_row_per_derived_fact(doc):
    html = render(doc, "html")
    section = html.split("<h3>Derived along the way</h3>", 1)[1].split("</table>", 1)[0]
    assert section.count("<tr>") == 1 + 4          # the header and the first four
    checker = HtmlChecker()
    checker.feed(html)
    assert not checker.errors
    assert f"{len(doc['chain']) - 4} more in the JSON report" in html
    md = render(doc, "md").split("Derived along the way (", 1)[1].split("\n\n", 2)
    rows = [r for r in md[1].splitlines() if r.startswith("| ") and "`" in r]
    assert len(rows) == 4 and all(r.count(" | ") == 3 for r in rows)
