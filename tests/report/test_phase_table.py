"""The 1X phase table of a diagnosis report, in every format, from the demo case that gives phase."""

from __future__ import annotations

import json

import jsonschema
import pytest

from engine.common.yamlfile import load_schema
from engine.machine import load_machine
from engine.pipeline import diagnose, document_of
from engine.pipeline.cases import load_case, reading_of
from engine.report import render

from support import CASES, reasoner


@pytest.fixture(scope="module")
def doc():
    case = load_case(CASES / "demo/rw2-misalignment-phase.case.yaml")
    machine = load_machine(case.machine)
    return document_of(diagnose(reading_of(case, machine), machine, reasoner()), made_at="2026-03-01T08:00+00:00")


def test_the_phase_section_lists_readings_and_differences(doc):
    phase = doc["phase"]
    assert [(r["point"], r["direction"], r["phase_deg"]) for r in phase["readings"]] == [
        ("M2A", "axial", 15.0), ("P1A", "axial", 197.0), ("M2H", "horizontal", 30.0),
        ("M2V", "vertical", 42.0), ("P1H", "horizontal", 205.0)]
    diffs = {(d["relation"], d["direction"]): d for d in phase["differences"]}
    # folded differences: |197 - 15| = 182 -> 178; |205 - 30| = 175; |42 - 30| = 12 (plain arithmetic)
    assert diffs[("across coupling", "axial")]["difference_deg"] == pytest.approx(178.0)
    assert diffs[("across coupling", "horizontal")]["difference_deg"] == pytest.approx(175.0)
    assert diffs[("horizontal-vertical", "radial")]["difference_deg"] == pytest.approx(12.0)
    assert len(phase["differences"]) == 3          # the coupling's pairs once each, not from both sides
    reads = {x["rule"] for x in diffs[("across coupling", "axial")]["reads"]}
    assert "phase.misalignment-angular.opposed-axial" in reads


def test_every_format_shows_the_phase_table(doc):
    text, md, html = (render(doc, f) for f in ("text", "md", "html"))
    assert "1X PHASE" in text and "motor_de axial against pump_de axial (across coupling): 178 deg" in text
    assert "## 1X phase" in md and "| across coupling | motor\\_de axial against pump\\_de axial | 178 |" in md
    assert '<section id="phase">' in html and "<td>motor_de axial against pump_de axial</td><td>178</td>" in html
    jsonschema.validate(json.loads(render(doc, "json")), load_schema("report.schema.json"))


def test_a_reading_without_phase_has_no_phase_section(doc):
    empty = doc | {"phase": {"readings": [], "differences": []}}
    assert "1X PHASE" not in render(empty, "text") and 'id="phase"' not in render(empty, "html")


def test_the_phase_table_speaks_the_chosen_velocity_unit():
    from dataclasses import replace

    from engine.common.units import ShownUnits

    case = load_case(CASES / "demo/rw2-misalignment-phase.case.yaml")
    machine = load_machine(case.machine)
    d = diagnose(reading_of(case, machine), machine, reasoner())
    # the case gives phase only: give each reading a 1X of 3 mm/s RMS as a sidecar would
    facts = tuple(f | {"amplitude_mm_s": 3.0} if f["kind"] == "phase_1x" else f for f in d.evidence.facts)
    d = replace(d, evidence=replace(d.evidence, facts=facts))
    shown = document_of(d, made_at="2026-01-01T00:00Z", units=ShownUnits(velocity="in/s-peak"))
    row = next(r for r in shown["phase"]["readings"] if r["amplitude_mm_s"] is not None)
    # 1 in = 25.4 mm exactly; a single line's peak is sqrt(2) x its RMS (a sine)
    inches = float(row["amplitude"].split()[0])
    assert inches == pytest.approx(row["amplitude_mm_s"] / 25.4 * 2 ** 0.5, rel=0.01)
    assert row["amplitude"].endswith("in/s peak") and row["amplitude"] in render(shown, "text")
