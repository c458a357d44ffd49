"""The energy in a band of the analysed Hann spectrum, against the time-domain RMS of the same signal
band-limited by scipy.signal (the reference), so the window's noise-bandwidth correction is checked."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import signal

from engine.analysis.bands import spectrum_band_rms
from engine.analysis.spectrum import Transform

FS = 4096.0
N = 16384


def _bandpass(x, lo, hi):
    sos = signal.butter(10, [lo, hi], btype="bandpass", fs=FS, output="sos")
    return signal.sosfiltfilt(sos, x)


def test_band_limited_noise_matches_its_time_domain_rms():
    rng = np.random.default_rng(23)
    x = _bandpass(rng.normal(size=N), 300.0, 600.0)           # scipy as reference: the band-limited signal
    x = x - x.mean()
    spec = Transform.of(x, FS).amplitude("peak")
    got = spectrum_band_rms(spec, [(200.0, 700.0)])   # the band with the filter's skirts
    # Parseval for the windowed record: the Hann-weighted mean square of the same samples
    # (Heinzel et al. 2002, section 9); without the ENBW correction it would read sqrt(1.5) = 22 % high
    w2 = signal.windows.hann(N, sym=False) ** 2
    assert got == pytest.approx(float(np.sqrt(np.sum(w2 * x * x) / np.sum(w2))), rel=1e-6)
    # and the plain time-domain RMS of a stationary record, within the estimate's scatter over ~2000 lines
    assert got == pytest.approx(float(np.sqrt(np.mean(x * x))), rel=0.05)


def test_tones_off_the_lines_in_a_band_and_tones_out_of_it():
    t = np.arange(N) / FS
    inside = 1.3 * np.sin(2 * np.pi * 101.37 * t) + 0.4 * np.sin(2 * np.pi * 157.9 * t + 1.0)
    outside = 2.0 * np.sin(2 * np.pi * 40.2 * t) + 1.5 * np.sin(2 * np.pi * 420.6 * t)
    spec = Transform.of(inside + outside, FS).amplitude("rms")
    reference = _bandpass(inside + outside, 80.0, 200.0)     # scipy as reference
    expected = float(np.sqrt(np.mean(reference[N // 8:-N // 8] ** 2)))   # edges of the filtered record left out
    assert spectrum_band_rms(spec, [(80.0, 200.0)]) == pytest.approx(expected, rel=1e-4)
    # and the sum of two sines in RMS: sqrt((1.3^2 + 0.4^2) / 2) (handbook formula)
    assert spectrum_band_rms(spec, [(80.0, 200.0)]) == pytest.approx(np.sqrt((1.3 ** 2 + 0.4 ** 2) / 2), rel=1e-6)


def test_separate_ranges_add_their_power():
    t = np.arange(N) / FS
    x = np.sin(2 * np.pi * 100 * t) + np.sin(2 * np.pi * 300 * t)
    spec = Transform.of(x, FS).amplitude("peak")
    one = spectrum_band_rms(spec, [(90.0, 110.0)])
    both = spectrum_band_rms(spec, [(90.0, 110.0), (290.0, 310.0)])
    assert one == pytest.approx(np.sqrt(0.5), rel=1e-3)            # a sine of 1 peak is 0.7071 RMS
    assert both == pytest.approx(1.0, rel=1e-3)


def test_a_band_above_fmax_has_no_value():
    spec = Transform.of(np.ones(1024) + np.arange(1024) % 3, FS).amplitude("peak")
    assert spectrum_band_rms(spec, [(FS, 2 * FS)]) is None
