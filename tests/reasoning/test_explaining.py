"""Explaining away (engine/reasoning/explaining.py): hypotheses share the signs they explain.

The closed forms come from the noisy-OR reading of the sharing (Pearl 1988, Probabilistic
Reasoning in Intelligent Systems, sections 2.2 and 4.3): two causes of certainty a and b that
rest on the same signs, with fit 1, settle where p_a = a (1 - p_b) and p_b = b (1 - p_a), that is
p_a = a (1 - b) / (1 - a b) [derived].
"""

from __future__ import annotations

import textwrap

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from engine.common.errors import RulebookError
from engine.reasoning import Reasoner, load_rulebook
from engine.reasoning.explaining import Claim, share


def settled(a: float, b: float) -> tuple[float, float]:
    """The noisy-OR fixed point of two causes resting on the same signs [derived]."""
    return a * (1 - b) / (1 - a * b), b * (1 - a) / (1 - a * b)


@pytest.mark.parametrize("a, b", [(0.8, 0.4), (0.8, 0.8), (0.6, 0.3), (0.9, 0.5)])
def test_two_causes_of_the_same_signs_settle_at_the_noisy_or_fixed_point(a, b):
    result = share([Claim("A", "r", a, {"P1|spectrum|10": 1.0}), Claim("B", "r", b, {"P1|spectrum|10": 1.0})])
    want_a, want_b = settled(a, b)
    assert result.certainty["A"] == pytest.approx(want_a, abs=1e-6)
    assert result.certainty["B"] == pytest.approx(want_b, abs=1e-6)


def test_the_stronger_cause_keeps_most_and_the_weaker_little():
    result = share([Claim("A", "r", 0.8, {"x|waveform": 1.0}), Claim("B", "r", 0.4, {"x|waveform": 1.0})])
    assert result.certainty["A"] == pytest.approx(0.7059, abs=1e-4)      # 0.8 x 0.6 / 0.68
    assert result.certainty["B"] == pytest.approx(0.1176, abs=1e-4)      # 0.4 x 0.2 / 0.68
    assert result.taken("B", "x|waveform") == pytest.approx({"A": 1 - result.shares["x|waveform"]["B"]})


def test_signs_no_one_else_claims_are_kept_whole():
    result = share([Claim("A", "r", 0.7, {"a|spectrum|1": 1.0}), Claim("B", "r", 0.6, {"b|spectrum|1": 1.0})])
    assert result.kept == (1.0, 1.0)
    assert result.certainty == {"A": pytest.approx(0.7), "B": pytest.approx(0.6)}


def test_two_faults_with_signs_of_their_own_both_survive():
    shared = {"c|envelope:wide|50": 1.0}
    result = share([Claim("A", "shared", 0.5, shared), Claim("A", "own", 0.7, {"c|envelope:wide|300": 1.0}),
                    Claim("B", "shared", 0.5, shared), Claim("B", "own", 0.6, {"c|envelope:wide|120": 1.0})])
    assert result.kept[1] == result.kept[3] == 1.0            # what is each one's own stays whole
    assert result.kept[0] < 1 and result.kept[2] < 1          # the shared line is split
    assert result.certainty["A"] >= 0.7 and result.certainty["B"] >= 0.6


def test_a_cause_with_nothing_of_its_own_is_explained_away():
    shared = {"c|envelope:wide|50": 1.0}
    result = share([Claim("A", "shared", 0.6, shared), Claim("A", "own", 0.6, {"c|envelope:wide|120": 1.0}),
                    Claim("B", "shared", 0.6, shared)])
    assert result.certainty["A"] > 0.75 and result.certainty["B"] < 0.2


def test_a_fit_decides_between_equally_strong_causes():
    result = share([Claim("A", "r", 0.7, {"l|spectrum|40": 1.0}), Claim("B", "r", 0.7, {"l|spectrum|40": 0.3})])
    assert result.certainty["A"] > 0.5 > result.certainty["B"]


def test_a_comb_takes_the_line_a_lone_rate_lands_on():
    comb = {f"P2|envelope:kurtogram|{27 * k}": 1.0 for k in range(1, 16)}          # a cage's harmonics
    lone = {"P2|envelope:kurtogram|297": 1.0}                                        # a ball rate on k = 11
    result = share([Claim("cage", "r", 0.6, comb), Claim("ball", "r", 0.6, lone)])
    assert result.certainty["ball"] < 0.25 < 0.5 < result.certainty["cage"]


def test_opposing_firings_are_combined_but_never_shared():
    result = share([Claim("A", "r", 0.6, {"s": 1.0})], against={"A": [-0.5]})
    assert result.certainty["A"] == pytest.approx((0.6 - 0.5) / (1 - 0.5))    # MYCIN mixed signs
    assert result.kept == (1.0,)


