"""One piece of evidence counts once (nu26 item 15): two rules that read the same signs, say a pattern
and its stricter form on two sensors of one bearing, count once for a hypothesis when one names the
other with ``counts_with``, with the stronger firing; the other is kept beside it, not counted again."""

from __future__ import annotations

import textwrap

import pytest

from engine.common.errors import RulebookError
from engine.reasoning import Reasoner, load_rulebook

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
    certainty: 0.45
    because: "1X of {x.component} is {x.amplitude_mm_s}"
  - id: t.wobble.strong-tone
    title: strong 1X
    source: test
    COUNTS
    needs:
      - fact: tone
        as: x
        where: {name: 1X, amplitude_mm_s: {at_least: 4}}
    concludes: {fault: wobble, component: x.component}
    certainty: 0.35
    because: "1X of {x.component} is {x.amplitude_mm_s}"
"""


def _reasoner(tmp_path, counts: str) -> Reasoner:
    folder = tmp_path / "rb"
    folder.mkdir(parents=True)
    (folder / "rules.yaml").write_text(textwrap.dedent(RULES).replace("COUNTS", counts))
    return Reasoner(load_rulebook(folder, shipped=False))


def _tone(i: int, channel: str, amplitude: float) -> dict:
    return {"kind": "tone", "id": f"tone-{i}", "channel": channel, "point": channel, "direction": "horizontal",
            "location": "pump_de", "location_shaft": "pump", "name": "1X", "component": "pump",
            "family": "shaft", "shaft": "pump", "expected_hz": 24.8, "freq_hz": 24.8,
            "amplitude_mm_s": amplitude, "amplitude_g": 0.01, "snr_db": 40.0, "ratio_to_1x": 1.0}


FACTS = [_tone(1, "P1H", 2.0), _tone(2, "P1V", 5.0)]


def test_two_rules_on_one_pattern_count_once_with_the_stronger(tmp_path):
    # without counts_with the two combine as independent signs by the MYCIN algebra (Shortliffe &
    # Buchanan 1975): 0.45 + 0.35 x (1 - 0.45) = 0.6425
    apart = _reasoner(tmp_path / "a", "").reason(FACTS).hypotheses[0]
    assert apart.certainty == pytest.approx(0.6425)
    one = _reasoner(tmp_path / "b", "counts_with: t.wobble.tone").reason(FACTS).hypotheses[0]
    assert one.certainty == pytest.approx(0.45)
    assert [f.rule_id for f in one.support] == ["t.wobble.tone"]
    assert [f.rule_id for f in one.same_evidence] == ["t.wobble.strong-tone"]


def test_counts_with_an_unknown_rule_is_one_error_naming_the_rule(tmp_path):
    with pytest.raises(RulebookError, match="counts_with: no loaded rule has id 't.nothing'"):
        _reasoner(tmp_path, "counts_with: t.nothing")


def test_the_shipped_rotor_bar_rules_are_one_piece_of_evidence():
    rules = {r.id: r for r in load_rulebook().rules}
    assert rules["electrical.rotor-bar.family"].evidence_key == rules["electrical.rotor-bar.pole-pass"].evidence_key


def test_explain_says_which_rule_it_counts_with():
    from engine.reasoning.explain import explain
    book = load_rulebook()
    rules = {r.id: r for r in book.rules}
    assert any("counts with electrical.rotor-bar.pole-pass" in line
               for line in explain(rules["electrical.rotor-bar.family"], book))
    assert not any("counts with" in line for line in explain(rules["electrical.rotor-bar.pole-pass"], book))


def test_the_firing_counted_with_another_names_the_rule_whose_firing_counted(tmp_path):
    one = _reasoner(tmp_path, "counts_with: t.wobble.tone").reason(FACTS).hypotheses[0]
    # strong-tone fires on P1V only (5.0 >= 4), tone on both: tone's stronger firing (0.45) counts for the two
    assert [(f.rule_id, f.counted_with) for f in one.same_evidence] == [("t.wobble.strong-tone", "t.wobble.tone")]
    assert all(f.counted_with is None for f in one.support)
