"""Severity by the fault's own measure (``fault_severity`` in rulebooks/advice/severity.yaml): rotor bars
by the depth of the pole-pass sidebands below 1X, a cracked tooth by FM4; the ISO 20816-3 zone stays
beside it as the machine's overall condition (nu26 item 5)."""

from __future__ import annotations

import pytest

from engine.advice import fault_measure, load_advice
from engine.machine import load_machine
from engine.pipeline import diagnose
from engine.reasoning.findings import Firing, Hypothesis
from engine.simulation import as_reading, simulate

from support import RW2
from support import reasoner as shared_reasoner


def _hypothesis(fault: str, *facts: dict) -> Hypothesis:
    firings = tuple(Firing(f"rule-{i}", "t", "s", "x.yaml:1", (), 0.4, "b", (("f", fact),))
                    for i, fact in enumerate(facts))
    return Hypothesis(fault, fault, "electrical", "M-RW2", 0.6, None, firings, ())


def _sidebands(db: float) -> dict:
    return {"kind": "sideband_family", "carrier": "1X", "spacing": "pole pass", "sideband_to_carrier_db": db}


def test_every_band_asks_an_urgency_on_the_scale_and_the_bands_rise():
    data = load_advice()
    known = {u["id"] for u in data["urgency"]}
    for fault, scale in data["fault_severity"].items():
        assert fault in data["faults"], fault
        edges = [b["at_least"] for b in scale["bands"]]
        assert edges == sorted(edges) and len(set(edges)) == len(edges), fault
        assert all(b["urgency"] in known for b in scale["bands"]), fault


@pytest.mark.parametrize("db, grade", [
    # the nearer the sidebands to 1X, the more bars broken (common practice; bands in severity.yaml)
    (-28.0, "slight"), (-21.0, "moderate"), (-15.0, "serious"), (-11.0, "severe")])
def test_rotor_bars_are_graded_by_the_sidebands_depth_below_1x(db, grade):
    own = fault_measure(_hypothesis("rotor-bar", _sidebands(db)), load_advice())
    assert own is not None and own.grade.startswith(grade)
    # the depth reads as a positive number below 1X, never "-11 dB below" (a double negative)
    assert f"{-db:.0f} dB below 1X" in own.measure and f"{db:.0f} dB" not in own.measure


def test_the_worst_of_two_channels_sidebands_counts():
    own = fault_measure(_hypothesis("rotor-bar", _sidebands(-27.0), _sidebands(-13.0)), load_advice())
    assert own is not None and own.value == -13.0


def test_a_tooth_is_graded_by_fm4_and_a_fault_without_a_scale_gets_none():
    data = load_advice()
    # FM4 about 3 for a sound gear (Stewart 1977, from memory: ../shared/notes/check-values.md)
    own = fault_measure(_hypothesis("gear-tooth", {"kind": "once_per_rev_event", "fm4": 75.7}), data)
    assert own is not None and own.grade.startswith("severe") and own.urgency == "act-now"
    early = fault_measure(_hypothesis("gear-tooth", {"kind": "once_per_rev_event", "fm4": 7.0}), data)
    assert early is not None and not early.grade.startswith("severe")
    assert fault_measure(_hypothesis("unbalance", _sidebands(-11.0)), data) is None
    assert fault_measure(_hypothesis("rotor-bar", {"kind": "tone", "amplitude_mm_s": 1.0}), data) is None


def test_simulated_broken_bars_get_their_own_severity_with_the_zone_beside_it():
    m = load_machine(RW2)
    # the demo's rotor-bar case (cases/demo/rw2-rotor-bars.case.yaml): stage 3, sidebands about 13 dB below 1X
    d = diagnose(as_reading(simulate(m, "rotor-bar", "M-RW2", 3, None, 25600.0, 4.0, 25)), m, shared_reasoner())
    top = d.reasoning.hypotheses[0]
    assert top.fault == "rotor-bar"
    rec = next(r for r in d.advice.recommendations if r.hypothesis is top)
    assert " dB below 1X" in rec.severity and "ISO 20816-3 zone" in rec.severity
    assert not rec.severity.startswith("machine in ISO")
    # the pole-pass rule's sentence (kept beside the family rule it counts with) has no "-13 dB below 1X"
    assert any("relative to 1X" in f.because for f in (*top.support, *top.same_evidence))
