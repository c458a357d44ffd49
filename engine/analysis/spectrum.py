"""Calibrated amplitude spectra, averaging and integration.

Amplitudes are scaled so that a sine of amplitude A reads A (``peak``),
A/sqrt(2) (``rms``) or 2A (``peak-to-peak``) at its line, whatever the
window: the coherent gain is divided out (Heinzel, Ruediger & Schilling
2002). Averaged spectra use Welch's method (``scipy.signal.welch``, Welch
1967) and average power, so the scaling holds for stationary tones.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np
from scipy import ndimage, signal

from .windows import window, window_factors, window_name

SCALINGS = {"peak": 1.0, "rms": 1.0 / np.sqrt(2.0), "peak-to-peak": 2.0}


@dataclass(frozen=True)
class Spectrum:
    """One-sided amplitude spectrum; ``amplitude`` is in the input's unit."""

    freq_hz: np.ndarray
    amplitude: np.ndarray
    scaling: str          # peak, rms or peak-to-peak
    window: str
    resolution_hz: float  # line spacing
    enbw_hz: float        # equivalent noise bandwidth of one line
    averages: int = 1

    @property
    def fmax_hz(self) -> float:
        return float(self.freq_hz[-1])

    FLOOR_LINES = 51

    @cached_property
    def floor(self) -> np.ndarray:
        """Running median over 51 lines: the local noise floor under every line."""
        return ndimage.median_filter(self.amplitude, size=self.FLOOR_LINES, mode="nearest")

    def rescaled(self, scaling: str) -> "Spectrum":
        factor = _scale(scaling) / _scale(self.scaling)
        return Spectrum(self.freq_hz, self.amplitude * factor, scaling, self.window,
                        self.resolution_hz, self.enbw_hz, self.averages)

    def band(self, f_lo_hz: float, f_hi_hz: float) -> np.ndarray:
        """Boolean mask of the lines in [f_lo_hz, f_hi_hz]."""
        return (self.freq_hz >= f_lo_hz) & (self.freq_hz <= f_hi_hz)


def _scale(scaling: str) -> float:
    try:
        return SCALINGS[scaling]
    except KeyError:
        raise ValueError(f"unknown scaling {scaling!r}; expected one of {', '.join(SCALINGS)}") from None


def amplitude_spectrum(x, fs: float, window_kind: str = "hann", scaling: str = "peak") -> Spectrum:
    """Amplitude spectrum of the whole record (one FFT, mean removed).

    Parameters
    ----------
    x : array_like
        Samples, any unit.
    fs : float
        Sample rate in Hz.
    window_kind : str
        hann (default), hamming, flattop, rectangular, blackmanharris.
    scaling : str
        peak, rms or peak-to-peak.

    Examples
    --------
    >>> fs = 1024.0; t = np.arange(4096) / fs
    >>> s = amplitude_spectrum(3.0 * np.sin(2 * np.pi * 100 * t), fs)
    >>> round(float(s.amplitude.max()), 6)
    3.0
    """
    x = np.asarray(x, dtype=float)
    n = len(x)
    w = window(window_kind, n)
    spec = np.fft.rfft((x - x.mean()) * w)
    amp = 2.0 * np.abs(spec) / w.sum()
    amp[0] /= 2.0
    if n % 2 == 0:
        amp[-1] /= 2.0
    factors = window_factors(window_kind, n)
    return Spectrum(np.fft.rfftfreq(n, 1.0 / fs), amp * _scale(scaling), scaling,
                    window_name(window_kind), fs / n, factors.enbw_bins * fs / n)


def averaged_spectrum(x, fs: float, nperseg: int, overlap: float = 0.5,
                      window_kind: str = "hann", scaling: str = "peak") -> Spectrum:
    """Welch-averaged amplitude spectrum over segments of ``nperseg`` samples."""
    x = np.asarray(x, dtype=float)
    nperseg = min(int(nperseg), len(x))
    noverlap = int(round(overlap * nperseg))
    f, power = signal.welch(x, fs, window=window_name(window_kind), nperseg=nperseg,
                            noverlap=noverlap, scaling="spectrum", detrend="constant")
    rms = np.sqrt(power)
    step = nperseg - noverlap
    averages = 1 + (len(x) - nperseg) // step
    factors = window_factors(window_kind, nperseg)
    return Spectrum(f, rms * np.sqrt(2.0) * _scale(scaling), scaling, window_name(window_kind),
                    fs / nperseg, factors.enbw_bins * fs / nperseg, averages)


def integrate(x, fs: float, f_low_hz: float, times: int = 1) -> np.ndarray:
    """Integrate a signal ``times`` times in the frequency domain, cutting below ``f_low_hz``.

    Acceleration in m/s^2 becomes velocity in m/s (once) or displacement in m
    (twice); a negative ``times`` differentiates instead. Each line is divided by (j 2 pi f); lines below ``f_low_hz`` are
    removed with a half-cosine taper over the octave below it, because
    integration would otherwise amplify sensor drift without bound.
    The record is treated as periodic, as the FFT does.
    """
    x = np.asarray(x, dtype=float)
    n = len(x)
    spec = np.fft.rfft(x - x.mean())
    f = np.fft.rfftfreq(n, 1.0 / fs)
    gain = np.zeros_like(f)
    above = f >= f_low_hz
    taper = (f >= f_low_hz / 2) & ~above
    gain[above] = 1.0
    gain[taper] = 0.5 - 0.5 * np.cos(np.pi * (f[taper] / (f_low_hz / 2) - 1.0))
    nonzero = f > 0
    h = np.zeros(len(f), dtype=complex)
    h[nonzero] = gain[nonzero] / (2j * np.pi * f[nonzero]) ** times
    return np.fft.irfft(spec * h, n)


def band_rms(x, fs: float, f_lo_hz: float, f_hi_hz: float, integrations: int = 0) -> float:
    """RMS of ``x`` in [f_lo_hz, f_hi_hz], optionally after integrating it.

    Computed from the Hann-windowed periodogram (``scipy.signal.periodogram``,
    density scaling), so the window's energy is corrected (Parseval); with
    ``integrations=1`` acceleration in m/s^2 gives velocity RMS in m/s.
    """
    f, psd = signal.periodogram(np.asarray(x, dtype=float), fs, window="hann",
                                scaling="density", detrend="constant")
    band = (f >= f_lo_hz) & (f <= f_hi_hz) & (f > 0)
    weight = (2 * np.pi * f[band]) ** (-2 * integrations)
    return float(np.sqrt(np.sum(psd[band] * weight) * (f[1] - f[0])))
