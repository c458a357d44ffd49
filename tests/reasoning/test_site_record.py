"""A learned overlay's ``site_record`` (confirmed k of n judged at repair): the rulebook loader accepts and
checks it, the rule keeps it, ``rulebook explain`` says it, and the learning's settings come from the
rulebook's ``learning_*`` parameters."""

from __future__ import annotations

import pytest

from engine.common.errors import RulebookError
from engine.reasoning import load_rulebook
from engine.reasoning.explain import explain
from engine.reasoning.learning import settings

RULE = "shaft.unbalance.radial-1x"


def _overlay(tmp_path, record: str):
    """The shipped rule restated with a site_record (the overlay tellwave learn writes does the same)."""
    import yaml

    from engine.common.paths import RULEBOOKS

    raw = next(r for r in yaml.safe_load((RULEBOOKS / "shaft.yaml").read_text())["rules"] if r["id"] == RULE)
    raw = {"id": RULE, "overrides": True, **{k: v for k, v in raw.items() if k != "id"}}
    text = yaml.safe_dump({"rulebook": "learned", "rules": [raw]}, sort_keys=False)
    folder = tmp_path / "learned"
    folder.mkdir()
    (folder / "learned.yaml").write_text(text.replace("  overrides: true\n", f"  overrides: true\n  {record}\n"),
                                         encoding="utf-8")
    return folder


def test_a_rule_keeps_its_site_record_and_explain_says_it(tmp_path):
    book = load_rulebook(_overlay(tmp_path, "site_record: {confirmed: 7, judged: 9}"))
    assert book.rule(RULE).site_record == (7, 9)
    assert "  at this site this rule was confirmed 7 of 9 times" in explain(book.rule(RULE), book)
    assert load_rulebook().rule(RULE).site_record is None


@pytest.mark.parametrize("record, problem", [
    ("site_record: {confirmed: 10, judged: 9}", "confirmed more often than it was judged"),
    ("site_record: {confirmed: 1, judged: 0}", "site_record"),
    ("site_record: {confirmed: 1.5, judged: 3}", "site_record"),
    ("site_record: {confirmed: 1}", "judged"),
])
def test_a_site_record_that_cannot_be_is_one_error_naming_the_file(tmp_path, record, problem):
    with pytest.raises(RulebookError, match=problem) as err:
        load_rulebook(_overlay(tmp_path, record))
    assert "learned.yaml" in str(err.value)


def test_the_learning_settings_are_the_rulebooks_parameters(tmp_path):
    shipped = settings()
    # design choices stated in rulebooks/parameters.yaml (learning_*): a prior of 20 findings, a cap of 0.3
    assert (shipped.prior_n, shipped.cap, shipped.least_n, shipped.lowest_weight) == (20, 0.3, 5, 0.05)
    assert shipped.bin_edges == pytest.approx((0.0, 0.2, 0.4, 0.6, 0.8, 1.0))
    site = tmp_path / "site"
    site.mkdir()
    (site / "s.yaml").write_text("rulebook: s\nparameters: {learning_prior_findings: 40, learning_bin_width: 0.25}\n",
                                 encoding="utf-8")
    mine = settings(load_rulebook(site))
    assert mine.prior_n == 40 and mine.bin_edges == (0.0, 0.25, 0.5, 0.75, 1.0)
