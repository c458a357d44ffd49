"""The HTML report printed: letter pages with the machine on each, headings kept with their text,
the safety box whole, a machine name that cannot break out of the style, and a real browser's PDF.

The tests named ``test_N_*`` reproduce issue 13's report defects and keep their names.
"""

from __future__ import annotations

import json
import re

import pytest

from engine.report import render

from support import doc_of


def _style(html: str) -> str:
    return html[html.index("<style>"):html.index("</style>")]


def _rule(style: str, selector_part: str) -> str:
    """The declarations of the first rule whose selector list holds ``selector_part``."""
    m = re.search(r"([^{}]*" + re.escape(selector_part) + r"[^{}]*)\{([^{}]*)\}", style)
    assert m, selector_part
    return m.group(2)


def test_7_print_style_keeps_headings_with_their_text_and_the_safety_box_whole():
    doc = doc_of("ct1-bevel-tooth")
    html = render(doc, "html")
    style = _style(html)
    page = style[style.index("@page"):]
    assert re.search(r"size:\s*letter", page)
    assert "@top-left" in page and '"CT-1 cooling tower fan' in page       # the machine on every page
    assert "counter(page)" in page and "counter(pages)" in page
    assert "reading taken 2026" in page or "reading taken at a time not stated" in page
    printing = style[style.index("@media print"):]
    assert "break-after: avoid" in _rule(printing, "h2")
    assert "break-inside: avoid" in _rule(printing, ".cautions")
    assert 'id="safety" class="cautions"' in html
    assert "print-color-adjust: exact" in _rule(style, ".cautions")


def test_7_a_machine_name_cannot_break_out_of_the_print_style():
    doc = json.loads(json.dumps(doc_of("rw2-impeller-unbalance")))
    doc["machine"]["name"] = 'P-1"; } body { display: none } </style><script>alert(1)</script>'
    html = render(doc, "html")
    style = _style(html)
    # the report's own scripts (the plots' zoom and cursors) stay as many as without the name
    assert "<script>alert" not in html and "</style><" not in html
    assert html.count("<script") == render(doc_of("rw2-impeller-unbalance"), "html").count("<script")
    header = re.search(r"@top-left \{ content: (\"[^\"]*\");", style)      # one CSS string, quotes escaped
    assert header and "\\22 " in header.group(1) and "\\3c /style\\3e " in header.group(1)
    plain = _style(render(doc_of("rw2-impeller-unbalance"), "html"))
    plain_header = re.search(r"@top-left \{ content: (\"[^\"]*\");", plain).group(1)
    assert style.replace(header.group(1), "").count("{") == plain.replace(plain_header, "").count("{"), \
        "the name adds no rule to the style sheet"


@pytest.mark.browser
def test_7_headless_chromium_prints_the_report_on_letter_pages(tmp_path):
    import shutil
    import subprocess

    browser = shutil.which("chromium") or shutil.which("chromium-browser")
    if browser is None:
        pytest.skip("no chromium on this machine (.ci/run installs the Debian package)")
    page = tmp_path / "report.html"
    page.write_text(render(doc_of("ct1-bevel-tooth"), "html"))
    pdf = tmp_path / "report.pdf"
    subprocess.run([browser, "--headless", "--no-sandbox", "--disable-gpu", "--no-first-run",
                    "--disable-background-networking", "--disable-component-update", "--disable-sync",
                    f"--user-data-dir={tmp_path / 'profile'}", "--no-pdf-header-footer",
                    f"--print-to-pdf={pdf}", page.as_uri()], check=True, capture_output=True, timeout=120)
    data = pdf.read_bytes()
    assert data.startswith(b"%PDF")
    pages = re.findall(rb"/Type\s*/Page\b", data)
    boxes = set(re.findall(rb"/MediaBox\s*\[\s*0 0 (\d+(?:\.\d+)?) (\d+(?:\.\d+)?)\s*\]", data))
    assert len(pages) >= 3, "the gearbox report runs over several pages"
    assert boxes == {(b"612", b"792")}, boxes                     # US Letter, 8.5 x 11 in at 72 pt/in
