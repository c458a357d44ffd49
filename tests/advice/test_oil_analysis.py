"""The oil analysis is one table per machine: each test once, naming every fault it serves.

The tests named ``test_N_*`` reproduce issue 13's report defects and keep their names.
"""

from __future__ import annotations

import json
import re

import jsonschema

from engine.common.yamlfile import load_schema
from engine.machine import load_machine
from engine.pipeline import diagnose, document_of
from engine.pipeline.cases import load_case
from engine.report import render
from engine.simulation import as_reading, simulate

from support import CASES, MADE_AT, reasoner
from support import REPORT_FORMATS as FORMATS


def test_7_the_oil_analysis_is_one_table_per_machine_in_the_document():
    # an oil-lubricated gearbox with two faults at once: a chipped pinion tooth and a spalled output bearing
    case = load_case(CASES / "demo" / "ct1-bevel-tooth.case.yaml")
    machine = load_machine(case.machine)
    sim = simulate(machine, "gear-tooth", "bevel_stage", 3, seed=15, also=(("outer-race", "output_lower", 3),))
    doc = document_of(diagnose(as_reading(sim, "ct1-two-faults.wav"), machine, reasoner()), made_at=MADE_AT)
    assert {h["family"] for h in doc["hypotheses"] if h["certainty"] >= 0.5} == {"gear", "bearing"}
    assert all("oil_tests" not in h for h in doc["hypotheses"])
    tests = [t["test"] for t in doc["oil_analysis"]]
    assert tests and len(tests) == len(set(tests)), "each test once"
    debris = next(t for t in doc["oil_analysis"] if t["test"].startswith("ferrous wear debris"))
    served = [name for r in debris["reads"] for name in r["for"]]
    assert len(debris["reads"]) == 2 and len(served) == len(set(served)) >= 2   # gear and bearing, each once
    for fmt in FORMATS:
        out = render(doc, fmt)
        assert len(re.findall("oil analysis to request", out, re.IGNORECASE)) == 1, fmt
        assert out.count(debris["test"]) == 1, fmt
    jsonschema.Draft202012Validator(load_schema("report.schema.json")).validate(json.loads(render(doc, "json")))


def test_no_oil_test_follows_a_fault_on_a_coupling_outside_the_housings():
    # nu26 item 8: angular misalignment on CT-1's disc-pack drive shaft asked for an oil particle count
    # "for drive_shaft"; the same fault on an oil-lubricated shaft keeps its follow-up
    from engine.advice import _oil_tests, load_advice
    machine = load_machine(CASES / "machines" / "ct1-cooling-tower-fan.yaml")
    data = load_advice()
    assert machine.coupling("drive_shaft") is not None and machine.lubrication == "oil"
    assert _oil_tests(machine, "shaft", data, "drive_shaft") == ()
    assert _oil_tests(machine, "shaft", data, "gear_input") != ()
