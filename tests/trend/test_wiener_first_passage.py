"""The Wiener-process remaining life of bench.femto_compare: the first-passage law against the inverse
Gaussian (scipy as reference) and against a seeded Monte Carlo of the same process, the drifts that
never reach the level, and the update of the level and drift from noisy readings."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.stats import invgauss

from bench.femto_compare import (
    NO_CROSSING_H,
    WienerPrior,
    first_passage_cdf,
    lives_from_cdf,
    simulate_first_passage,
    wiener_fit,
    wiener_state,
)


def _ks(cdf: np.ndarray, draws: np.ndarray, at: np.ndarray) -> float:
    """Largest gap between a CDF at ``at`` and the empirical CDF of ``draws`` there."""
    return float(np.max(np.abs(cdf - np.array([np.mean(draws <= x) for x in at]))))


def test_a_fixed_linear_drift_gives_the_inverse_gaussian() -> None:
    # first passage of a Brownian motion with drift a > 0 and diffusion sigma to a level w: inverse Gaussian
    # of mean w / a and shape w^2 / sigma^2 (Si et al. 2012, IEEE Trans. Reliability 61, eq. for b = 1;
    # Cox & Miller 1965, from memory); scipy's invgauss as reference (mu = mean / shape, scale = shape)
    w, a, sigma = 1.5, 2.0, 0.8
    at = np.linspace(0.05, 3.0, 60)
    shape = w ** 2 / sigma ** 2
    ref = invgauss(mu=(w / a) / shape, scale=shape).cdf(at)
    assert np.max(np.abs(first_passage_cdf(at, w, 0.0, 1.0, a, 0.0, sigma) - ref)) < 1e-4
    # the time since the onset does not matter when the drift is linear
    assert np.max(np.abs(first_passage_cdf(at, w, 3.0, 1.0, a, 0.0, sigma) - ref)) < 1e-4


def test_a_linear_drift_that_may_be_negative_reaches_the_level_with_the_known_probability() -> None:
    # a Brownian motion with drift a < 0 ever reaches w > 0 with probability exp(2 a w / sigma^2)
    # (the gambler's-ruin law of Brownian motion; Cox & Miller 1965, from memory)
    assert first_passage_cdf(np.array([1e4]), 1.0, 0.0, 1.0, -0.5, 0.0, 1.0)[0] == pytest.approx(np.exp(-1.0),
                                                                                                 abs=1e-3)


def test_a_random_linear_drift_agrees_with_a_monte_carlo_of_the_same_process() -> None:
    # exact for b = 1 (the inverse Gaussian averaged over a normal drift, Si et al. 2012, Theorem 2); the
    # Monte Carlo's own error: 20 000 paths (about 0.01 at 95 %) and steps of 0.001 h (late by up to one)
    w, t_k, mu, sd, sigma = 1.5, 0.5, 2.0, 1.0, 0.8
    draws = simulate_first_passage(w, t_k, 1.0, mu, sd, sigma, 20_000, 1e-3, 6.0)
    at = np.linspace(0.01, 6.0, 300)
    cdf = first_passage_cdf(at, w, t_k, 1.0, mu, sd, sigma)
    assert _ks(cdf, draws, at) < 0.015
    # some drifts are negative: the mass that never crosses agrees too
    assert cdf[-1] == pytest.approx(np.mean(np.isfinite(draws)), abs=0.01)
    assert cdf[-1] < 0.99


@pytest.mark.parametrize("b, t_k, mu, sd, sigma, w", [(2.0, 0.5, 2.0, 0.5, 0.8, 1.5), (2.0, 1.0, 1.0, 0.3, 0.5, 1.0),
                                                      (3.0, 0.8, 1.0, 0.5, 0.6, 1.2)])
def test_a_nonlinear_time_scale_agrees_with_a_monte_carlo_of_the_same_process(b, t_k, mu, sd, sigma, w) -> None:
    # Si et al. 2012's first-passage density for a nonlinear drift is an approximation; for the convex
    # time scales the bench weighs it stays within 0.03 of the simulated law (a concave t^0.5 is worse: 0.05)
    draws = simulate_first_passage(w, t_k, b, mu, sd, sigma, 20_000, 1e-3, 6.0)
    at = np.linspace(0.01, 6.0, 300)
    assert _ks(first_passage_cdf(at, w, t_k, b, mu, sd, sigma), draws, at) < 0.03
    # and with the drift fixed (Theorem 1) as well
    fixed = simulate_first_passage(w, t_k, b, mu, 0.0, sigma, 20_000, 1e-3, 6.0)
    assert _ks(first_passage_cdf(at, w, t_k, b, mu, 0.0, sigma), fixed, at) < 0.03


def test_lives_keep_or_leave_out_the_drifts_that_never_reach_the_level() -> None:
    grid = np.geomspace(1e-6, 100.0, 2000)
    cdf = 0.6 * (1 - np.exp(-grid))               # 40 % never crosses
    kept = lives_from_cdf(grid, cdf, "never")
    assert kept is not None and np.mean(kept == NO_CROSSING_H) == pytest.approx(0.4, abs=0.002)
    assert np.median(kept[kept < NO_CROSSING_H]) == pytest.approx(np.log(2), rel=0.01)
    given = lives_from_cdf(grid, cdf, "fails")
    assert given is not None and np.all(given < NO_CROSSING_H)
    assert np.median(given) == pytest.approx(np.log(2), rel=0.01)
    assert lives_from_cdf(grid, np.zeros_like(grid), "fails") is None
    # a distribution that has already crossed: every life is 0
    done = lives_from_cdf(grid, np.ones_like(grid), "never")
    assert done is not None and not done.any()


def _noisy_paths(rng: np.random.Generator, n_paths: int, b: float, a_mean: float, a_sd: float, sigma: float,
                 tau: float, t: np.ndarray) -> list[tuple[np.ndarray, np.ndarray, float]]:
    """Readings of simulated units (x0 0.5, drift normal, Brownian steps, reading error tau) and their drifts."""
    out = []
    for _ in range(n_paths):
        a = a_mean + a_sd * rng.standard_normal()
        steps = sigma * np.sqrt(np.diff(t, prepend=0.0)) * rng.standard_normal(len(t))
        out.append((t, 0.5 + a * t ** b + np.cumsum(steps) + tau * rng.standard_normal(len(t)), a))
    return out


@pytest.mark.slow
def test_the_fit_finds_the_diffusion_and_the_reading_error_it_was_simulated_with(rng) -> None:
    # 40 units: with 12 the diffusion's estimate scatters 0.29-0.40 about the 0.4 simulated
    t = np.linspace(0.0, 2.0, 60)
    units = _noisy_paths(rng, 40, 1.0, 1.0, 0.3, 0.4, 0.3, t)
    sigma, tau, _ = wiener_fit([(t, y) for t, y, _ in units], 1.0)
    assert sigma == pytest.approx(0.4, rel=0.2)
    assert tau == pytest.approx(0.3, rel=0.15)
    # the likelihood prefers the exponent the units were made with
    assert wiener_fit([(t, y) for t, y, _ in units], 1.0)[2] > wiener_fit([(t, y) for t, y, _ in units], 3.0)[2]


def test_the_update_moves_the_drift_to_the_units_own_and_narrows_it(rng) -> None:
    t = np.linspace(0.0, 2.0, 80)
    prior = WienerPrior(1.0, 1.0, 0.5, 0.2, 0.3, np.array([3.0, 3.2]))
    (tt, y, a), = _noisy_paths(rng, 1, 1.0, 2.5, 0.0, 0.2, 0.3, t)   # a drift 3 prior sd above the prior's mean
    mx, ma, vx, va, _ = wiener_state(prior, tt, y)
    # over 2 h a diffusion of 0.2 per root hour leaves the drift known to about 0.2 / sqrt(2) = 0.14
    assert abs(ma - a) < 3 * np.sqrt(va) and np.sqrt(va) < 0.4 * prior.sd_a
    # the current level: near the unit's noise-free level now, closer than one reading's error
    truth = 0.5 + a * t[-1]
    assert abs(mx - truth) < 3 * np.sqrt(vx) and np.sqrt(vx) < prior.tau
    # with only the first readings the drift stays nearer the prior
    _, ma3, _, va3, _ = wiener_state(prior, tt[:3], y[:3])
    assert abs(ma3 - prior.mu_a) < abs(ma - prior.mu_a) and va3 > va
