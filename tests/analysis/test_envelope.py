"""Envelope analysis and the fast kurtogram against references and known answers."""

import numpy as np
import pytest
from scipy import signal

from engine.analysis import analytic_band, fast_kurtogram, peak_near, spectral_kurtosis, squared_envelope_spectrum

from support import tone


def test_full_band_envelope_matches_scipy_hilbert(rng):
    # Source: scipy.signal.hilbert as reference for the analytic signal.
    x = rng.standard_normal(4096)
    ours = np.abs(analytic_band(x, 1000.0).samples)
    ref = np.abs(signal.hilbert(x - x.mean()))
    assert np.allclose(ours, ref, rtol=1e-9, atol=1e-12)


def test_band_envelope_matches_butterworth_plus_hilbert(rng):
    # Source: scipy.signal (butter + sosfiltfilt + hilbert) as reference. An AM tone at
    # 2 kHz modulated at 30 Hz, plus a strong 50 Hz line outside the band.
    fs, n = 20000.0, 40000
    t = np.arange(n) / fs
    x = (1 + 0.5 * np.cos(2 * np.pi * 30 * t)) * np.cos(2 * np.pi * 2000 * t) + 5 * np.sin(2 * np.pi * 50 * t)
    band = (1500.0, 2500.0)
    ours = analytic_band(x, fs, band, min_rate_hz=fs)
    assert ours.fs_hz == pytest.approx(fs)
    sos = signal.butter(6, band, btype="bandpass", fs=fs, output="sos")
    ref = np.abs(signal.hilbert(signal.sosfiltfilt(sos, x)))
    inner = slice(2000, n - 2000)
    assert np.allclose(np.abs(ours.samples)[inner], ref[inner], atol=0.01)


def test_decimated_band_keeps_the_envelope():
    fs, n = 20000.0, 40000
    t = np.arange(n) / fs
    x = (1 + 0.5 * np.cos(2 * np.pi * 30 * t)) * np.cos(2 * np.pi * 2000 * t)
    band = analytic_band(x, fs, (1800.0, 2200.0))
    assert band.fs_hz < fs / 10
    env = np.abs(band.samples)
    assert env.max() == pytest.approx(1.5, abs=0.01) and env.min() == pytest.approx(0.5, abs=0.01)


@pytest.mark.parametrize("m", [0.2, 0.5, 0.9])
def test_squared_envelope_spectrum_of_am_signal(m):
    # Source: check-values.md [derived]: x = (1 + m cos 2 pi fm t) cos 2 pi fc t gives a
    # squared-envelope line of 2m at fm and m^2/2 at 2 fm.
    fs, n = 16384.0, 16384 * 2
    t = np.arange(n) / fs
    fm, fc = 64.0, 3000.0
    x = (1 + m * np.cos(2 * np.pi * fm * t)) * np.cos(2 * np.pi * fc * t)
    ses = squared_envelope_spectrum(x, fs, (2500.0, 3500.0), max_freq_hz=500.0)
    assert peak_near(ses, fm, 1.0).amplitude == pytest.approx(2 * m, rel=2e-3)
    assert peak_near(ses, 2 * fm, 1.0).amplitude == pytest.approx(m * m / 2, rel=5e-3)
    assert ses.freq_hz[-1] <= 500.0


def test_spectral_kurtosis_reference_values(rng):
    # Source: Antoni (2006), check-values.md: SK is 0 for Gaussian noise, -1 for a sinusoid.
    noise = rng.standard_normal(200000) + 1j * rng.standard_normal(200000)
    assert spectral_kurtosis(noise) == pytest.approx(0.0, abs=0.03)
    assert spectral_kurtosis(np.exp(1j * np.linspace(0, 300, 10000))) == pytest.approx(-1.0, abs=1e-9)


def impulse_train(fs, n, rate_hz, resonance_hz, damping=0.05, rng=None, jitter=0.0):
    """Decaying resonance rings repeating at ``rate_hz``: a bearing-like impact train."""
    t = np.arange(int(0.02 * fs)) / fs
    ring = np.exp(-damping * 2 * np.pi * resonance_hz * t) * np.sin(2 * np.pi * resonance_hz * t)
    x = np.zeros(n)
    period = fs / rate_hz
    k = 0.0
    while k < n - len(ring):
        i = int(k)
        x[i:i + len(ring)] += ring
        k += period * (1 + (jitter * rng.standard_normal() if rng is not None else 0.0))
    return x


@pytest.mark.parametrize("resonance_hz", [1800.0, 3300.0, 4700.0])
def test_kurtogram_finds_the_band_of_a_buried_impulse_train(rng, resonance_hz):
    # Source: Antoni (2007) - the kurtogram's maximum lies over the band an impulse train
    # excites. Known answer by construction: impacts ringing at resonance_hz, buried in
    # noise (impacts' RMS half the noise's) and under a strong shaft line.
    fs, n = 12000.0, 60000
    x = impulse_train(fs, n, 107.0, resonance_hz, rng=rng, jitter=0.01)
    x = x / np.std(x) / 2
    x = x + rng.standard_normal(n) + 4 * tone(29.9, fs, n)
    kg = fast_kurtogram(x, fs, max_level=5)
    assert kg.best.f_lo_hz <= resonance_hz <= kg.best.f_hi_hz
    assert kg.best.kurtosis > 0.5
    levels = {b.level for b in kg.bands}
    assert {0.0, 1.0, 1.6, 2.0, 2.6} <= levels
    assert len([b for b in kg.bands if b.level == 2.6]) == 6


def test_kurtogram_of_noise_is_flat(rng):
    kg = fast_kurtogram(rng.standard_normal(60000), 12000.0, max_level=4)
    assert max(b.kurtosis for b in kg.bands) < 0.3


def test_envelope_spectrum_shows_the_impact_rate(rng):
    # Source: Randall & Antoni (2011): the SES of the demodulated band shows the repetition
    # rate. Impact rate 107.36 Hz (CWRU BPFO at 1797 rpm, used only as a plausible rate).
    fs, n = 12000.0, 120000
    x = impulse_train(fs, n, 107.36, 3300.0, rng=rng, jitter=0.005) + 0.3 * rng.standard_normal(n)
    kg = fast_kurtogram(x, fs, max_level=5)
    ses = squared_envelope_spectrum(x, fs, (kg.best.f_lo_hz, kg.best.f_hi_hz), max_freq_hz=600)
    p = peak_near(ses, 107.36, 1.0)
    assert p is not None and p.snr > 10
    assert p.freq_hz == pytest.approx(107.36, abs=0.3)
