"""A site may add a thousand rules. durable-rules 2.0.28 has fixed-size tables in its C core, so a
rulebook that outgrows them runs as several rulesets, one after another (compile.plan_rulesets);
these tests measure the tables on the engine itself and check that splitting changes no answer."""

from __future__ import annotations

import json

import durable_rules_engine
import pytest

from bench.reasoning_speed import GENERATED_FAULT, generated_site_rules, generated_threshold
from engine.reasoning import Reasoner, load_rulebook
from engine.reasoning import compile as compiler
from engine.reasoning.engine import QuietHost

from support import ROOT

GOLDEN = ROOT / "tests/end_to_end/golden"


def _golden(name: str) -> list[dict]:
    return json.loads((GOLDEN / f"{name}.facts.json").read_text())


def _engine_accepts(rules: dict, fact: dict | None = None) -> str | None:
    """None when the engine builds ``rules`` and takes ``fact``, else its error."""
    host = QuietHost()
    try:
        host.set_rulesets({"t": rules})
        if fact is not None:
            host.assert_fact("t", fact)
    except durable_rules_engine.error as exc:
        return str(exc)
    return None


@pytest.mark.parametrize("n, fails", [(64, False), (65, True)])
def test_the_engine_takes_at_most_64_patterns_of_one_kind_that_a_fact_passes(n, fails):
    rules = {f"r{i}": {"all": [{"a": {"$and": [{"kind": "k"}, {"$gte": {"v": float(i)}}]}}], "run": lambda c: None}
             for i in range(n)}
    error = _engine_accepts(rules, {"kind": "k", "id": "1", "v": 1000.0, "sid": "s"})
    assert (error is not None and "303" in error) == fails, "the engine's table changed: revisit compile's budgets"
    assert compiler.PATTERNS_PER_KIND <= 64 // 2


@pytest.mark.parametrize("n, fails", [(256, False), (257, True)])
def test_the_engine_links_at_most_256_rules_to_one_shared_first_test(n, fails):
    rules = {f"r{i}": {"all": [{"p": {"kind": "phase"}}, {"a": {"kind": "k"}},
                               {"b": {"$and": [{"kind": "k2"}, {"v": float(i)}]}}],
                       "run": lambda c: None} for i in range(n)}
    error = _engine_accepts(rules)
    assert (error is not None and "108" in error) == fails, "the engine's table changed: revisit compile's budgets"
    assert compiler.RULES_PER_RULESET <= 3 * 256 // 4     # a quarter of the table kept in hand


def test_the_shipped_rulebooks_run_as_one_ruleset():
    """Their answers are the ones measured and tuned: nothing of theirs is split."""
    assert Reasoner(load_rulebook(ROOT / "cases/site")).ruleset_count == 1


@pytest.fixture(scope="module")
def thousand(tmp_path_factory):
    folder = generated_site_rules(1000, tmp_path_factory.mktemp("site-rules")).parent
    return Reasoner(load_rulebook(ROOT / "cases/site", folder))


@pytest.mark.parametrize("name", ["rw2-pump-nde-outer-race", "ct1-bevel-tooth"])
def test_a_thousand_site_rules_each_fire_exactly_when_their_condition_holds(thousand, name):
    facts = _golden(name)
    result = thousand.reason(facts)
    assert thousand.ruleset_count > 1
    fired = {f.rule_id for h in result.hypotheses if h.fault == GENERATED_FAULT for f in h.support}
    kurtosis = [f["kurtosis"] for f in facts if f["kind"] == "overall" and "kurtosis" in f]
    expected = {f"site.gen.{i:04d}" for i in range(1000) if generated_threshold(i) <= max(kurtosis)}
    if name == "rw2-pump-nde-outer-race":     # kurtosis 3 to 13.7: some rules fire, some do not
        assert 0 < len(expected) < 1000, "the generated thresholds should straddle this reading's kurtosis"
    assert fired == expected
    # each generated rule fired once for every channel whose kurtosis clears it
    per_rule = sum(len(h.support) + h.other_matches for h in result.hypotheses if h.fault == GENERATED_FAULT)
    assert per_rule == sum(1 for i in range(1000) for k in kurtosis if generated_threshold(i) <= k)


@pytest.mark.parametrize("name", ["rw2-pump-nde-outer-race", "ct1-bevel-tooth"])
def test_a_thousand_site_rules_leave_the_shipped_answers_as_they_were(thousand, name):
    facts = _golden(name)
    alone = Reasoner(load_rulebook(ROOT / "cases/site")).reason(facts)
    crowded = thousand.reason(facts)
    shipped = [(h.fault, h.component, h.certainty, h.raw_certainty) for h in crowded.hypotheses
               if h.fault != GENERATED_FAULT]
    assert shipped == [(h.fault, h.component, h.certainty, h.raw_certainty) for h in alone.hypotheses]
    assert crowded.withheld == alone.withheld


def _answers(result):
    """What a diagnosis concludes: hypotheses with certainty, the rules for and against each, rivals.
    (Among firings of one rule with equal certainty, which one the trail shows follows firing order.)"""
    def one(h):
        return (h.fault, h.component, h.certainty, h.raw_certainty, h.stage, h.other_matches,
                tuple((f.rule_id, f.certainty, f.kept) for f in h.support),
                tuple((f.rule_id, f.certainty) for f in h.against),
                tuple((x.fault, x.component, x.share) for x in h.explained_by))
    return (tuple(one(h) for h in result.hypotheses), result.withheld, tuple(one(h) for h in result.reading_problems),
            sorted((f.rule_id, f.certainty) for f in result.chain), result.facts_considered,
            tuple((d.fault, d.component, tuple((r.fault, r.component, r.certainty) for r in d.rivals))
                  for d in result.differential))


@pytest.mark.parametrize("name", ["rw2-pump-nde-outer-race", "ct1-bevel-tooth"])
def test_splitting_the_shipped_rulebooks_changes_no_answer(monkeypatch, name):
    book = load_rulebook(ROOT / "cases/site")
    whole = Reasoner(book)
    monkeypatch.setattr(compiler, "RULES_PER_RULESET", 7)
    monkeypatch.setattr(compiler, "PATTERNS_PER_KIND", 4)
    split = Reasoner(book)
    assert split.ruleset_count > 10
    facts = _golden(name)
    assert _answers(split.reason(facts)) == _answers(whole.reason(facts))


def test_a_split_runs_a_rule_after_every_rule_whose_derived_facts_it_reads(monkeypatch):
    monkeypatch.setattr(compiler, "RULES_PER_RULESET", 7)
    monkeypatch.setattr(compiler, "PATTERNS_PER_KIND", 4)
    rules = load_rulebook().rules
    groups = compiler.plan_rulesets(rules)
    assert sorted(r.id for g in groups for r in g) == sorted(r.id for r in rules)
    place = {r.id: i for i, g in enumerate(groups) for r in g}
    derivers = [r for r in rules if r.derives]
    readers = [r for r in rules if any(p.kind == d.derives for d in derivers for p in r.needs)]
    assert derivers and readers
    assert all(place[d.id] < place[r.id] for d in derivers for r in readers
               if any(p.kind == d.derives for p in r.needs))
