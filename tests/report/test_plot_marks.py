"""The envelope plot marks solid only the families whose fundamental was found, each bearing's by its own name.

The tests named ``test_N_*`` reproduce issue 13's report defects and keep their names.
"""

from __future__ import annotations

import re
from dataclasses import replace

from engine.report.plots import _envelope_marks, _matched_harmonics, figures, shown

from support import case_diagnosis


def test_9_the_envelope_plot_marks_solid_only_families_whose_fundamental_was_found():
    d = case_diagnosis("rw2-pump-nde-outer-race")
    labels = [m.label for m in _matched_harmonics(d.evidence, shown(d.plots, d.reasoning, d.evidence, d.machine))]
    # no BPFI or 2xBSF without a line; the fundamental names its bearing though it is the one in view
    assert labels[:5] == ["BPFO pump_nde", "2xBPFO", "3xBPFO", "4xBPFO", "5xBPFO"], labels
    # any other family marked is one whose fundamental the envelope found at that bearing (a weak cage line
    # can be found in this reading's envelope; it is marked because it was found, not because it was expected)
    found = {f"{f['defect']} {f['component']}" for f in d.evidence.fact_list
             if f["kind"] == "envelope_tone" and f["harmonics_found"] and f.get("fundamental_owned")}
    assert all(x in found for x in labels[5:]), (labels, found)
    assert not any(x.startswith(("BPFI", "2xBSF")) for x in labels), labels
    gear = case_diagnosis("ct1-bevel-tooth")         # a gear's plot shows several bearings: each names its own
    labels = [m.label for m in _matched_harmonics(gear.evidence, shown(gear.plots, gear.reasoning, gear.evidence,
                                                                        gear.machine))]
    fundamentals = [x for x in labels if not x[0].isdigit() or x.startswith("2xBSF")]
    assert fundamentals and all(" " in x for x in fundamentals), labels
    assert not any("x2xBSF" in x for x in labels), labels


def _legend(svg_text: str) -> list[str]:
    return re.findall(r'<text x="[\d.]+" y="[\d.]+" font-size="10" fill="#1a1a1a">([^<]*)</text>', svg_text)


def test_one_bearing_in_view_its_marks_and_legend_name_it():
    d = case_diagnosis("rw2-pump-nde-outer-race")
    view = shown(d.plots, d.reasoning, d.evidence, d.machine)
    assert view.bearing == "pump_nde"
    marks = _envelope_marks(d.evidence, view)
    assert {m.group for m in marks} == {"harmonics found in the evidence, pump_nde", "rates of pump_nde"}
    fundamentals = [m.label for m in marks if not m.label[0].isdigit()]
    assert sorted(fundamentals) == ["BPFI pump_nde", "BPFO pump_nde", "FTF pump_nde"], fundamentals
    envelope = next(f for f in figures(d.plots, d.evidence, d.reasoning, d.machine) if f.title.startswith("Squared"))
    assert {"harmonics found in the evidence, pump_nde", "rates of pump_nde"} <= set(_legend(envelope.svg))


def test_several_bearings_in_view_each_group_names_its_bearing_in_its_own_colour():
    d = case_diagnosis("rw2-pump-nde-outer-race")
    view = shown(d.plots, d.reasoning, d.evidence, d.machine)
    both = d.plots.view(view.channel, "pump")               # no bearing chosen: every bearing of the pump shaft
    assert both.bearing is None
    marks = _envelope_marks(d.evidence, both)
    groups = {m.group: m.color for m in marks}
    assert {"harmonics found in the evidence, pump_nde", "rates of pump_nde", "rates of pump_de"} <= set(groups), groups
    bearing_of = {g: g.rsplit(" ", 1)[-1] for g in groups}
    colour_of_bearing = {}
    for g, colour in groups.items():
        assert colour_of_bearing.setdefault(bearing_of[g], colour) == colour     # one colour per bearing
    assert len(set(colour_of_bearing.values())) == len(colour_of_bearing) >= 2   # and each bearing its own
    for m in marks:                                   # every fundamental names the bearing of its group
        if not m.label[0].isdigit():
            assert m.label.endswith(" " + bearing_of[m.group]), (m.label, m.group)
    # the view's own replace keeps the marks of the bearing chosen only
    one = replace(both, bearing="pump_de", envelope_marks=tuple(m for m in both.envelope_marks
                                                                 if m.component == "pump_de"))
    assert {m.group for m in _envelope_marks(d.evidence, one)} == {"rates of pump_de"}
