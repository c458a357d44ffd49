"""A finding that names a rival beside its fault (a race and a ball defect whose rates coincide, no sidebands at
FTF to tell them apart: rulebooks/bearings.yaml, bearing.defect.rates-coincide) reads as both in every format:
the answer, the hypotheses, what to do and the trail, with what would tell them apart; the urgency is the
bearing's."""

from __future__ import annotations

import functools
import json

import jsonschema
import pytest

from engine.common.yamlfile import load_schema
from engine.machine import load_machine
from engine.pipeline import diagnose, document_of
from engine.report import render
from engine.simulation import as_reading, simulate

from support import CASES, MADE_AT, reasoner

pytestmark = pytest.mark.slow

BOTH = "outer-race defect or rolling-element defect"


@functools.cache
def _doc():
    m = load_machine(CASES / "machines" / "bw1-backwash-blower.yaml")
    r = as_reading(simulate(m, "outer-race", "blower_de", 3, None, 25600.0, 4.0, 1))
    return document_of(diagnose(r, m, reasoner()), made_at=MADE_AT)


def test_the_json_hypothesis_names_both_faults_and_the_rule():
    doc = _doc()
    h = doc["hypotheses"][0]
    assert (h["fault"], h["fault_name"], h["faults"]) == ("outer-race", BOTH, ["outer-race", "rolling-element"])
    assert h["component"] == "blower_de" and h["certainty"] >= 0.5 and h["stage"] == 3
    (f,) = h["indistinct"]
    assert (f["rule"], f["rival"], f["certainty"]) == ("bearing.defect.rates-coincide", "rolling-element", 0)
    assert h["urgency"]["id"] == doc["verdict"]["urgency"]["id"] != "none"     # the bearing's, not lowered
    assert doc["verdict"]["summary"].startswith("Outer-race defect or rolling-element defect on blower_de")
    jsonschema.Draft202012Validator(load_schema("report.schema.json")).validate(json.loads(render(doc, "json")))


@pytest.mark.parametrize("fmt", ["text", "md", "html"])
def test_every_format_names_both_and_says_what_would_tell_them_apart(fmt):
    doc = _doc()
    because = doc["hypotheses"][0]["indistinct"][0]["because"]
    out = render(doc, fmt).replace("\\_", "_")
    assert out.count(BOTH) >= 3, fmt                         # hypotheses, what to do, trail
    assert "Which part" in out or "which part" in out, fmt
    assert out.count(because[:40]) >= 2, fmt               # under the hypothesis and in the trail
    assert "rates-coincide" in out, fmt
