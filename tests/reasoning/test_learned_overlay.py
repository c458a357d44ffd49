"""A learned overlay carries only what was learned (a weight, its site record and what it was learned
against), laid onto the rule as it is loaded now; the learning's arithmetic never moves a weight the way
the site's record contradicts."""

from __future__ import annotations

import pytest
import yaml

from engine.reasoning import load_rulebook
from engine.reasoning.learning import (
    Finding,
    JudgedDiagnosis,
    RuleFiring,
    RuleRecord,
    contradicts,
    propose_overlay,
    rule_records,
)

RULE = "site.fan.hub-axial-1x"
SITE_RULES = f"""\
rulebook: invented fan site (demo data)
faults:
  fan-hub-loose: {{name: loose fan hub, family: structure}}
rules:
  - id: {RULE}
    title: Axial 1X at the fan
    source: invented for this test
    needs:
      - fact: tone
        as: t
        where: {{name: 1X, direction: axial, component: {{same_as: location_shaft}},
                 amplitude_mm_s: {{at_least: THRESHOLD}}}}
    concludes: {{fault: fan-hub-loose, component: t.component}}
    certainty: 0.5
    because: axial 1X of {{t.amplitude_mm_s}}
"""


def _site(tmp_path, name: str, threshold: float):
    folder = tmp_path / name
    folder.mkdir()
    (folder / "fan.yaml").write_text(SITE_RULES.replace("THRESHOLD", str(threshold)), encoding="utf-8")
    return folder


def _judged(n_hit: int, n_miss: int, weight: float, final: float, rule: str = RULE, fault: str = "fan-hub-loose"):
    out = []
    for i in range(n_hit + n_miss):
        found = fault if i < n_hit else "nothing-found"
        out.append(JudgedDiagnosis(f"r{i}", (RuleFiring(rule, fault, "fan", weight, final),), (Finding("fan", found),)))
    return out


def _learn(tmp_path, rulebook, diagnoses):
    proposal = propose_overlay(diagnoses, rulebook, prior_n=20, cap=0.3, least_n=5)
    folder = tmp_path / "learned"
    folder.mkdir()
    (folder / "learned.yaml").write_text(proposal.text, encoding="utf-8")
    return proposal, folder


def test_the_overlay_holds_the_weight_and_record_only(tmp_path):
    site = _site(tmp_path, "site", 2.0)
    # 9 of 10 confirmed while the diagnoses said 50 %: under-confident, so the weight rises
    proposal, learned = _learn(tmp_path, load_rulebook(site), _judged(9, 1, 0.5, 0.5))
    entry = yaml.safe_load(proposal.text)["learned"][0]
    assert set(entry) == {"rule", "weight", "site_record", "learned_against", "source"}
    assert "rules" not in yaml.safe_load(proposal.text)
    # (20 * 0.5 + 9) / 30 = 0.633: the beta posterior mean, prior mean 0.5 worth 20 findings
    assert entry["weight"] == 0.63 and entry["site_record"] == {"confirmed": 9, "judged": 10}
    book = load_rulebook(site, learned)
    rule = book.rule(RULE)
    assert (rule.weight, rule.site_record, rule.learned_by, rule.label) == (0.63, (9, 10), "learned/learned.yaml",
                                                                         "site/fan.yaml")
    assert book.notes == ()


def test_an_edit_of_the_rule_after_learning_takes_effect_and_the_weight_is_not_laid_on_it(tmp_path):
    site = _site(tmp_path, "site", 2.0)
    _, learned = _learn(tmp_path, load_rulebook(site), _judged(9, 1, 0.5, 0.5))
    edited = _site(tmp_path, "site-edit", 6.0)           # the site raised its threshold after learning
    book = load_rulebook(edited, learned)
    rule = book.rule(RULE)
    threshold = next(c.value for p in rule.needs for c in p.conditions if c.field == "amplitude_mm_s")
    assert threshold == 6.0                               # the edit takes effect, the overlay loaded
    assert rule.weight == 0.5 and rule.site_record is None and rule.learned_by is None
    assert len(book.notes) == 1
    assert book.notes[0].startswith("learned/learned.yaml:") and f"rule {RULE}" in book.notes[0]
    assert "has changed since it was learned" in book.notes[0]


def test_the_overlay_without_the_site_it_was_learned_with_says_so(tmp_path):
    site = _site(tmp_path, "site", 2.0)
    _, learned = _learn(tmp_path, load_rulebook(site), _judged(9, 1, 0.5, 0.5))
    book = load_rulebook(learned)
    assert [n for n in book.notes if f"rule {RULE}" in n and "no loaded rule has this id" in n]


def test_a_warning_reaches_the_user_of_rulebook_check(tmp_path, capsys):
    from engine.cli import main

    site = _site(tmp_path, "site", 2.0)
    _, learned = _learn(tmp_path, load_rulebook(site), _judged(9, 1, 0.5, 0.5))
    edited = _site(tmp_path, "site-edit", 6.0)
    assert main(["rulebook", "check", "--site", str(edited), "--site", str(learned)]) == 0
    err = capsys.readouterr().err
    assert err.count("tellwave: warning:") == 1 and "learned/learned.yaml" in err and RULE in err


