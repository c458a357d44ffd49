"""Calibrated amplitude spectra, averaging, integration and band RMS.

Amplitudes are scaled so that a sine of amplitude A reads A (``peak``),
A/sqrt(2) (``rms``) or 2A (``peak-to-peak``) at its line, whatever the
window: the coherent gain is divided out (Heinzel, Ruediger & Schilling
2002). Averaged spectra use Welch's method (``scipy.signal.welch``, Welch
1967) and average power, so the scaling holds for stationary tones.

A channel is transformed once: ``Transform`` keeps the plain one-sided FFT
of the record, from which the Hann spectrum, the band RMS, the integration
to velocity and the resampling to revolutions all follow without another
full-length FFT.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np

from ..readings.band_rms import band_rms_of_fft, hann_from_rectangular
from . import _fft as sfft
from .windows import enbw_bins, window, window_name, window_sum

SCALINGS = {"peak": 1.0, "rms": 1.0 / np.sqrt(2.0), "peak-to-peak": 2.0}
FLOOR_CHUNK = 65536


def running_median(a: np.ndarray, lines: np.ndarray, size: int) -> np.ndarray:
    """Median of the ``size`` values centred on each of ``lines`` (edges repeat the end value).

    As ``scipy.ndimage.median_filter(a, size, mode="nearest")`` gives at those
    lines (odd ``size``); the tests hold it against scipy.

    Parameters
    ----------
    a : numpy.ndarray
        Values (a spectrum's amplitudes, any unit).
    lines : array_like of int
        Indices at which the median is wanted.
    size : int
        Odd window length in lines.

    Returns
    -------
    numpy.ndarray
        The running median at ``lines``, in the unit of ``a``.

    References
    ----------
    Tukey (1977), "Exploratory Data Analysis" (running medians); the local
    noise floor of a spectrum as a running median is common practice.

    Examples
    --------
    >>> running_median(np.array([1.0, 9.0, 2.0, 3.0, 4.0]), [0, 2, 4], 3).tolist()
    [1.0, 3.0, 4.0]
    """
    half = size // 2
    lines = np.asarray(lines, dtype=int)
    out = np.empty(len(lines))
    offsets = np.arange(-half, half + 1)
    for start in range(0, len(lines), FLOOR_CHUNK // size + 1):
        part = lines[start:start + FLOOR_CHUNK // size + 1]
        windows = a[np.clip(part[:, None] + offsets, 0, len(a) - 1)]
        out[start:start + len(part)] = np.partition(windows, half, axis=1)[:, half]
    return out


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

    FLOOR_LINES = 51

    @property
    def fmax_hz(self) -> float:
        """Frequency of the last line, Hz."""
        return float(self.freq_hz[-1])

    def floor_at(self, lines) -> np.ndarray:
        """Running median over 51 lines at ``lines``: the local noise floor under each."""
        return running_median(self.amplitude, lines, self.FLOOR_LINES)

    @cached_property
    def floor(self) -> np.ndarray:
        """The local noise floor under every line (computed once, when first asked for)."""
        return self.floor_at(np.arange(len(self.amplitude)))

    def rescaled(self, scaling: str) -> Spectrum:
        """The same spectrum in another ``scaling`` (peak, rms or peak-to-peak)."""
        factor = _scale(scaling) / _scale(self.scaling)
        return Spectrum(self.freq_hz, self.amplitude * factor, scaling, self.window,
                        self.resolution_hz, self.enbw_hz, self.averages)

    def band(self, f_lo_hz: float, f_hi_hz: float) -> np.ndarray:
        """Boolean mask of the lines in [f_lo_hz, f_hi_hz]."""
        return (self.freq_hz >= f_lo_hz) & (self.freq_hz <= f_hi_hz)

    def below(self, f_hi_hz: float) -> Spectrum:
        """The same spectrum cut at ``f_hi_hz``.

        A cut that keeps less than half of the lines owns its arrays, so that
        a short spectrum kept in the result does not hold a long one in memory.
        """
        keep = int(np.searchsorted(self.freq_hz, f_hi_hz, side="right"))
        freq, amplitude = self.freq_hz[:keep], self.amplitude[:keep]
        if 2 * keep < len(self.freq_hz):
            freq, amplitude = freq.copy(), amplitude.copy()
        return Spectrum(freq, amplitude, self.scaling, self.window, self.resolution_hz, self.enbw_hz, self.averages)


def _scale(scaling: str) -> float:
    try:
        return SCALINGS[scaling]
    except KeyError:
        raise ValueError(f"unknown scaling {scaling!r}; expected one of {', '.join(SCALINGS)}") from None


@dataclass(frozen=True)
class Transform:
    """The plain one-sided FFT of a record with its mean removed, and what follows from it."""

    rect: np.ndarray      # rfft(x - mean(x)), complex
    n: int
    fs_hz: float

    @classmethod
    def of(cls, x, fs: float) -> Transform:
        """The transform of record ``x`` sampled at ``fs`` Hz, its mean removed first."""
        x = np.asarray(x, dtype=float)
        return cls(sfft.rfft(x - x.mean()), len(x), float(fs))

    @property
    def freq_hz(self) -> np.ndarray:
        """Frequency of each line, Hz (fs / n apart)."""
        return np.arange(len(self.rect)) * (self.fs_hz / self.n)

    @cached_property
    def hann(self) -> np.ndarray:
        """One-sided FFT of the Hann-windowed record (three-tap sum, no second FFT)."""
        return hann_from_rectangular(self.rect, self.n)

    def amplitude(self, scaling: str = "peak") -> Spectrum:
        """Hann amplitude spectrum of the record."""
        amp = np.abs(self.hann) * (2.0 / window_sum("hann", self.n))
        amp[0] /= 2.0
        if self.n % 2 == 0:
            amp[-1] /= 2.0
        return Spectrum(self.freq_hz, amp * _scale(scaling), scaling, "hann", self.fs_hz / self.n,
                        enbw_bins("hann", self.n) * self.fs_hz / self.n)

    def band_rms(self, f_lo_hz: float, f_hi_hz: float, integrations: int = 0) -> float:
        """RMS in [f_lo_hz, f_hi_hz] from the Hann periodogram, optionally integrated.

        The same estimate as ``scipy.signal.periodogram(x, fs, window="hann",
        scaling="density")`` summed over the band: |Y|^2 / (fs S2), doubled
        except at DC and Nyquist, with S2 = 3N/8 for the periodic Hann window
        (``engine.readings.band_rms``, which the quality gates use too).
        """
        return band_rms_of_fft(self.rect, self.n, self.fs_hz, f_lo_hz, f_hi_hz, integrations, hann=self.hann)


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

    Returns
    -------
    Spectrum
        Lines 0 to fs/2 in Hz; amplitudes in the unit of ``x`` with the window's
        coherent gain divided out.

    References
    ----------
    Heinzel, Ruediger & Schilling (2002), sections 9-10 (amplitude scaling by S1).

    Examples
    --------
    >>> fs = 1024.0; t = np.arange(4096) / fs
    >>> s = amplitude_spectrum(3.0 * np.sin(2 * np.pi * 100 * t), fs)
    >>> round(float(s.amplitude.max()), 6)
    3.0
    """
    if window_name(window_kind) == "hann":
        return Transform.of(x, fs).amplitude(scaling)
    x = np.asarray(x, dtype=float)
    n = len(x)
    w = window(window_kind, n)
    spec = sfft.rfft((x - x.mean()) * w)
    amp = 2.0 * np.abs(spec) / w.sum()
    amp[0] /= 2.0
    if n % 2 == 0:
        amp[-1] /= 2.0
    return Spectrum(np.fft.rfftfreq(n, 1.0 / fs), amp * _scale(scaling), scaling,
                    window_name(window_kind), fs / n, enbw_bins(window_kind, n) * fs / n)


def averaged_spectrum(x, fs: float, nperseg: int, overlap: float = 0.5,
                      window_kind: str = "hann", scaling: str = "peak") -> Spectrum:
    """Welch-averaged amplitude spectrum over segments of ``nperseg`` samples.

    Parameters
    ----------
    x : array_like
        Samples, any unit.
    fs : float
        Sample rate in Hz.
    nperseg : int
        Segment length in samples.
    overlap : float
        Fraction of a segment shared with the next (0.5).
    window_kind : str
        Window name (hann).
    scaling : str
        peak, rms or peak-to-peak.

    Returns
    -------
    Spectrum
        Amplitudes in the unit of ``x`` from the averaged power, and the number of averages.

    References
    ----------
    Welch (1967), "The use of fast Fourier transform for the estimation of power
    spectra", IEEE Trans. Audio Electroacoust. 15(2); ``scipy.signal.welch``.

    Examples
    --------
    >>> fs = 1024.0; t = np.arange(8192) / fs
    >>> s = averaged_spectrum(2.0 * np.sin(2 * np.pi * 128 * t), fs, 1024)
    >>> round(float(s.amplitude.max()), 6), s.averages
    (2.0, 15)
    """
    from scipy import signal

    x = np.asarray(x, dtype=float)
    nperseg = min(int(nperseg), len(x))
    noverlap = int(round(overlap * nperseg))
    f, power = signal.welch(x, fs, window=window_name(window_kind), nperseg=nperseg,
                            noverlap=noverlap, scaling="spectrum", detrend="constant")
    rms = np.sqrt(power)
    step = nperseg - noverlap
    averages = 1 + (len(x) - nperseg) // step
    return Spectrum(f, rms * np.sqrt(2.0) * _scale(scaling), scaling, window_name(window_kind),
                    fs / nperseg, enbw_bins(window_kind, nperseg) * fs / nperseg, averages)


def integration_gain(f: np.ndarray, f_low_hz: float, times: int) -> np.ndarray:
    """Per-line gain that integrates ``times`` times (differentiates if negative), cut below ``f_low_hz``.

    Each line is divided by (j 2 pi f)^times; lines below ``f_low_hz`` are
    removed with a half-cosine taper over the octave below it, because
    integration would otherwise amplify sensor drift without bound.

    Parameters
    ----------
    f : numpy.ndarray
        Line frequencies in Hz.
    f_low_hz : float
        Lowest frequency passed whole, Hz.
    times : int
        Integrations (1: acceleration to velocity), negative to differentiate.

    Returns
    -------
    numpy.ndarray
        Complex gain per line, in s^times.

    References
    ----------
    Brandt (2011), "Noise and Vibration Analysis", section 9.3 (integration in
    the frequency domain, dividing by j omega).

    Examples
    --------
    >>> g = integration_gain(np.array([0.0, 1.0, 10.0]), 2.0, 1)
    >>> [complex(round(v.real, 6), round(v.imag, 6)) for v in g]
    [0j, 0j, -0.015915j]
    """
    gain = np.zeros_like(f)
    above = f >= f_low_hz
    taper = (f >= f_low_hz / 2) & ~above
    gain[above] = 1.0
    gain[taper] = 0.5 - 0.5 * np.cos(np.pi * (f[taper] / (f_low_hz / 2) - 1.0))
    nonzero = f > 0
    h = np.zeros(len(f), dtype=complex)
    h[nonzero] = gain[nonzero] / (2j * np.pi * f[nonzero]) ** times
    return h


def integrate(x, fs: float, f_low_hz: float, times: int = 1) -> np.ndarray:
    """Integrate a signal ``times`` times in the frequency domain, cutting below ``f_low_hz``.

    Acceleration in m/s^2 becomes velocity in m/s (once) or displacement in m
    (twice); a negative ``times`` differentiates instead (see
    ``integration_gain``). The record is treated as periodic, as the FFT does.

    Parameters
    ----------
    x : array_like
        Samples (m/s^2 to give m/s).
    fs : float
        Sample rate in Hz.
    f_low_hz : float
        Lowest frequency kept whole, Hz.
    times : int
        Integrations, negative to differentiate.

    Returns
    -------
    numpy.ndarray
        The integrated record, same length.

    References
    ----------
    Brandt (2011), "Noise and Vibration Analysis", section 9.3.

    Examples
    --------
    >>> fs = 1000.0; t = np.arange(1000) / fs
    >>> v = integrate(2 * np.pi * 10 * np.cos(2 * np.pi * 10 * t), fs, 2.0)
    >>> round(float(np.max(np.abs(v - np.sin(2 * np.pi * 10 * t)))), 9)   # the integral of the cosine
    0.0
    """
    x = np.asarray(x, dtype=float)
    n = len(x)
    spec = sfft.rfft(x - x.mean())
    f = np.fft.rfftfreq(n, 1.0 / fs)
    return sfft.irfft(spec * integration_gain(f, f_low_hz, times), n)


def band_rms(x, fs: float, f_lo_hz: float, f_hi_hz: float, integrations: int = 0) -> float:
    """RMS of ``x`` in [f_lo_hz, f_hi_hz], optionally after integrating it.

    Computed from the Hann-windowed periodogram, so the window's energy is
    corrected (Parseval); with ``integrations=1`` acceleration in m/s^2 gives
    velocity RMS in m/s. ``scipy.signal.periodogram`` is the reference in the tests.

    Parameters
    ----------
    x : array_like
        Samples, any unit.
    fs : float
        Sample rate in Hz.
    f_lo_hz, f_hi_hz : float
        Band edges in Hz (both included).
    integrations : int
        Integrations before the RMS (0).

    Returns
    -------
    float
        RMS in the unit of ``x`` (times s^integrations).

    References
    ----------
    Heinzel, Ruediger & Schilling (2002), section 9 (power spectral density,
    S2 = 3N/8 for the periodic Hann window).

    Examples
    --------
    >>> fs = 1024.0; t = np.arange(4096) / fs
    >>> round(band_rms(np.sin(2 * np.pi * 100 * t) + np.sin(2 * np.pi * 300 * t), fs, 50.0, 150.0), 6)
    0.707107
    """
    return Transform.of(x, fs).band_rms(f_lo_hz, f_hi_hz, integrations)
