"""A rule that fired but counted once with another rule's firing (``counts_with``: the same signs read
twice) is shown in the reasoning trail of every format, marked as not counted again and naming the rule
whose firing counted (it used to be left out of the trail while it still decided what was measured)."""

from __future__ import annotations

import json

import jsonschema

from engine.common.yamlfile import load_schema
from engine.pipeline import document_of
from engine.report import render

from support import MADE_AT, case_diagnosis

# rulebooks/electrical.yaml: the pole-pass family counts with the pole-pass sidebands (one pattern, two sensors)
FAMILY, SIDEBANDS = "electrical.rotor-bar.family", "electrical.rotor-bar.pole-pass"


def _rotor_bars():
    doc = document_of(case_diagnosis("rw2-rotor-bars"), made_at=MADE_AT)
    h = next(h for h in doc["hypotheses"] if h["fault"] == "rotor-bar")
    return doc, h


def test_the_firing_counted_with_another_is_in_the_json_trail_naming_it():
    doc, h = _rotor_bars()
    same = h["same_evidence"]
    counted = {f["rule"] for f in h["support"]}
    assert len(same) == 1 and {same[0]["rule"], same[0]["counted_with"]} == {FAMILY, SIDEBANDS}
    assert same[0]["counted_with"] in counted and same[0]["rule"] not in counted
    assert 0 < same[0]["certainty"] and same[0]["because"]
    jsonschema.Draft202012Validator(load_schema("report.schema.json")).validate(json.loads(render(doc, "json")))


def test_every_format_shows_it_marked_not_counted_again():
    doc, h = _rotor_bars()
    f = h["same_evidence"][0]
    for fmt in ("text", "md", "html"):
        out = render(doc, fmt).replace("\\_", "_")
        at = out.index(f["because"].split(":")[0])
        assert "counted once with" in out[at:at + 1500].lower(), fmt
        assert f["counted_with"] in out[out.lower().index("counted once with", at):][:200], fmt