def test_a_weight_the_record_contradicts_is_not_raised():
    # the new user's case: a rule of weight 0.20 beside others, its hypotheses at 70 %, confirmed 3 of 8;
    # (20 * 0.2 + 3) / 28 = 0.25 would raise it, but its conclusions were right less often than promised
    record = RuleRecord("x", 8, 3, 3 / 8, 0.14, 0.69, promised=0.70)
    assert contradicts(0.20, 0.25, record)
    assert not contradicts(0.80, 0.70, record)        # lowering an over-confident rule is what the record says
    book = load_rulebook()
    rule = "shaft.misalignment.axial-2x"
    w0 = book.rule(rule).weight
    diagnoses = _judged(3, 5, w0, 0.70, rule=rule, fault="misalignment-angular")
    proposal = propose_overlay(diagnoses, book, prior_n=20, cap=0.3, least_n=5)
    assert rule_records(diagnoses)[0].promised == pytest.approx(0.70)
    assert [r.rule_id for r in proposal.held] == [rule] and proposal.changes == ()
    assert "held (the record contradicts the move" in proposal.text and "promised 70 %" in proposal.text


def test_an_over_confident_rule_is_lowered_and_an_under_confident_one_raised():
    book = load_rulebook()
    rule = "shaft.unbalance.radial-1x"
    w0 = book.rule(rule).weight
    low = propose_overlay(_judged(2, 18, w0, 0.8, rule, "unbalance"), book, prior_n=20, cap=0.3, least_n=5)
    assert low.changes[0].learned_weight < w0
    high = propose_overlay(_judged(20, 0, w0, 0.5, rule, "unbalance"), book, prior_n=20, cap=0.3, least_n=5)
    assert high.changes[0].learned_weight > w0
    # confirmed every time but promised 95 %, with a weight above the record's estimate: not lowered
    held = propose_overlay(_judged(6, 0, 0.9, 0.95, rule, "unbalance"), book, prior_n=20, cap=0.3, least_n=5)
    assert held.changes == () or held.changes[0].learned_weight >= w0


def test_a_whole_rule_learned_by_an_earlier_version_is_noted(tmp_path):
    from engine.common.paths import RULEBOOKS

    raw = next(r for r in yaml.safe_load((RULEBOOKS / "shaft.yaml").read_text())["rules"]
               if r["id"] == "shaft.unbalance.radial-1x")
    raw = {"id": raw["id"], "overrides": True, "site_record": {"confirmed": 3, "judged": 4},
           **{k: v for k, v in raw.items() if k != "id"}}
    folder = tmp_path / "old"
    folder.mkdir()
    (folder / "learned.yaml").write_text(yaml.safe_dump({"rulebook": "old", "rules": [raw]}), encoding="utf-8")
    notes = load_rulebook(folder).notes
    assert len(notes) == 1 and notes[0].startswith("old/learned.yaml:") and "masked" in notes[0]


@pytest.mark.parametrize("hits, misses, final, why", [
    (3, 1, 0.5, "too few judged firings to learn from"),          # 4 judged firings, fewer than least_n 5
    # (20 * 0.5 + 6) / 28 = 0.571, moved at most 0.001 (the cap below): 0.501 rounds to 0.50
    (6, 2, 0.75, "the learned weight rounds to the loaded one"),
    (3, 5, 0.70, "the record contradicts the move"),               # 3 of 8 right where 70 % was promised
])
def test_a_kept_weight_still_carries_its_site_record(tmp_path, hits, misses, final, why):
    site = _site(tmp_path, "site", 2.0)
    cap = 0.001 if why.startswith("the learned weight rounds") else 0.3    # a move too small to round to 0.51
    weight = 0.2 if why.startswith("the record contradicts") else 0.5
    book = load_rulebook(site)
    if weight != 0.5:
        (site / "fan.yaml").write_text(SITE_RULES.replace("THRESHOLD", "2.0").replace("certainty: 0.5",
                                                                                     f"certainty: {weight}"))
        book = load_rulebook(site)
    proposal = propose_overlay(_judged(hits, misses, weight, final), book, prior_n=20, cap=cap, least_n=5)
    assert proposal.changes == ()
    (tmp_path / "learned").mkdir()
    (tmp_path / "learned" / "learned.yaml").write_text(proposal.text, encoding="utf-8")
    body = yaml.safe_load(proposal.text)
    assert "learned" not in body and [e["rule"] for e in body["kept"]] == [RULE]
    assert body["kept"][0]["site_record"] == {"confirmed": hits, "judged": hits + misses}
    rule = load_rulebook(site, tmp_path / "learned").rule(RULE)
    assert (rule.weight, rule.site_record, rule.weight_kept) == (weight, (hits, hits + misses), why)
    # an edit of the rule since: the record is not shown, and a note says so
    edited = _site(tmp_path, "site-edit", 6.0)
    book = load_rulebook(edited, tmp_path / "learned")
    assert book.rule(RULE).site_record is None and book.rule(RULE).weight_kept is None
    assert len(book.notes) == 1 and "site record not shown" in book.notes[0]
