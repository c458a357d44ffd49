"""A rule a learned overlay judged shows the site's record (confirmed k of n at repair) beside the certainty
it qualifies, in every format, whether learning changed its weight or kept it (too little evidence, a move
that rounds away, a move the record contradicts): a kept weight's record used to sit in the overlay's
comments only."""

from __future__ import annotations

import json

import jsonschema
import pytest

from engine.common.yamlfile import load_schema
from engine.machine import load_machine
from engine.pipeline import diagnose, document_of
from engine.reasoning import load_rulebook
from engine.reasoning.learning import Finding, JudgedDiagnosis, firings_of, propose_overlay
from engine.report import render
from engine.simulation import as_reading, simulate

from support import MADE_AT, ROOT, reasoner


@pytest.fixture(scope="module")
def made(tmp_path_factory):
    """A pump with an inner-race defect diagnosed with the shipped rules, learned from three judged repairs
    (two confirmed: too little evidence, every weight kept), then diagnosed again with the learned overlay."""
    pump = load_machine(ROOT / "cases/machines/rw2-raw-water-pump.yaml")
    reading = as_reading(simulate(pump, "inner-race", "pump_de", 3, None, 12800.0, 3.0, 5, ["P1H", "P1A", "P2H"]),
                         "ir.wav")
    before = diagnose(reading, pump, reasoner())
    top = before.reasoning.confident()[0]
    fired = firings_of(before.reasoning)
    found = [Finding(top.component, top.fault)] * 2 + [Finding(top.component, "nothing-found")]
    judged = [JudgedDiagnosis(f"r{i}", fired, (f,)) for i, f in enumerate(found)]
    proposal = propose_overlay(judged, load_rulebook())
    assert proposal.changes == () and proposal.too_little        # 3 judged firings, fewer than the least 5
    folder = tmp_path_factory.mktemp("site") / "learned"
    folder.mkdir()
    (folder / "learned.yaml").write_text(proposal.text, encoding="utf-8")
    after = diagnose(reading, pump, reasoner(folder))
    return before, after, document_of(after, made_at=MADE_AT), top


def test_kept_weights_leave_the_certainty_as_it_was(made):
    before, after, _, top = made
    assert after.reasoning.confident()[0].certainty == pytest.approx(top.certainty)


def test_the_record_stands_beside_the_hypothesis_it_qualifies_and_under_the_answer(made):
    _, _, doc, top = made
    h = doc["hypotheses"][0]
    assert (h["fault"], h["component"]) == (top.fault, top.component)
    kept = sorted({f["rule"] for f in h["support"] if "site_record" in f})
    assert kept and all(f["site_record"]["weight_kept"] == "too few judged firings to learn from"
                        for f in h["support"] if "site_record" in f)
    # 2 of 3 judged repairs found the fault on that component (the findings above)
    assert h["site_record"] == "site record at repair: " + "; ".join(f"{r} confirmed 2 of 3" for r in kept) + \
        " (weight kept)"
    line = doc["verdict"]["site_record"]
    assert line.startswith("weights kept by learning from this site's findings at repair, with their record (")
    assert all(f"{r} confirmed 2 of 3" in line for r in kept)
    jsonschema.Draft202012Validator(load_schema("report.schema.json")).validate(json.loads(render(doc, "json")))


def test_every_format_puts_the_record_next_to_the_certainty(made):
    _, _, doc, _ = made
    h = doc["hypotheses"][0]
    record = h["site_record"]
    text = render(doc, "text").splitlines()
    at = next(i for i, s in enumerate(text) if s.strip().startswith(f"1. {h['fault_name']} on {h['component']}:"))
    assert text[at + 1].strip() == record                          # the line under the certainty
    md_row = next(s for s in render(doc, "md").splitlines() if s.startswith(f"| 1 | {h['fault_name']}"))
    assert f"{h['certainty_pct']} % ({h['strength']}); {record}" in md_row.replace("\\_", "_")
    html = render(doc, "html")
    cell = html[html.index(f"{h['certainty_pct']} % <span class=\"small\">({h['strength']})</span>"):]
    assert cell[:cell.index("</td>")].endswith(f'<br><span class="small">{record}</span>')
    assert f'"site_record": "{record}"' in render(doc, "json")


def test_without_a_learned_overlay_nothing_is_said(made):
    before, _, _, _ = made
    doc = document_of(before, made_at=MADE_AT)
    assert doc["verdict"]["site_record"] is None and all("site_record" not in h for h in doc["hypotheses"])
