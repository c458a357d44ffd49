"""A train of impacts faster than every rate looked for is read at its own rate, not at a whole multiple of its
spacing (user trial 33, item 4: CWRU 130 stated at twice its sample rate read its outer-race impacts at
every other one, 107.8 Hz, and matched them to BPFO by chance).

The envelopes are built here: impulses at a known spacing, with a small random jitter of each impact's time
(the 1-2 % slip of a rolling bearing, Randall & Antoni (2011), MSSP 25(2), section 2) and a seeded noise floor.
"""

from __future__ import annotations

import numpy as np
import pytest

from engine.analysis.impacts import impact_train


def _train(rng, fs: float, rate_hz: float, seconds: float, jitter: float = 0.01) -> np.ndarray:
    """A squared envelope: a decaying burst at each impact (spacing 1 / ``rate_hz`` with ``jitter`` of it), noise."""
    n = int(fs * seconds)
    env = 0.02 * rng.random(n)
    t = 0.0
    burst = np.exp(-np.arange(6) / 1.5)
    while t < seconds - 0.01:
        i = int(t * fs)
        env[i:i + len(burst)] += burst
        t += (1 + jitter * rng.standard_normal()) / rate_hz
    return env


@pytest.mark.parametrize("rate_hz", [240.0, 325.0])
def test_a_train_past_the_fastest_rate_is_read_at_its_own_rate(rng, rate_hz):
    # the search reaches 1.3 x 162 = 211 Hz (the fastest listed rate of the CWRU rig, BPFI at 1797 rpm): a train at
    # 240 or 325 Hz is found at a multiple of its spacing (1/2 of its rate or less) unless it is read at its own
    env = _train(rng, 4000.0, rate_hz, 4.0)
    plain = impact_train(env, 4000.0, 29.95, 162.2)
    assert plain is not None and plain.rate_hz < 211.0          # what the search alone finds: a multiple
    ratio = rate_hz / plain.rate_hz
    assert ratio == pytest.approx(round(ratio), rel=0.03) and round(ratio) >= 2
    own = impact_train(env, 4000.0, 29.95, 162.2, faster=True)
    assert own is not None and own.rate_hz == pytest.approx(rate_hz, rel=0.02)
    assert own.periodicity >= plain.periodicity * 0.5 and own.regularity_cv < 0.1


@pytest.mark.parametrize("rate_hz", [107.4, 162.2])
def test_a_train_within_the_rates_looked_for_is_read_as_before(rng, rate_hz):
    env = _train(rng, 4000.0, rate_hz, 4.0)
    plain = impact_train(env, 4000.0, 29.95, 162.2)
    own = impact_train(env, 4000.0, 29.95, 162.2, faster=True)
    assert plain is not None and own is not None
    assert own.rate_hz == plain.rate_hz == pytest.approx(rate_hz, rel=0.02)


def test_a_train_at_the_top_of_the_search_is_not_moved_to_a_fraction(rng):
    # a train at 60 Hz with the search reaching 78 Hz: its autocorrelation holds no peak at 1/2, 1/3 or 1/4 of its
    # spacing (120, 180, 240 Hz), so its own spacing stands
    env = _train(rng, 4000.0, 60.0, 4.0)
    own = impact_train(env, 4000.0, 20.0, 60.0, faster=True)
    assert own is not None and own.rate_hz == pytest.approx(60.0, rel=0.02)
