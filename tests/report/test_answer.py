"""The answer at the head of a report: the count of the hypotheses listed below it, and no
sentence about a trend the report does not have.

The tests named ``test_N_*`` reproduce issue 13's report defects and keep their names.
"""

from __future__ import annotations

import re

from engine.report import render

from support import REPORT_FORMATS as FORMATS
from support import ROOT, doc_of


def test_1_the_answer_counts_the_hypotheses_listed_below_it():
    doc = doc_of("rw2-pump-nde-outer-race")
    listed = doc["hypotheses"]
    assert len(listed) >= 2, "the case lists more than its leading hypothesis"
    below = len(listed) - 1
    noun = "hypothesis" if below == 1 else "hypotheses"
    assert f"({below} more {noun} below)" in doc["verdict"]["summary"]
    for fmt in FORMATS:
        out = render(doc, fmt)
        assert f"{below} more {noun} below" in out, fmt


def test_1_no_count_when_nothing_else_is_listed():
    doc = doc_of("rw2-impeller-unbalance")
    if len(doc["hypotheses"]) == 1:
        assert "more" not in doc["verdict"]["summary"]
    else:
        assert f"({len(doc['hypotheses']) - 1} more" in doc["verdict"]["summary"]


NO_TREND = re.compile(r"no trend|earlier readings|no earlier", re.IGNORECASE)


def test_3_a_report_without_history_says_nothing_about_a_trend():
    doc = doc_of("rw2-impeller-unbalance")
    assert "trend" not in doc
    for fmt in FORMATS:
        assert not NO_TREND.search(render(doc, fmt)), fmt
    for template in (ROOT / "templates" / "diagnosis").glob("report.*.j2"):
        assert not NO_TREND.search(template.read_text()), template.name


def test_3_a_report_with_history_keeps_its_trend_section():
    doc = dict(doc_of("rw2-impeller-unbalance"))
    doc["trend"] = {"machine": "RW-2", "units": {"overall_velocity_label": "mm/s RMS"}, "points": [
        {"point": "P1H", "readings": 3, "first": "2026-01-12T08:30:00", "plots": [],
         "iso_change": {"baseline_mm_s": 1.1, "latest_mm_s": 2.3, "significant": True, "criterion_mm_s": 0.7,
                        "shown": {"baseline": "1.1", "latest": "2.3", "change": "+1.20", "criterion": "0.7"}},
         "projections": []}]}
    for fmt in FORMATS:
        out = render(doc, fmt)
        assert "3 readings since 2026-01-12" in out and "criterion II" in out, fmt


def test_a_rival_the_evidence_argues_against_says_so_in_words():
    doc = doc_of("rw2-pump-nde-outer-race")
    dx = next(d for d in doc["differential"] if d["rivals"])
    rival = dict(dx["rivals"][0], certainty=-0.45)
    dx["rivals"] = [rival] + dx["rivals"][1:]
    for fmt in ("text", "md", "html"):
        out = render(doc, fmt)
        assert re.search(rf"{rival['fault_name']} on \S+ \(argued against, -45 %\)", out), fmt
