"""Speed and memory of the analysis without a change of its values (issue 21).

Each change that made the analysis faster or leaner must give the values the
direct computation gives; the kurtogram searches no band above the reading's
Fmax (sample rate / 2.56, common practice for the anti-alias filter's edge)
wholly.
"""

from __future__ import annotations

import numpy as np
import pytest

from engine.analysis import synchronous
from engine.analysis.kurtogram import kurtogram_of_spectrum
from engine.analysis.spectrum import Transform
from engine.analysis.synchronous import SAMPLES_PER_SLICE, synchronous_part
from engine.readings.length import FMAX_FACTOR


def _impulses(fs, n, rate_hz, ring_hz, seed):
    rng = np.random.default_rng(seed)
    t = np.arange(400) / fs
    ring = np.exp(-t * 800.0) * np.sin(2 * np.pi * ring_hz * t)
    x = 0.05 * rng.standard_normal(n)
    for start in (np.arange(0, n / fs - 0.02, 1 / rate_hz) * fs).astype(int):
        x[start:start + len(ring)] += ring[:n - start]
    return x


def test_kurtogram_searches_no_band_above_fmax():
    fs, n = 25600.0, 65536
    fmax = fs / FMAX_FACTOR
    x = _impulses(fs, n, 37.0, 4000.0, seed=3)
    spec = np.fft.rfft(x - x.mean())
    every = kurtogram_of_spectrum(spec, n, fs, max_level=6, trim_fraction=0.03)
    capped = kurtogram_of_spectrum(spec, n, fs, max_level=6, trim_fraction=0.03, fmax_hz=fmax)
    assert max(b.f_lo_hz for b in every.bands) >= fmax              # the uncapped tiling reaches past Fmax
    assert all(b.f_lo_hz < fmax for b in capped.bands)
    kept = {(b.level, b.f_lo_hz): b.kurtosis for b in every.bands if b.f_lo_hz < fmax}
    assert {(b.level, b.f_lo_hz): b.kurtosis for b in capped.bands} == kept   # the same statistic where searched
    assert capped.best.f_lo_hz <= 4000.0 <= capped.best.f_hi_hz      # the ring's band still wins


def test_kurtogram_does_not_pick_impacts_ringing_above_fmax():
    """Impacts ringing at 12 kHz (between Fmax, 10 kHz, and the Nyquist frequency, 12.8 kHz: inside
    the anti-alias filter's roll-off, no machine band) over broadband noise: the uncapped kurtogram
    picks a band wholly above Fmax, the capped one a band that starts below it."""
    fs, n = 25600.0, 65536
    fmax = fs / FMAX_FACTOR
    x = _impulses(fs, n, 37.0, 12000.0, seed=4)
    spec = np.fft.rfft(x - x.mean())
    every = kurtogram_of_spectrum(spec, n, fs, max_level=6, trim_fraction=0.03)
    capped = kurtogram_of_spectrum(spec, n, fs, max_level=6, trim_fraction=0.03, fmax_hz=fmax)
    assert every.best.f_lo_hz >= fmax
    assert capped.best.f_lo_hz < fmax


@pytest.mark.parametrize("n", [SAMPLES_PER_SLICE - 1, 3 * SAMPLES_PER_SLICE + 17])
def test_synchronous_part_in_slices_is_the_whole_computation(n, monkeypatch):
    rng = np.random.default_rng(11)
    fs, speed_hz = 5000.0, 24.7
    x = rng.standard_normal(n) + np.sin(2 * np.pi * 3 * speed_hz * np.arange(n) / fs)
    sliced = synchronous_part(x, fs, speed_hz)
    monkeypatch.setattr(synchronous, "SAMPLES_PER_SLICE", 1 << 30)
    # one chirp over 2e5 samples holds its phases to about 1e-7
    assert np.allclose(synchronous_part(x, fs, speed_hz), sliced, rtol=0, atol=1e-6)


def test_a_short_cut_of_a_spectrum_owns_its_arrays():
    rng = np.random.default_rng(2)
    spec = Transform.of(rng.standard_normal(8192), 1000.0).amplitude("peak")
    short = spec.below(100.0)
    assert short.freq_hz.base is None and short.amplitude.base is None    # the long arrays can be freed
    assert np.array_equal(short.amplitude, spec.amplitude[:len(short.amplitude)])
    long = spec.below(400.0)
    assert np.array_equal(long.freq_hz, spec.freq_hz[:len(long.freq_hz)])
