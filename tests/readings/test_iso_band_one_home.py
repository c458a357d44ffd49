"""The ISO 20816-3 band velocity has one home: the quality gate and the analysis read the same function.

``engine/readings/band_rms.py`` holds the band and the estimate; the plausibility
gate (stage 1) and the analysis's overall level (stage 2) both call it, so the
level a gate calls implausible is the level the report would show.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import signal

from engine.analysis.levels import iso_band_hz, overall_levels
from engine.readings.band_rms import ISO_BAND_HZ, band_rms_of_fft, hann_from_rectangular
from engine.readings.model import Channel
from engine.readings.quality import LEVEL_BAND_HZ, check_channel


def _periodogram_band(x, fs, band, integrations):
    """Reference: scipy.signal.periodogram (Hann, density) summed over the band, each line
    divided by (2 pi f)^(2 integrations) (integration in the frequency domain)."""
    f, psd = signal.periodogram(x, fs, window="hann", scaling="density", detrend="constant")
    keep = (f >= band[0]) & (f <= band[1]) & (f > 0)
    return float(np.sqrt(np.sum(psd[keep] * (2 * np.pi * f[keep]) ** (-2.0 * integrations)) * (f[1] - f[0])))


@pytest.mark.parametrize("n", [4096, 4097])
@pytest.mark.parametrize("integrations", [0, 1, -1])
def test_band_rms_of_fft_matches_scipy_periodogram(n, integrations):
    rng = np.random.default_rng(21)
    fs = 5120.0
    x = rng.standard_normal(n)
    rect = np.fft.rfft(x - x.mean())
    got = band_rms_of_fft(rect, n, fs, *ISO_BAND_HZ, integrations=integrations)
    # scipy as reference for the Hann periodogram
    assert got == pytest.approx(_periodogram_band(x, fs, ISO_BAND_HZ, integrations), rel=1e-10)
    # with the caller's own Hann spectrum, the same value
    hann = hann_from_rectangular(rect.copy(), n)
    assert band_rms_of_fft(rect, n, fs, *ISO_BAND_HZ, integrations, hann=hann) == pytest.approx(got, rel=1e-12)


def test_band_reaching_nyquist_counts_the_nyquist_line_once():
    rng = np.random.default_rng(5)
    fs, n = 2000.0, 2048
    x = rng.standard_normal(n)
    rect = np.fft.rfft(x - x.mean())
    got = band_rms_of_fft(rect, n, fs, 10.0, fs / 2)
    assert got == pytest.approx(_periodogram_band(x, fs, (10.0, fs / 2), 0), rel=1e-10)   # scipy as reference


def test_the_gate_and_the_analysis_give_the_same_level():
    """A channel a thousand times too loud (a gain error): the gate's implausible level is the
    analysis's ISO-band velocity of the same samples, to rounding."""
    rng = np.random.default_rng(7)
    fs, n = 25600.0, 65536
    t = np.arange(n) / fs
    x = 1000.0 * (3.0 * np.sin(2 * np.pi * 49.5 * t) + 0.5 * rng.standard_normal(n))   # m/s^2
    ch = Channel("A", x, "acceleration", "m/s^2")
    issues = [q for q in check_channel(ch, fs) if q.kind == "implausible_level"]
    assert len(issues) == 1
    assert LEVEL_BAND_HZ == ISO_BAND_HZ == iso_band_hz(1485.0)
    analysed = overall_levels(x, fs, "acceleration", speed_rpm=1485.0).velocity_rms_mm_s
    assert issues[0].value == pytest.approx(analysed, rel=1e-9)
    # a 3 m/s^2 sine at 49.5 Hz is 3 / (2 pi 49.5) / sqrt 2 m/s RMS (handbook formula v = a / omega),
    # times the gain; the noise, integrated, adds well under 1 %
    sine_mm_s = 1000.0 * 3.0 / (2 * np.pi * 49.5) / np.sqrt(2) * 1e3
    assert issues[0].value == pytest.approx(sine_mm_s, rel=0.01)


def test_quality_runs_no_band_formula_of_its_own():
    """The gate names the shared function; it neither integrates nor weights lines itself."""
    from pathlib import Path

    import engine.readings.quality as quality

    source = Path(quality.__file__).read_text(encoding="utf-8")
    assert "band_rms_of_fft(" in source
    for own in ("omega", "2 * np.pi", "Parseval"):
        assert own not in source, own
