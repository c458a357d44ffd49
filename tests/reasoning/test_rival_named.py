"""A rule may name a rival beside its fault (``concludes: {indistinct_from: F}``, certainty 0) where the evidence
cannot tell the two apart and the repair is the same: the hypothesis keeps its certainty and stage, names both,
and shares no sign with a hypothesis of the rival (there is none to share with)."""

from __future__ import annotations

import textwrap

import pytest

from engine.common.errors import RulebookError
from engine.reasoning import Reasoner, load_rulebook
from engine.reasoning.explain import explain

RULES = """
rulebook: test rules
faults:
  race: {name: race defect, family: bearing}
  ball: {name: ball defect, family: bearing}
rules:
  - id: t.race.tone
    title: a race tone
    source: test
    needs:
      - fact: envelope_tone
        as: e
        where: {defect: BPFO, first_snr_db: {at_least: 10}}
    concludes: {fault: race, component: e.component, stage: 2}
    certainty: 0.8
    because: "BPFO of {e.component} on {e.channel}"
  - id: t.race.or-ball
    title: the ball's rate lies on it
    source: test
    needs:
      - fact: envelope_tone
        as: e
        where: {defect: BPFO, alike_defect: {one_of: [BSF]}}
    none_of:
      - fact: load_zone_modulation
        where: {component: {same_as: e.component}, modulation: FTF, sideband_count: {at_least: 2}}
    explains: []
    concludes:
      fault: race
      component: e.component
      indistinct_from: RIVAL
    certainty: CERTAINTY
    because: "the ball defect rate of {e.component} lies on BPFO"
"""


def _reasoner(tmp_path, rival="{from: e.alike_defect, map: {BSF: ball}}", certainty="0") -> Reasoner:
    folder = tmp_path / "rb"
    folder.mkdir(parents=True)
    text = textwrap.dedent(RULES).replace("RIVAL", rival).replace("CERTAINTY", certainty)
    (folder / "rules.yaml").write_text(text)
    return Reasoner(load_rulebook(folder, shipped=False))


def _tone(alike: str = "BSF") -> dict:
    return {"kind": "envelope_tone", "id": "env-1", "channel": "B1H", "point": "B1H", "direction": "horizontal",
            "location": "fan_de", "location_shaft": "fan", "defect": "BPFO", "component": "fan_de",
            "shaft": "fan", "expected_hz": 120.0, "freq_hz": 120.1, "first_snr_db": 20.0, "alike_defect": alike,
            "signs": {"B1H|envelope:wide|100": 1.0}}


def _zone(count: int) -> dict:
    return {"kind": "load_zone_modulation", "id": "zone-1", "channel": "B1H", "point": "B1H",
            "direction": "horizontal", "location": "fan_de", "location_shaft": "fan", "defect": "BPFO",
            "component": "fan_de", "band_method": "wide", "modulation": "FTF", "modulation_hz": 8.0,
            "sideband_count": count, "depth": 1.0, "line_snr_db": 10.0}


def test_the_hypothesis_names_both_and_keeps_its_certainty_and_stage(tmp_path):
    r = _reasoner(tmp_path).reason([_tone()])
    (h,) = r.hypotheses
    assert h.fault == "race" and h.faults == ("race", "ball")
    assert h.named == "race defect or ball defect"
    assert h.certainty == pytest.approx(0.8) and h.stage == 2
    assert [f.rule_id for f in h.support] == ["t.race.tone"]       # it lends nothing and takes nothing
    assert not h.against
    (f,) = h.indistinct
    assert (f.rival, f.rival_name, f.certainty, f.signs) == ("ball", "ball defect", 0.0, ())
    assert h.raw_certainty is None and not h.explained_by             # no hypothesis of the rival to share with


def test_a_separating_sign_leaves_the_fault_alone(tmp_path):
    r = _reasoner(tmp_path).reason([_tone(), _zone(3)])
    (h,) = r.hypotheses
    assert h.faults == ("race",) and h.named == "race defect" and not h.indistinct


def test_no_rival_where_the_rates_stand_apart(tmp_path):
    (h,) = _reasoner(tmp_path).reason([_tone(alike="")]).hypotheses
    assert h.faults == ("race",)


def test_a_rival_alone_makes_no_hypothesis(tmp_path):
    low = _tone() | {"first_snr_db": 5.0}          # the supporting rule does not fire
    assert _reasoner(tmp_path).reason([low]).hypotheses == ()


def test_a_plain_rival_id_is_accepted(tmp_path):
    (h,) = _reasoner(tmp_path, rival="ball").reason([_tone()]).hypotheses
    assert h.faults == ("race", "ball")


@pytest.mark.parametrize("rival, certainty, words", [
    ("{from: e.alike_defect, map: {BSF: ball}}", "0.3", "certainty is 0"),
    ("{from: e.alike_defect, map: {BSF: balls}}", "0", "undeclared fault 'balls'"),
    ("knot", "0", "undeclared fault 'knot'"),
])
def test_a_wrong_rival_rule_is_refused_at_load(tmp_path, rival, certainty, words):
    with pytest.raises(RulebookError, match=words):
        _reasoner(tmp_path, rival=rival, certainty=certainty)


def test_explain_says_it_names_a_rival_and_lends_nothing(tmp_path):
    rulebook = load_rulebook(_write(tmp_path), shipped=False)
    rule = next(r for r in rulebook.rules if r.id == "t.race.or-ball")
    text = "\n".join(explain(rule, rulebook))
    assert "names a rival beside race defect" in text
    assert "the rival the evidence cannot tell it from" in text and "ball defect" in text
    assert "certainty unchanged: it lends and takes nothing" in text


def _write(tmp_path):
    folder = tmp_path / "rb"
    folder.mkdir(parents=True)
    (folder / "rules.yaml").write_text(textwrap.dedent(RULES).replace("RIVAL", "ball").replace("CERTAINTY", "0"))
    return folder
