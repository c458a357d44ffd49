"""The reasoning engine: certainty algebra, the durable-rules adapter, chaining, overlays.

Small rulebooks written in each test exercise one behaviour at a time; the
shipped rulebooks are tested on simulated faults in test_rulebooks.py.
"""

from __future__ import annotations

import random
import textwrap
import threading

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from engine.common.errors import RulebookError
from engine.reasoning import Reasoner, ReasoningError, combine, combine_all, load_rulebook, ramp
from engine.reasoning.engine import engine_copy, engine_value

# ---------------------------------------------------------------- certainty factors


def test_mycin_worked_values():
    # Shortliffe & Buchanan (1975), via ../shared/notes/check-values.md [published]
    assert combine(0.5, 0.6) == pytest.approx(0.8)
    assert combine(0.8, -0.5) == pytest.approx(0.6)
    assert combine(-0.5, -0.6) == pytest.approx(-0.8)
    # rule contribution = rule CF x min of premise CFs: 0.7 x min(0.3, 0.6) = 0.21 [published]
    from engine.reasoning.certainty import premise_certainty
    assert 0.7 * premise_certainty([0.3, 0.6]) == pytest.approx(0.21)


def test_combination_order_is_fixed_and_documented():
    # the mixed formula is not associative; combine_all takes supports, then oppositions, then both
    cfs = [0.6, -0.4, 0.5, -0.3]
    support = combine(0.6, 0.5)
    against = combine(-0.4, -0.3)
    assert combine_all(cfs) == pytest.approx(combine(support, against))
    assert combine_all(list(reversed(cfs))) == pytest.approx(combine_all(cfs))


@given(st.lists(st.floats(-0.99, 0.99), min_size=1, max_size=8))
def test_combined_certainty_stays_in_range_and_ignores_order(cfs):
    total = combine_all(cfs)
    assert -1 <= total <= 1
    shuffled = cfs[:]
    random.Random(1).shuffle(shuffled)
    # same-sign sums are exact to rounding; the one mixed-sign step divides by 1 - 0.99 at worst,
    # which scales rounding by 100 (support 0.5, 0.5, 0.99, 0.99 against -0.99, -0.99 differed by 1e-12)
    assert combine_all(shuffled) == pytest.approx(total, abs=1e-9)


def test_ramp_grades_between_its_ends():
    assert ramp(6, 6, 20) == 0.0
    assert ramp(13, 6, 20) == pytest.approx(0.5)
    assert ramp(99, 6, 20) == 1.0
    assert ramp(0.2, 0.5, 0.0) == pytest.approx(0.6)   # a falling ramp


# ---------------------------------------------------------------- test rulebooks

HEADER = """
rulebook: test rules
faults:
  wobble: {name: wobble, family: shaft}
  rattle: {name: rattle, family: shaft}
  glitch: {name: glitch, family: reading, withholds_diagnosis: true}
derived:
  shaking:
    about: a shaft shakes
    fields:
      shaft: {type: string, about: shaft id}
      level: {type: number, about: velocity, unit: mm/s RMS}
"""

RULES = {
    "t.wobble.tone": """
  - id: t.wobble.tone
    title: strong 1X
    source: test
    needs:
      - fact: tone
        as: x
        where: {name: 1X, amplitude_mm_s: {at_least: 2}}
    concludes: {fault: wobble, component: x.component}
    certainty:
      weight: 0.6
      grade_by: [{value: x.amplitude_mm_s, from: 2, to: 6}]
    because: "1X of {x.component} is {x.amplitude_mm_s}"
""",
    "t.shaking": """
  - id: t.shaking
    title: shaking derived from 1X
    source: test
    needs:
      - fact: tone
        as: x
        where: {name: 1X, amplitude_mm_s: {at_least: 1}}
    derives:
      fact: shaking
      fields: {shaft: x.component, level: x.amplitude_mm_s}
    certainty: 0.5
    because: "{x.component} shakes"
""",
    "t.wobble.chained": """
  - id: t.wobble.chained
    title: shaking supports wobble
    source: test
    needs:
      - fact: shaking
        as: sh
    concludes: {fault: wobble, component: sh.shaft}
    certainty: 0.8
    because: "{sh.shaft} shakes at {sh.level}"
""",
    "t.wobble.against": """
  - id: t.wobble.against
    title: half orders count against wobble
    source: test
    needs:
      - fact: subharmonics
        as: sub
        where: {count: {at_least: 2}}
    concludes: {fault: wobble, component: sub.shaft}
    certainty: -0.5
    because: "{sub.count} half orders"
""",
    "t.rattle.lonely": """
  - id: t.rattle.lonely
    title: 1X without half orders on that shaft
    source: test
    needs:
      - fact: tone
        as: x
        where: {name: 1X}
    none_of:
      - fact: subharmonics
        where: {shaft: {same_as: x.component}}
    concludes: {fault: rattle, component: x.component}
    certainty: 0.3
    because: "no half orders on {x.component}"
""",
    "t.rattle.count": """
  - id: t.rattle.count
    title: 1X on two channels or more
    source: test
    needs:
      - count: tone
        as: n
        where: {name: 1X, amplitude_mm_s: {at_least: 1}}
        per: component
        at_least: 2
    concludes: {fault: rattle, component: n.group}
    certainty: 0.4
    because: "{n.n} channels see 1X of {n.group}"
""",
    "t.glitch": """
  - id: t.glitch
    title: clipped channel
    source: test
    needs:
      - fact: data_quality
        as: q
        where: {issue: clipping}
    concludes: {fault: glitch, component: q.channel}
    certainty: 0.8
    because: "{q.channel} clipped"
""",
}


