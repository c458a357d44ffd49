"""Calibrated spectra: window factors, amplitude scaling, interpolation, integration, levels."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.extra.numpy import arrays
from scipy import signal

from engine.analysis import (
    amplitude_spectrum,
    averaged_spectrum,
    band_rms,
    find_peaks,
    integrate,
    interpolate_line,
    overall_levels,
    peak_near,
    refine_running_speed,
    waveform_statistics,
    window_factors,
)
from engine.common.units import STANDARD_GRAVITY_M_S2

from support import tone


# Source: Heinzel, Ruediger & Schilling (2002), "Spectrum and spectral density estimation
# by the DFT", Appendix C window table (periodic windows), via check-values.md [derived].
@pytest.mark.parametrize("name, cg, enbw, loss_db", [
    ("hann", 0.5, 1.5, 1.42),
    ("hamming", 0.54, 1.3628, 1.75),
    ("rectangular", 1.0, 1.0, 3.92),
])
def test_window_factors_match_heinzel(name, cg, enbw, loss_db):
    f = window_factors(name, 4096)
    assert f.coherent_gain == pytest.approx(cg, abs=1e-3)
    assert f.amplitude_correction == pytest.approx(1 / cg, rel=1e-3)
    assert f.enbw_bins == pytest.approx(enbw, abs=2e-3)
    assert f.scalloping_loss_db == pytest.approx(loss_db, abs=0.01)


def test_hann_energy_correction():
    # Source: Heinzel et al. (2002): Hann energy correction sqrt(8/3) = 1.633 (check-values.md).
    assert window_factors("hann").energy_correction == pytest.approx(1.633, abs=1e-3)


def test_flattop_enbw():
    # Source: check-values.md: scipy's flat top (HFT-style) ENBW about 3.77 bins.
    assert window_factors("flattop").enbw_bins == pytest.approx(3.77, abs=0.01)


@pytest.mark.parametrize("window_kind", ["hann", "hamming", "flattop", "blackmanharris"])
@pytest.mark.parametrize("scaling, factor", [("peak", 1.0), ("rms", 1 / np.sqrt(2)), ("peak-to-peak", 2.0)])
def test_on_bin_sine_reads_its_amplitude(window_kind, scaling, factor):
    # Source: derived - the coherent gain divided out, a sine of amplitude A reads A peak,
    # A/sqrt(2) RMS, 2A peak-to-peak at its line.
    fs, n = 2048.0, 8192
    spec = amplitude_spectrum(tone(100.0, fs, n, amplitude=2.5), fs, window_kind, scaling)
    assert spec.amplitude.max() == pytest.approx(2.5 * factor, rel=1e-9)
    assert spec.freq_hz[np.argmax(spec.amplitude)] == pytest.approx(100.0)


@pytest.mark.parametrize("window_kind", ["hann", "hamming", "flattop", "rectangular"])
@pytest.mark.parametrize("offset", [0.0, 0.13, 0.31, 0.5, 0.77])
def test_interpolation_recovers_off_bin_tones(window_kind, offset):
    # Source: derived - exact for an isolated tone (kernel inversion; Grandke 1983 for Hann).
    fs, n = 1000.0, 4000
    f0 = (60 + offset) * fs / n
    spec = amplitude_spectrum(tone(f0, fs, n, amplitude=1.7, phase=0.4), fs, window_kind)
    line = int(np.argmax(spec.amplitude))
    f, a = interpolate_line(spec, line)
    tol = 2e-3 if window_kind == "rectangular" else 5e-4
    assert f == pytest.approx(f0, abs=0.02 * fs / n)
    assert a == pytest.approx(1.7, rel=tol if window_kind != "rectangular" else 0.03)


def test_scalloping_loss_is_visible_without_interpolation():
    # Source: Heinzel et al. (2002): Hann reads 1.42 dB low for a tone half a bin off.
    fs, n = 1000.0, 4000
    spec = amplitude_spectrum(tone(60.5 * fs / n, fs, n), fs)
    assert 20 * np.log10(spec.amplitude.max()) == pytest.approx(-1.42, abs=0.02)


def test_welch_average_reads_the_sine_and_counts_averages(rng):
    # Source: scipy.signal.welch as reference ('spectrum' scaling gives RMS^2 of a tone).
    fs, n = 4096.0, 4096 * 8
    x = tone(256.0, fs, n, amplitude=3.0) + 0.1 * rng.standard_normal(n)
    spec = averaged_spectrum(x, fs, nperseg=4096, overlap=0.5)
    assert spec.averages == 15
    assert spec.amplitude.max() == pytest.approx(3.0, rel=0.01)
    assert spec.rescaled("rms").amplitude.max() == pytest.approx(3.0 / np.sqrt(2), rel=0.01)


@pytest.mark.parametrize("f0", [25.0, 117.0, 480.0])
def test_integrating_a_sine_divides_by_omega(f0):
    # Source: calculus - integral of A sin(wt) has amplitude A/w; twice, A/w^2.
    fs, n = 4096.0, 4096 * 4
    x = tone(f0, fs, n, amplitude=9.80665)
    v = integrate(x, fs, f_low_hz=5.0)
    d = integrate(x, fs, f_low_hz=5.0, times=2)
    w = 2 * np.pi * f0
    assert np.max(np.abs(v)) == pytest.approx(9.80665 / w, rel=1e-3)
    assert np.max(np.abs(d)) == pytest.approx(9.80665 / w ** 2, rel=1e-3)
    # velocity lags acceleration by 90 degrees: -cos for sin
    assert np.allclose(v, -9.80665 / w * np.cos(w * np.arange(n) / fs), atol=1e-3 * 9.80665 / w)


def test_integration_cuts_below_the_low_frequency():
    fs, n = 1024.0, 1024 * 8
    v = integrate(tone(1.0, fs, n), fs, f_low_hz=10.0)
    assert np.max(np.abs(v)) < 1e-9


def test_band_rms_of_velocity_from_acceleration():
    # Source: derived - 1 g peak at 100 Hz is 9.80665/(2 pi 100)/sqrt(2) m/s RMS = 11.04 mm/s.
    fs, n = 8192.0, 8192 * 2
    x = tone(100.0, fs, n, amplitude=STANDARD_GRAVITY_M_S2)
    v = band_rms(x, fs, 10.0, 1000.0, integrations=1)
    assert v * 1e3 == pytest.approx(STANDARD_GRAVITY_M_S2 / (2 * np.pi * 100) / np.sqrt(2) * 1e3, rel=2e-3)
    assert v * 1e3 == pytest.approx(11.04, abs=0.01)


def test_overall_velocity_uses_the_iso_band():
    # Source: ISO 20816-3:2022 measurement band, 10-1000 Hz; 2-1000 Hz at or below 600 r/min
    # (check-values.md [recalled, high]). A 5 Hz tone counts only on a slow machine.
    fs, n = 4096.0, 4096 * 16
    x = tone(5.0, fs, n, amplitude=0.1)
    fast = overall_levels(x, fs, "acceleration", speed_rpm=1480)
    slow = overall_levels(x, fs, "acceleration", speed_rpm=300)
    assert fast.velocity_band_hz == (10.0, 1000.0) and slow.velocity_band_hz == (2.0, 1000.0)
    expected = 0.1 / (2 * np.pi * 5) / np.sqrt(2) * 1e3
    assert slow.velocity_rms_mm_s == pytest.approx(expected, rel=0.01)
    assert fast.velocity_rms_mm_s < 0.02 * expected


def test_overall_levels_of_a_velocity_channel():
    fs, n = 4096.0, 4096 * 4
    lv = overall_levels(tone(50.0, fs, n, amplitude=4e-3), fs, "velocity")
    assert lv.velocity_rms_mm_s == pytest.approx(4 / np.sqrt(2), rel=2e-3)
    assert lv.acceleration_rms_g is None


def test_low_fmax_is_flagged_as_truncated_band():
    lv = overall_levels(tone(50.0, 1000.0, 4000), 1000.0, "acceleration")
    assert lv.band_truncated and lv.velocity_band_hz == (10.0, 500.0)


# Source: check-values.md [derived]: sine CF sqrt(2), kurtosis 1.5; square 1 and 1;
# triangle sqrt(3) and 1.8.
@pytest.mark.parametrize("shape, crest, kurt", [
    ("sine", np.sqrt(2), 1.5),
    ("square", 1.0, 1.0),
    ("triangle", np.sqrt(3), 1.8),
])
def test_waveform_statistics_of_known_shapes(shape, crest, kurt):
    n, cycles = 100000, 50
    phase = (np.arange(n) * cycles / n) % 1.0
    x = {"sine": np.sin(2 * np.pi * phase),
         "square": np.where(phase < 0.5, 1.0, -1.0),
         "triangle": 4 * np.abs(phase - 0.5) - 1}[shape]
    st_ = waveform_statistics(x)
    assert st_.crest_factor == pytest.approx(crest, rel=1e-3)
    assert st_.kurtosis == pytest.approx(kurt, rel=1e-3)


def test_gaussian_kurtosis_is_three(rng):
    # Source: check-values.md [derived]: Gaussian kurtosis 3 (crest factor not fixed: not tested).
    st_ = waveform_statistics(rng.standard_normal(1_000_000))
    assert st_.kurtosis == pytest.approx(3.0, abs=0.02)
    assert abs(st_.skewness) < 0.01


@settings(max_examples=40, deadline=None)
@given(x=arrays(np.float64, 512, elements=st.floats(-1e3, 1e3)), k=st.floats(-100, 100).filter(lambda v: abs(v) > 1e-3))
def test_scaling_a_signal_scales_every_amplitude(x, k):
    a = amplitude_spectrum(x, 1000.0).amplitude
    b = amplitude_spectrum(k * x, 1000.0).amplitude
    assert np.allclose(b, abs(k) * a, rtol=1e-9, atol=1e-9 * (1 + abs(k) * a.max()))


@settings(max_examples=30, deadline=None)
@given(x=arrays(np.float64, 256, elements=st.floats(-10, 10)), shift=st.integers(0, 255))
def test_circular_time_shift_keeps_the_magnitude_spectrum(x, shift):
    a = amplitude_spectrum(x, 1.0, "rectangular").amplitude
    b = amplitude_spectrum(np.roll(x, shift), 1.0, "rectangular").amplitude
    assert np.allclose(a, b, atol=1e-9 * (1 + a.max()))


def test_find_peaks_reports_tones_above_the_floor(rng):
    fs, n = 2000.0, 20000
    x = tone(73.3, fs, n, 1.0) + tone(211.7, fs, n, 0.3) + 0.01 * rng.standard_normal(n)
    peaks = find_peaks(amplitude_spectrum(x, fs), min_snr=10)
    assert [round(p.freq_hz, 1) for p in peaks[:2]] == [73.3, 211.7]
    assert peaks[0].amplitude == pytest.approx(1.0, rel=2e-3)
    assert peaks[1].amplitude == pytest.approx(0.3, rel=5e-3)
    assert len(peaks) == 2


def test_peak_near_ignores_skirts():
    fs, n = 1000.0, 10000
    spec = amplitude_spectrum(tone(100.03, fs, n), fs)
    assert peak_near(spec, 100.3, 0.5).freq_hz == pytest.approx(100.03, abs=1e-3)
    # lines 100.2 to 100.5 hold only the falling skirt of the 100.03 Hz tone
    assert peak_near(spec, 100.35, 0.15) is None


@pytest.mark.parametrize("true_hz, nominal_hz", [(29.30, 29.95), (24.61, 24.77), (49.1, 49.6)])
def test_running_speed_is_found_from_harmonics(rng, true_hz, nominal_hz):
    # Source: common practice - slip moves an induction motor's 1X below nominal; harmonics
    # pin it. Speed resolution from the 5th harmonic is better than a fifth of a line.
    fs, n = 5120.0, 5120 * 4
    x = sum(tone(k * true_hz, fs, n, amplitude=1.0 / k, phase=k) for k in range(1, 6))
    x = x + tone(100.0, fs, n, 0.5) + 0.05 * rng.standard_normal(n)
    est = refine_running_speed(amplitude_spectrum(x, fs), nominal_hz)
    assert est.refined and est.harmonics_found[:3] == (1, 2, 3)
    assert est.speed_hz == pytest.approx(true_hz, abs=0.01)


def test_running_speed_keeps_nominal_in_pure_noise(rng):
    fs, n = 5120.0, 5120 * 4
    est = refine_running_speed(amplitude_spectrum(rng.standard_normal(n), fs), 25.0)
    assert est.speed_hz == 25.0 or len(est.harmonics_found) <= 1


def test_welch_matches_scipy_reference(rng):
    # Source: scipy.signal.welch as reference: our amplitude is sqrt(2 * power spectrum).
    x = rng.standard_normal(8192)
    ours = averaged_spectrum(x, 1000.0, 1024).amplitude
    _, p = signal.welch(x, 1000.0, window="hann", nperseg=1024, scaling="spectrum")
    assert np.allclose(ours, np.sqrt(2 * p))


@pytest.mark.parametrize("wide_floor", [False, True])
def test_a_spectrum_of_no_amplitude_has_no_line(wide_floor):
    """A constant signal's spectrum is zero everywhere: no line is found there, whatever its floor
    (a zero floor once made every zero 'line' stand infinitely high, and an envelope depth divide by 0)."""
    from engine.analysis.peaks import peaks_near
    from engine.evidence.matching import clear_lines, find_lines

    spec = amplitude_spectrum(np.full(8192, 0.25), 8192.0)
    assert not np.any(spec.amplitude[1:])
    assert not peaks_near(spec, [50.0, 120.0, 1000.0], 2.0).found.any()
    assert not find_lines(spec, [50.0, 120.0, 1000.0], 0.02, wide_floor=wide_floor).found.any()
    assert len(clear_lines(spec)[0]) == 0
