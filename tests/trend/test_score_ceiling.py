"""The ceiling bench.femto prints: the best mean challenge score of a calibrated estimator whose
only fault is a lognormal spread of its errors."""

import numpy as np
import pytest

from bench.femto import score_ceiling, spread_for
from engine.trend.degradation import challenge_score


def test_no_spread_scores_one() -> None:
    # the challenge score of an exact estimate (Er = 0) is 1 (PHM 2012 challenge description,
    # ../shared/datasets/README.md section 4b)
    assert score_ceiling(0.0)[0] == pytest.approx(1.0, abs=0.01)


@pytest.mark.parametrize("sigma", [0.3, 0.5, 1.0])
def test_agrees_with_monte_carlo(sigma: float) -> None:
    """An independent seeded Monte Carlo of the same expectation, over the same fractions."""
    rng = np.random.default_rng(7)
    actual = np.exp(rng.normal(0.0, sigma, 40_000))
    fractions = np.exp(np.linspace(np.log(0.05), np.log(1.5), 300))
    mc = max(float(np.mean(challenge_score(100 * (actual - k) / actual))) for k in fractions)
    assert score_ceiling(sigma)[0] == pytest.approx(mc, abs=0.01)


def test_ceiling_falls_with_spread_and_asks_for_an_early_estimate() -> None:
    ceilings = [score_ceiling(s) for s in (0.2, 0.5, 1.0, 2.0)]
    assert all(a[0] > b[0] for a, b in zip(ceilings, ceilings[1:]))
    # a late estimate costs four times as fast as an early one: the best fraction is below the median
    assert all(c[1] < 1.0 for c in ceilings)


def test_spread_for_inverts_the_ceiling() -> None:
    s = spread_for(0.35)
    assert score_ceiling(s)[0] == pytest.approx(0.35, abs=0.005)
    assert 0.3 < s < 0.5