def write_rulebook(folder, rule_ids=None, name="rules.yaml", header=HEADER, order=None):
    ids = list(rule_ids if rule_ids is not None else RULES)
    if order is not None:
        ids = [ids[i] for i in order]
    text = header + "rules:\n" + "".join(RULES[i] for i in ids)
    folder.mkdir(parents=True, exist_ok=True)
    (folder / name).write_text(textwrap.dedent(text))
    return folder


def tone(i, component="pump", amplitude=4.0, channel="P1H"):
    return {"kind": "tone", "id": f"tone-{i}", "channel": channel, "point": channel, "direction": "horizontal",
            "location": "pump_de", "location_shaft": component, "name": "1X", "component": component,
            "family": "shaft", "shaft": component, "expected_hz": 24.8, "freq_hz": 24.8,
            "amplitude_mm_s": amplitude, "amplitude_g": 0.01, "snr_db": 40.0, "ratio_to_1x": 1.0}


def subharmonics(i, shaft="pump", count=3):
    return {"kind": "subharmonics", "id": f"subharmonics-{i}", "channel": "P1H", "point": "P1H",
            "direction": "horizontal", "location": "pump_de", "location_shaft": shaft, "shaft": shaft,
            "count": count, "max_ratio_to_1x": 0.2}


@pytest.fixture()
def reasoner(tmp_path):
    return Reasoner(load_rulebook(write_rulebook(tmp_path / "rb"), shipped=False))


def hypothesis_of(result, fault, component):
    return next(h for h in result.hypotheses if h.fault == fault and h.component == component)


# ---------------------------------------------------------------- reasoning behaviour


def test_graded_certainty_and_sentence(reasoner):
    result = reasoner.reason([tone(1, amplitude=4.0)])
    wob = hypothesis_of(result, "wobble", "pump")
    direct = next(f for f in wob.support if f.rule_id == "t.wobble.tone")
    assert direct.certainty == pytest.approx(0.6 * 0.5)   # halfway up the 2-6 mm/s ramp
    assert direct.because == "1X of pump is 4.00 mm/s RMS"   # formatted by the field's unit
    assert direct.facts[0][1]["amplitude_mm_s"] == 4.0    # the trail keeps the measured fact


def test_derived_fact_fires_a_second_rule(reasoner):
    result = reasoner.reason([tone(1, amplitude=4.0)])
    assert [f.rule_id for f in result.chain] == ["t.shaking"]
    chained = next(f for f in hypothesis_of(result, "wobble", "pump").support if f.rule_id == "t.wobble.chained")
    assert chained.certainty == pytest.approx(0.8 * 0.5)  # rule CF x premise CF (Shortliffe & Buchanan 1975)
    assert chained.facts[0][1]["kind"] == "shaking"


def test_negative_rule_lowers_a_hypothesis(reasoner):
    alone = hypothesis_of(reasoner.reason([tone(1)]), "wobble", "pump").certainty
    opposed = hypothesis_of(reasoner.reason([tone(1), subharmonics(1)]), "wobble", "pump")
    assert opposed.certainty < alone
    assert [f.rule_id for f in opposed.against] == ["t.wobble.against"]
    assert opposed.certainty == pytest.approx(combine(alone, -0.5))


def test_none_of_blocks_even_when_the_blocking_fact_comes_later(reasoner):
    # durable-rules checks a negation once; the phase fact makes it wait for all evidence
    facts = [tone(1), subharmonics(2)]
    result = reasoner.reason(facts)
    assert not [h for h in result.hypotheses if h.fault == "rattle" and
                any(f.rule_id == "t.rattle.lonely" for f in h.support)]
    result = reasoner.reason([tone(1), subharmonics(2, shaft="motor")])
    assert any(f.rule_id == "t.rattle.lonely" for f in hypothesis_of(result, "rattle", "pump").support)


