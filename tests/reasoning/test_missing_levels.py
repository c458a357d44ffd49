"""Rules meet a fact whose level fields are missing (None: the channel's scale is not trusted).

A condition on a missing field cannot match; a rule that only grades by one lends nothing (and
does not fail); a sentence naming one says the level is unknown. A ``none_of`` pattern on a
missing level would hold (no fact matches it), so the shipped rulebooks keep levels out of
negations and out of opposing rules: a missing level must never count for or against a fault
by its absence. An opposing rule may compare two levels with each other (a series twice as
strong at another shaft's points): that needs both, and a hypothesis it opposes is graded by the
same levels, so without them neither counts.
"""

from __future__ import annotations

import textwrap

import pytest

from engine.evidence.vocabulary import level_fields
from engine.reasoning import Reasoner, load_rulebook
from engine.reasoning.rulebook import Ref

from support import tone_fact

RULES = """
rulebook: test rules
faults:
  wobble: {name: wobble, family: shaft}
rules:
  - id: t.level.condition
    title: a strong 1X
    source: test
    needs:
      - fact: tone
        as: x
        where: {name: 1X, amplitude_mm_s: {at_least: 2}}
    concludes: {fault: wobble, component: x.component}
    certainty: 0.5
    because: "1X of {x.component} is {x.amplitude_mm_s}"
  - id: t.level.graded
    title: a clear 1X graded by its level
    source: test
    needs:
      - fact: tone
        as: x
        where: {name: 1X, snr_db: {at_least: 20}}
    concludes: {fault: wobble, component: x.component}
    certainty:
      weight: 0.6
      grade_by: [{value: x.amplitude_mm_s, from: 1, to: 5}]
    because: "1X of {x.component} stands {x.snr_db} clear at {x.amplitude_g}"
  - id: t.pattern
    title: a clear 1X
    source: test
    needs:
      - fact: tone
        as: x
        where: {name: 1X, snr_db: {at_least: 20}}
    concludes: {fault: wobble, component: x.component}
    certainty: 0.3
    because: "1X of {x.component} stands {x.snr_db} clear at {x.freq_hz}"
"""


def tone(amplitude_mm_s, amplitude_g):
    return tone_fact(amplitude_mm_s=amplitude_mm_s, amplitude_g=amplitude_g)


@pytest.fixture()
def reasoner(tmp_path):
    (tmp_path / "rb").mkdir()
    (tmp_path / "rb" / "rules.yaml").write_text(textwrap.dedent(RULES))
    return Reasoner(load_rulebook(tmp_path / "rb", shipped=False))


def test_missing_levels_lend_nothing_and_the_pattern_still_counts(reasoner):
    measured = reasoner.reason([tone(3.0, 0.02)])
    firings = {f.rule_id: f for f in measured.hypotheses[0].support}
    assert set(firings) == {"t.level.condition", "t.level.graded", "t.pattern"}
    assert firings["t.level.graded"].certainty == pytest.approx(0.6 * 0.5)    # halfway up the 1-5 ramp

    (wobble,) = reasoner.reason([tone(None, None)]).hypotheses
    support = {f.rule_id: f for f in wobble.support}
    assert set(support) == {"t.pattern"}                  # the level condition cannot match
    assert wobble.certainty == pytest.approx(0.3)         # the graded rule lent nothing, and did not fail
    assert support["t.pattern"].because == "1X of pump stands 40 dB clear at 24.8 Hz"


def test_a_sentence_names_a_missing_level_as_unknown(tmp_path):
    rules = RULES.replace("at {x.freq_hz}", "at {x.freq_hz}, {x.amplitude_mm_s}")
    (tmp_path / "rb").mkdir()
    (tmp_path / "rb" / "rules.yaml").write_text(textwrap.dedent(rules))
    (wobble,) = Reasoner(load_rulebook(tmp_path / "rb", shipped=False)).reason([tone(None, None)]).hypotheses
    assert wobble.support[0].because == "1X of pump stands 40 dB clear at 24.8 Hz, level unknown"


def test_shipped_rules_never_count_a_missing_level_for_or_against_a_fault():
    rulebook = load_rulebook()
    for rule in rulebook.rules:
        for p in rule.none_of:
            on_levels = {c.field for c in p.conditions} & set(level_fields(p.kind))
            assert not on_levels, f"{rule.id}: none_of on {on_levels} holds when the level is missing"
        if rule.weight < 0:
            on_levels = {c.field for p in rule.needs for c in p.conditions
                         if c.field in level_fields(p.kind) and not _relative(c)}
            assert not on_levels, f"{rule.id}: opposes a fault by a level that may be missing"


def _relative(condition) -> bool:
    """A comparison with another matched fact's value (``above: 2 * h.first_mm_s``), not a threshold."""
    return isinstance(condition.value, Ref) and condition.value.alias is not None


def test_a_comparison_with_a_missing_level_of_another_fact_fails_to_match_instead_of_failing(tmp_path):
    # durable-rules stops with error 311 on arithmetic with a field a fact does not carry; the compiler
    # makes the referenced pattern require it, so the rule just does not match
    rules = textwrap.dedent("""
        rulebook: relative levels
        faults:
          wobble: {name: wobble, family: shaft}
        rules:
          - id: t.twice
            title: one 1X twice another
            source: test
            needs:
              - fact: tone
                as: a
                where: {name: 1X}
              - fact: tone
                as: b
                where: {name: 1X, channel: {differs_from: a.channel}, amplitude_mm_s: {above: 2 * a.amplitude_mm_s}}
            concludes: {fault: wobble, component: a.component}
            certainty: 0.5
            because: "{b.channel} over {a.channel}"
        """)
    (tmp_path / "rb").mkdir()
    (tmp_path / "rb" / "rules.yaml").write_text(rules)
    reasoner = Reasoner(load_rulebook(tmp_path / "rb", shipped=False))
    weak, strong = tone(1.0, 40.0), dict(tone(3.0, 40.0), id="tone-2", channel="P2H")
    assert [h.fault for h in reasoner.reason([weak, strong]).hypotheses] == ["wobble"]
    missing = dict(weak, amplitude_mm_s=None)
    assert reasoner.reason([missing, strong]).hypotheses == ()
