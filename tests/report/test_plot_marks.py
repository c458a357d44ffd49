"""The envelope plot marks solid only the families whose fundamental was found, each bearing's by its own name.

The tests named ``test_N_*`` reproduce issue 13's report defects and keep their names.
"""

from __future__ import annotations

from support import case_diagnosis


def test_9_the_envelope_plot_marks_solid_only_families_whose_fundamental_was_found():
    from engine.report.plots import _matched_harmonics, shown

    d = case_diagnosis("rw2-pump-nde-outer-race")
    labels = [m.label for m in _matched_harmonics(d.evidence, shown(d.plots, d.reasoning, d.evidence, d.machine))]
    assert labels == ["BPFO", "2xBPFO", "3xBPFO", "4xBPFO", "5xBPFO"], labels   # no BPFI or 2xBSF without a line
    gear = case_diagnosis("ct1-bevel-tooth")         # a gear's plot shows several bearings: each names its own
    labels = [m.label for m in _matched_harmonics(gear.evidence, shown(gear.plots, gear.reasoning, gear.evidence,
                                                                        gear.machine))]
    fundamentals = [x for x in labels if not x[0].isdigit() or x.startswith("2xBSF")]
    assert fundamentals and all(" " in x for x in fundamentals), labels
    assert not any("x2xBSF" in x for x in labels), labels