def test_count_pattern_counts_per_group(reasoner):
    one = reasoner.reason([tone(1)])
    assert not any(f.rule_id == "t.rattle.count" for h in one.hypotheses for f in h.support)
    two = reasoner.reason([tone(1, channel="P1H"), tone(2, channel="P2H")])
    firing = next(f for f in hypothesis_of(two, "rattle", "pump").support if f.rule_id == "t.rattle.count")
    assert firing.because == "2 channels see 1X of pump"


def test_same_rule_counts_once_per_hypothesis(reasoner):
    # three channels satisfy the same rule: its strongest firing counts, the others are noted
    facts = [tone(1, amplitude=3.0, channel="A"), tone(2, amplitude=5.0, channel="B"),
             tone(3, amplitude=4.0, channel="C")]
    wob = hypothesis_of(reasoner.reason(facts), "wobble", "pump")
    direct = [f for f in wob.support if f.rule_id == "t.wobble.tone"]
    assert len(direct) == 1 and direct[0].certainty == pytest.approx(0.6 * 0.75)
    assert wob.other_matches >= 2


def test_reading_problem_withholds_the_diagnosis(reasoner):
    q = {"kind": "data_quality", "id": "data_quality-1", "channel": "P1H", "issue": "clipping", "value": 40.0,
         "blocking": False}
    result = reasoner.reason([tone(1), q])
    assert result.withheld
    assert result.reading_problems[0].fault == "glitch"
    assert all(h.fault != "glitch" for h in result.hypotheses)


def test_tiny_and_huge_numbers_reach_the_engine_without_exponents(reasoner):
    # durable-rules rejects 1e-05 style numbers (error 204): the engine's copy is rounded
    assert engine_value(9.4e-05) == 0.0
    assert engine_value(3e20) == 1e15
    assert engine_value(float("nan")) is None
    assert "nan" not in engine_copy({"a": float("nan"), "b": 1.5}, "s1")
    fact = tone(1) | {"amplitude_g": 9.4e-05, "snr_db": 3e20}
    result = reasoner.reason([fact])
    kept = next(f for f in hypothesis_of(result, "wobble", "pump").support if f.rule_id == "t.wobble.tone")
    assert kept.facts[0][1]["amplitude_g"] == 9.4e-05    # the trail keeps the measured value


def test_actions_run_on_the_callers_thread(tmp_path):
    # Host() would dispatch actions from timer threads; QuietHost does not start them
    threads = set()
    reasoner = Reasoner(load_rulebook(write_rulebook(tmp_path / "rb"), shipped=False))
    original = reasoner._fire

    def spy(rule, c, session):
        threads.add(threading.get_ident())
        original(rule, c, session)

    reasoner._fire = spy
    for i in range(50):
        reasoner.reason([tone(i)])
    assert threads == {threading.get_ident()}
    assert not [t for t in threading.enumerate() if isinstance(t, threading.Timer) and t.is_alive()]


def test_an_exception_inside_an_action_is_reported_not_swallowed(tmp_path):
    reasoner = Reasoner(load_rulebook(write_rulebook(tmp_path / "rb"), shipped=False))

    def broken(rule, c, session):
        raise ZeroDivisionError("boom")

    reasoner._fire = broken
    with pytest.raises(ReasoningError, match="boom"):
        reasoner.reason([tone(1)])
    reasoner._fire = Reasoner._fire.__get__(reasoner)
    assert reasoner.reason([tone(1)]).top is not None   # the engine is still usable


def test_isolation_over_1000_diagnoses(reasoner):
    # the durable-rules states (at most 1024 live per ruleset) are deleted after each diagnosis
    first = reasoner.reason([tone(1, amplitude=4.0)])
    for i in range(1000):
        facts = [tone(i, component="fan", amplitude=1.0 + (i % 5))] if i % 2 else [subharmonics(i, shaft="fan")]
        other = reasoner.reason(facts)
        assert all(h.component != "pump" for h in other.hypotheses)
    again = reasoner.reason([tone(1, amplitude=4.0)])
    assert again == first


@settings(max_examples=15, deadline=None)
@given(st.permutations(list(range(len(RULES)))))
def test_results_do_not_depend_on_rule_order(tmp_path_factory, order):
    folder = write_rulebook(tmp_path_factory.mktemp("rb"), order=order)
    facts = [tone(1, amplitude=3.5), tone(2, amplitude=2.5, channel="P2H"), subharmonics(1, shaft="motor")]
    result = Reasoner(load_rulebook(folder, shipped=False)).reason(facts)
    baseline = Reasoner(load_rulebook(write_rulebook(tmp_path_factory.mktemp("base")), shipped=False)).reason(facts)
    assert [(h.fault, h.component, h.certainty) for h in result.hypotheses] == \
        [(h.fault, h.component, h.certainty) for h in baseline.hypotheses]


# ---------------------------------------------------------------- site overlays


