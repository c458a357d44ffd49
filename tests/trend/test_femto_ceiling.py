"""bench.femto_ceiling: how much of the remaining life a linear model over stored indicators can tell,
checked on histories whose true answer is known."""

import numpy as np
import pytest

from bench.femto_ceiling import Cuts, indicator_features, search, trailing_mean
from engine.trend.degradation import challenge_score


def test_trailing_mean_matches_a_convolution() -> None:
    # reference: numpy's convolution with a box of n ones, divided by the readings it covers
    x = np.random.default_rng(3).normal(size=40)
    n = 5
    ref = np.convolve(x, np.ones(n))[: len(x)] / np.minimum(np.arange(1, len(x) + 1), n)
    assert trailing_mean(x, n) == pytest.approx(ref)


def test_features_of_a_straight_rise() -> None:
    # a level rising 0.6 per hour after 40 flat readings 100 s apart: slope 0.6 / h, rise above the flat start
    t = np.arange(60) * 100.0
    x = np.where(np.arange(60) < 40, 1.0, 1.0 + 0.6 * (t - t[39]) / 3600.0)
    now, rise, max_rise, slope = indicator_features(t, x)
    assert slope == pytest.approx(0.6, rel=1e-9)
    assert rise == pytest.approx(now - 1.0)
    assert max_rise == pytest.approx(rise)       # the rise is monotonic, so now is its largest


def synthetic_cuts(rng: np.random.Generator, exact: bool) -> Cuts:
    """Six runs of six cuts; the log remaining life is 2 x the first feature + 1 (``exact``) or unrelated."""
    runs = np.repeat([f"run{i}" for i in range(6)], 6)
    x = rng.normal(size=(36, 4))
    y = 2.0 * x[:, 0] + 1.0 if exact else rng.normal(size=36)
    return Cuts(runs, y, x, ["a", "b", "c", "d"], np.ones(36, bool))


def test_a_remaining_life_the_features_carry_exactly_scores_one() -> None:
    # an exact estimate has Er = 0 and scores 1 (PHM 2012 challenge description, ../shared/datasets/README.md 4b)
    found = search(synthetic_cuts(np.random.default_rng(1), exact=True), 1, np.ones(36, bool))
    assert found[1].fitted.features == ("a",)
    assert found[1].fitted.score == pytest.approx(1.0, abs=1e-6)
    assert found[1].left_out.score == pytest.approx(1.0, abs=1e-6)
    assert found[1].nested == pytest.approx(1.0, abs=1e-6)      # each fold's own runs choose feature a too
    assert found[0].nested < 0.5                                   # a constant cannot follow it


def test_features_that_carry_nothing_flatter_only_the_model_picked_on_its_own_cuts() -> None:
    found = search(synthetic_cuts(np.random.default_rng(2), exact=False), 2, np.ones(36, bool))
    # 10 models of up to two noise features: the best fitted on its own cuts looks better than the
    # recipe that chooses its features inside each fold earns on runs it has not seen
    assert found[2].fitted.score > found[2].nested + 0.05
    # the constant model's in-sample score is the best mean score any single scale of exp(mean) gets
    y = synthetic_cuts(np.random.default_rng(2), exact=False).log_life
    factors = np.exp(np.linspace(np.log(0.05), np.log(3.0), 2001))
    brute = max(float(challenge_score(100 * (1 - f * np.exp(y.mean() - y))).mean()) for f in factors)
    assert found[0].fitted.score == pytest.approx(brute, abs=0.01)
