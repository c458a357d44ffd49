"""numpy versions of scipy functions, held against scipy as the reference implementation.

The diagnosis does not import scipy.signal, scipy.stats or scipy.ndimage (half
a second per command); these tests keep the replacements honest.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.extra.numpy import arrays
from scipy import ndimage, signal, stats

from engine.analysis.envelope import tukey
from engine.analysis.levels import waveform_statistics
from engine.analysis.peaks import local_maxima, peaks_above
from engine.analysis.spectrum import Transform, running_median
from engine.analysis.windows import window
from engine.readings.band_rms import hann_from_rectangular

finite = st.floats(-1e3, 1e3, allow_nan=False, allow_infinity=False)
# quantised values make flat tops (plateaus), the hard case of peak finding
quantised = st.integers(-5, 5).map(float)


@settings(max_examples=200, deadline=None)
@given(arrays(float, st.integers(0, 60), elements=st.one_of(finite, quantised)))
def test_local_maxima_match_scipy_find_peaks(x):
    assert list(local_maxima(x)) == list(signal.find_peaks(x)[0])


@settings(max_examples=200, deadline=None)
@given(arrays(float, st.integers(3, 80), elements=quantised), st.floats(-5, 5), st.integers(1, 12))
def test_peaks_above_match_scipy_height_and_distance(x, height, distance):
    # equal heights inside one distance are an order scipy does not define; keep them unique
    x = x + np.arange(len(x)) * 1e-6
    assert list(peaks_above(x, height, distance)) == list(signal.find_peaks(x, height=height, distance=distance)[0])


@pytest.mark.parametrize("n, alpha", [(10, 0.5), (1000, 0.02), (4097, 0.02), (64, 1.0)])
def test_tukey_matches_scipy(n, alpha):
    assert np.allclose(tukey(n, alpha), signal.windows.tukey(n, alpha), atol=1e-15)


@pytest.mark.parametrize("n", [16, 1000, 4097])
def test_hann_matches_scipy_get_window(n):
    assert np.allclose(window("hann", n), signal.get_window("hann", n, fftbins=True), atol=1e-15)


@pytest.mark.parametrize("n", [64, 1001, 4096])
def test_three_tap_hann_spectrum_equals_windowing_in_time(rng, n):
    x = rng.standard_normal(n)
    x -= x.mean()
    direct = np.fft.rfft(x * signal.get_window("hann", n, fftbins=True))
    assert np.allclose(hann_from_rectangular(np.fft.rfft(x), n), direct, atol=1e-10)


def test_running_median_matches_ndimage_median_filter(rng):
    a = rng.random(3000)
    ref = ndimage.median_filter(a, size=51, mode="nearest")
    lines = np.array([0, 1, 24, 25, 26, 1500, 2974, 2975, 2999])
    assert np.array_equal(running_median(a, lines, 51), ref[lines])
    assert np.array_equal(running_median(a, np.arange(3000), 51), ref)


def test_waveform_moments_match_scipy_stats(rng):
    x = rng.standard_normal(5000) ** 3
    st_ = waveform_statistics(x)
    assert st_.kurtosis == pytest.approx(stats.kurtosis(x, fisher=False, bias=True), rel=1e-12)
    assert st_.skewness == pytest.approx(stats.skew(x, bias=True), rel=1e-12)


@pytest.mark.parametrize("n", [4096, 4095])
def test_band_rms_matches_scipy_periodogram(rng, n):
    fs = 2000.0
    x = rng.standard_normal(n)
    f, psd = signal.periodogram(x, fs, window="hann", scaling="density", detrend="constant")
    band = (f >= 10) & (f <= 1000) & (f > 0)
    reference = np.sqrt(np.sum(psd[band]) * (f[1] - f[0]))
    assert Transform.of(x, fs).band_rms(10, 1000) == pytest.approx(reference, rel=1e-10)


@pytest.mark.parametrize("n, spacing", [(20000, 125), (4096, 37), (30001, 410)])
def test_impact_train_periodicity_is_the_linear_autocorrelation(rng, n, spacing):
    """The train's periodicity is the unbiased, normalised autocorrelation of the centred envelope at its
    spacing (scipy.signal.correlate, mode full, as reference): the transform is padded only as far as the
    lags it reads, which must stay linear, not circular."""
    from engine.analysis.impacts import impact_train

    fs = 5000.0
    env = np.zeros(n)
    env[spacing // 2::spacing] = rng.uniform(0.5, 1.5, len(env[spacing // 2::spacing]))
    rate = fs / spacing
    train = impact_train(env, fs, 0.8 * rate, 1.2 * rate)
    centred = env - env.mean()
    full = signal.correlate(centred, centred, mode="full", method="fft")[n - 1:]     # lags 0 .. n - 1
    expected = full[spacing] / (1 - spacing / n) / full[0]
    assert train.periodicity == pytest.approx(expected, rel=1e-12, abs=1e-15)
    assert train.rate_hz == pytest.approx(rate, rel=1e-3)