def test_override_and_disable_take_effect_and_show_their_file(tmp_path):
    shipped = write_rulebook(tmp_path / "shipped")
    site = tmp_path / "site"
    site.mkdir()
    (site / "site.yaml").write_text(textwrap.dedent("""
        rulebook: site rules
        disable:
          - {rule: t.wobble.against, reason: our pumps always show half orders}
        rules:
          - id: t.wobble.tone
            overrides: true
            title: strong 1X, site scale
            source: site experience, reliability engineer, 2026-10-14
            needs:
              - fact: tone
                as: x
                where: {name: 1X, amplitude_mm_s: {at_least: 1}}
            concludes: {fault: wobble, component: x.component}
            certainty: 0.9
            because: "site: 1X of {x.component} at {x.amplitude_mm_s}"
    """))
    rulebook = load_rulebook(shipped, site, shipped=False)
    assert "t.wobble.against" in rulebook.disabled
    rule = rulebook.rule("t.wobble.tone")
    assert str(rule.path).endswith("site.yaml") and str(rule.replaced[0]).endswith("rules.yaml")
    wob = hypothesis_of(Reasoner(rulebook).reason([tone(1, amplitude=1.5), subharmonics(1)]), "wobble", "pump")
    firing = next(f for f in wob.support if f.rule_id == "t.wobble.tone")
    assert firing.certainty == pytest.approx(0.9) and "site.yaml" in firing.origin and firing.overrides
    assert not wob.against


def test_reusing_an_id_without_overrides_is_an_error(tmp_path):
    write_rulebook(tmp_path / "rb", ["t.wobble.tone"], name="a.yaml")
    write_rulebook(tmp_path / "rb", ["t.wobble.tone"], name="b.yaml",
                   header="rulebook: again\n")
    with pytest.raises(RulebookError, match=r"b\.yaml.*t\.wobble\.tone.*already used"):
        load_rulebook(tmp_path / "rb", shipped=False)


# ---------------------------------------------------------------- rulebook errors

BAD = [
    ("fact: tonez", "unknown fact kind 'tonez'"),
    ("where: {name: 1X, amplitude_mms: {at_least: 2}}", "field 'amplitude_mms' is not in this fact kind"),
    ("where: {name: {above: 3}}", "name is a string, not a number"),
    ("where: {amplitude_mm_s: fast}", "amplitude_mm_s is a number; 'fast' can never match"),
    ("where: {amplitude_mm_s: {at_least: 0.00001}}", "smaller than 0.0001"),
    ("where: {component: {same_as: y.component}}", "no earlier fact is called 'y'"),
    ("where: {amplitude_mm_s: {at_leest: 2}}", "did you mean 'at_least'"),
]


@pytest.mark.parametrize("replacement, message", BAD)
def test_bad_rule_names_file_line_rule_and_field(tmp_path, replacement, message):
    text = RULES["t.wobble.tone"]
    if replacement.startswith("fact:"):
        text = text.replace("fact: tone", replacement)
    else:
        text = text.replace("where: {name: 1X, amplitude_mm_s: {at_least: 2}}", replacement)
    folder = tmp_path / "rb"
    folder.mkdir()
    (folder / "bad.yaml").write_text(textwrap.dedent(HEADER + "rules:\n" + text))
    with pytest.raises(RulebookError) as err:
        load_rulebook(folder, shipped=False)
    line = str(err.value)
    assert "bad.yaml:" in line and message in line
    assert "t.wobble.tone" in line
    assert "\n" not in line


def test_placeholder_to_a_missing_field_is_an_error(tmp_path):
    text = RULES["t.wobble.tone"].replace("{x.amplitude_mm_s}", "{x.speed}")
    (tmp_path / "bad.yaml").write_text(textwrap.dedent(HEADER + "rules:\n" + text))
    with pytest.raises(RulebookError, match=r"'x' has no field 'speed'"):
        load_rulebook(tmp_path / "bad.yaml", shipped=False)


def test_negation_of_a_derived_fact_is_refused(tmp_path):
    text = RULES["t.rattle.lonely"].replace("fact: subharmonics", "fact: shaking").replace(
        "{shaft: {same_as: x.component}}", "{shaft: {same_as: x.component}}")
    (tmp_path / "bad.yaml").write_text(textwrap.dedent(HEADER + "rules:\n" + text))
    with pytest.raises(RulebookError, match="none_of can only look at evidence kinds"):
        load_rulebook(tmp_path / "bad.yaml", shipped=False)


def test_nonsense_yaml_is_one_line(tmp_path):
    (tmp_path / "bad.yaml").write_text("rules: [\n  - id: x\n")
    with pytest.raises(RulebookError, match=r"bad\.yaml:\d+: not valid YAML"):
        load_rulebook(tmp_path / "bad.yaml", shipped=False)
