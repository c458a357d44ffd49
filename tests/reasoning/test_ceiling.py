"""A rule may hold its hypothesis at a ceiling (``certainty: {at_most: X}``) where the evidence cannot tell
the fault from a rival (nu27 items 3-5): it lends nothing, and when the hypothesis's total is above the
ceiling it takes what brings the total there, shown in the trail as an opposing firing."""

from __future__ import annotations

import textwrap

import pytest

from engine.common.errors import RulebookError
from engine.reasoning import Reasoner, load_rulebook
from engine.reasoning.certainty import combine, combine_all, held_at
from engine.reasoning.explain import explain

RULES = """
rulebook: test rules
faults:
  wobble: {name: wobble, family: shaft}
rules:
  - id: t.wobble.tone
    title: 1X
    source: test
    needs:
      - fact: tone
        as: x
        where: {name: 1X, amplitude_mm_s: {at_least: 1}}
    concludes: {fault: wobble, component: x.component}
    certainty: SUPPORT
    because: "1X of {x.component} is {x.amplitude_mm_s}"
  - id: t.wobble.against
    title: against
    source: test
    needs:
      - fact: tone
        as: x
        where: {name: 1X, amplitude_mm_s: {at_least: 4}}
    concludes: {fault: wobble, component: x.component}
    certainty: -0.2
    because: "1X of {x.component} is {x.amplitude_mm_s}"
  - id: t.wobble.one-direction
    title: one direction only
    source: test
    EXTRA
    needs:
      - fact: tone
        as: x
        where: {name: 1X, direction: horizontal}
    concludes: {fault: wobble, component: x.component}
    certainty: {at_most: CEILING}
    because: "1X of {x.component} is measured on {x.channel} alone"
"""


def _reasoner(tmp_path, support=0.9, ceiling=0.45, extra="") -> Reasoner:
    folder = tmp_path / "rb"
    folder.mkdir(parents=True)
    text = textwrap.dedent(RULES).replace("SUPPORT", str(support)).replace("CEILING", str(ceiling))
    (folder / "rules.yaml").write_text(text.replace("EXTRA", extra))
    return Reasoner(load_rulebook(folder, shipped=False))


def _tone(amplitude: float, direction: str = "horizontal") -> dict:
    return {"kind": "tone", "id": "tone-1", "channel": "P1H", "point": "P1H", "direction": direction,
            "location": "pump_de", "location_shaft": "pump", "name": "1X", "component": "pump",
            "family": "shaft", "shaft": "pump", "expected_hz": 24.8, "freq_hz": 24.8,
            "amplitude_mm_s": amplitude, "amplitude_g": 0.01, "snr_db": 40.0, "ratio_to_1x": 1.0}


def test_held_at_brings_the_mycin_total_to_the_ceiling():
    # the MYCIN algebra (Shortliffe & Buchanan 1975) as certainty.combine writes it: support 0.9 and
    # against -0.2 give (0.9 - 0.2) / (1 - 0.2) = 0.875; the held firing brings that to 0.45 exactly
    assert combine(0.9, -0.2) == pytest.approx(0.875)
    took = held_at(0.45, [0.9], [-0.2])
    assert took < 0
    assert combine_all([0.9, -0.2, took]) == pytest.approx(0.45)
    assert combine_all([0.6, held_at(0.3, [0.6], [])]) == pytest.approx(0.3)
    with pytest.raises(ValueError):
        held_at(0.9, [0.6], [])          # nothing to hold down


def test_a_ceiling_holds_a_strong_hypothesis_and_shows_what_it_took(tmp_path):
    h = _reasoner(tmp_path).reason([_tone(5.0)]).hypotheses[0]
    assert h.certainty == pytest.approx(0.45)
    assert not h.confident
    held = [f for f in h.against if f.rule_id == "t.wobble.one-direction"]
    assert len(held) == 1 and held[0].certainty < 0
    assert "measured on P1H alone" in held[0].because
    # the trail's firings combine to the certainty shown (each firing rounded to 6 places)
    assert combine_all([f.certainty for f in h.support + h.against]) == pytest.approx(0.45, abs=1e-5)


def test_a_ceiling_above_the_total_changes_nothing_and_is_not_shown(tmp_path):
    h = _reasoner(tmp_path, support=0.3).reason([_tone(2.0)]).hypotheses[0]
    assert h.certainty == pytest.approx(0.3)
    assert [f.rule_id for f in h.support + h.against] == ["t.wobble.tone"]


def test_a_ceiling_does_not_fire_where_its_conditions_fail(tmp_path):
    # a second radial direction: the ceiling's pattern (horizontal only) does not match
    h = _reasoner(tmp_path).reason([_tone(2.0, "vertical")]).hypotheses[0]
    assert h.certainty == pytest.approx(0.9)


def test_a_ceiling_alone_makes_no_hypothesis(tmp_path):
    r = _reasoner(tmp_path).reason([_tone(0.5)])      # below the supporting rule's 1 mm/s
    assert r.hypotheses == ()


def test_a_ceiling_cannot_count_with_another_rule(tmp_path):
    with pytest.raises(RulebookError, match="at_most lends nothing"):
        _reasoner(tmp_path, extra="counts_with: t.wobble.tone")


def test_rulebook_explain_words_a_ceiling():
    rulebook = load_rulebook()
    rule = next(r for r in rulebook.rules if r.id == "shaft.unbalance.one-radial-direction")
    text = "\n".join(explain(rule, rulebook))
    assert "held at 45 % at most" in text
    assert "holds at most unbalance" in text