claims = st.lists(st.tuples(st.sampled_from("ABCD"), st.sampled_from(["r1", "r2"]), st.floats(0.05, 0.95),
                            st.dictionaries(st.sampled_from([f"ch|spectrum|{i}" for i in range(1, 6)]
                                                            + ["ch|waveform"]),
                                            st.floats(0.1, 1.0), max_size=4)),
                  min_size=1, max_size=8)


@given(claims, st.randoms(use_true_random=False))
@settings(max_examples=60, deadline=None)
def test_sharing_never_adds_certainty_and_ignores_the_order_of_claims(raw, rnd):
    made = [Claim(h, r, c, s) for h, r, c, s in raw]
    result = share(made)
    for kept in result.kept:
        assert 0.0 <= kept <= 1.0 + 1e-12
    alone = share([])
    assert alone.certainty == {}
    for h, value in result.certainty.items():
        unshared = share([c for c in made if c.hypothesis == h]).certainty[h]
        assert -1.0 <= value <= unshared + 1e-9
    shuffled = list(made)
    rnd.shuffle(shuffled)
    again = share(shuffled)
    assert again.certainty.keys() == result.certainty.keys()
    for h in result.certainty:
        assert again.certainty[h] == pytest.approx(result.certainty[h], abs=1e-6)


RULES = """
rulebook: explaining-away test
faults:
  knock: {name: knock, family: gear}
  spall: {name: spall, family: bearing}
rules:
  - id: t.knock
    title: impulsive waveform from a knock
    source: test
    needs:
      - fact: overall
        as: o
        where: {kurtosis: {at_least: 4}}
    concludes: {fault: knock, component: o.location}
    certainty: 0.8
    because: "kurtosis {o.kurtosis}"
  - id: t.spall
    title: impulsive waveform from a spall
    source: test
    needs:
      - fact: overall
        as: o
        where: {kurtosis: {at_least: 4}}
    EXPLAINS
    concludes: {fault: spall, component: o.location}
    certainty: 0.4
    because: "kurtosis {o.kurtosis}"
"""


def overall(signs: dict) -> dict:
    return {"kind": "overall", "id": "overall-1", "channel": "P1H", "point": "P1H", "direction": "horizontal",
            "location": "pump_de", "location_shaft": "pump", "velocity_rms_mm_s": 1.0, "velocity_band_lo_hz": 10.0,
            "velocity_band_hi_hz": 1000.0, "accel_rms_g": 0.1, "accel_peak_g": 1.0, "crest_factor": 10.0,
            "kurtosis": 12.0, "skewness": 0.0, "band_truncated": False, "signs": signs}


def reasoner_with(tmp_path, explains: str) -> Reasoner:
    folder = tmp_path / "rb"
    folder.mkdir()
    (folder / "rules.yaml").write_text(textwrap.dedent(RULES.replace("EXPLAINS", explains)))
    return Reasoner(load_rulebook(folder, shipped=False))


def test_the_reasoner_shares_a_sign_two_rules_explain_and_shows_who_took_it(tmp_path):
    result = reasoner_with(tmp_path, "").reason([overall({"P1H|waveform": 1.0})])
    by = {h.fault: h for h in result.hypotheses}
    assert by["knock"].certainty == pytest.approx(settled(0.8, 0.4)[0], abs=1e-5)
    assert by["spall"].certainty == pytest.approx(settled(0.8, 0.4)[1], abs=1e-5)
    assert by["spall"].raw_certainty == pytest.approx(0.4)
    (loss,) = by["spall"].explained_by
    assert (loss.fault, loss.component) == ("knock", "pump_de") and 0.5 < loss.share < 1
    (firing,) = by["spall"].support
    assert firing.raw_certainty == pytest.approx(0.4) and firing.kept < 0.5


def test_a_rule_that_explains_nothing_keeps_its_certainty(tmp_path):
    result = reasoner_with(tmp_path, "explains: []").reason([overall({"P1H|waveform": 1.0})])
    by = {h.fault: h for h in result.hypotheses}
    assert by["spall"].certainty == pytest.approx(0.4) and by["spall"].raw_certainty is None
    assert by["knock"].certainty == pytest.approx(0.8)


def test_explains_must_name_a_needed_fact(tmp_path):
    with pytest.raises(RulebookError, match=r"explains: 'levels' is not a needed fact of this rule \(needed: o\)"):
        reasoner_with(tmp_path, "explains: [levels]")


def test_signs_never_reach_the_rule_engine(tmp_path):
    from engine.reasoning.engine import engine_copy

    assert "signs" not in engine_copy(overall({"P1H|waveform": 1.0}), "d1")
