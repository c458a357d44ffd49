"""Spectral peaks with sub-bin frequency and amplitude.

A tone between two lines reads low (scalloping) and at the wrong frequency.
For an isolated tone the ratio of the largest line to its larger neighbour
fixes the offset, and the window's own transform (its kernel) at that
offset gives the amplitude lost. This is exact for a pure tone in any of the
windows of ``windows.py``; for Hann it reduces to the closed form of
Grandke (1983), "Interpolation algorithms for discrete Fourier transforms of
weighted signals", IEEE Trans. Instrum. Meas. 32(2).

Local maxima follow ``scipy.signal.find_peaks`` exactly (a flat top counts
once, at its middle; ``distance`` keeps the highest peaks first); they are
computed with numpy here because importing scipy.signal costs about half a
second per command, and the tests hold the two against each other.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cache

import numpy as np

from .spectrum import Spectrum
from .windows import kernel


@dataclass(frozen=True)
class Peak:
    """One spectral peak: interpolated frequency (Hz) and amplitude, its largest line and its SNR."""

    freq_hz: float
    amplitude: float   # in the spectrum's unit and scaling
    line: int          # index of the largest line
    snr: float         # amplitude over the local noise floor (median of nearby lines)


def local_maxima(a: np.ndarray) -> np.ndarray:
    """Indices of the local maxima of ``a`` as ``scipy.signal.find_peaks`` finds them.

    A sample higher than both neighbours is a peak; a flat top (equal
    samples, lower on both sides) is one peak at its middle (rounded down);
    the first and last samples are never peaks.

    Parameters
    ----------
    a : numpy.ndarray
        Values, any unit.

    Returns
    -------
    numpy.ndarray
        Indices of the maxima, ascending.

    References
    ----------
    ``scipy.signal.find_peaks`` (the tests hold the two against each other).

    Examples
    --------
    >>> local_maxima(np.array([0, 2, 1, 3, 3, 3, 0, 5])).tolist()
    [1, 4]
    """
    a = np.asarray(a)
    if len(a) < 3:
        return np.zeros(0, dtype=int)
    d = np.diff(a)
    rising = d[:-1] > 0
    falling = d[1:] < 0
    strict = np.flatnonzero(rising & falling) + 1
    flat_start = np.flatnonzero(rising & (d[1:] == 0)) + 1
    if len(flat_start) == 0:
        return strict
    plateaus = []
    for i in flat_start:
        j = i + 1
        while j < len(a) - 1 and a[j] == a[i]:
            j += 1
        if a[j] < a[i]:
            plateaus.append((i + j - 1) // 2)
    return np.sort(np.concatenate((strict, np.asarray(plateaus, dtype=int))))


def select_by_distance(peaks: np.ndarray, heights: np.ndarray, distance: float) -> np.ndarray:
    """Keep the highest peaks first, dropping any closer than ``distance`` samples to a kept one.

    Parameters
    ----------
    peaks : numpy.ndarray
        Peak indices, ascending.
    heights : numpy.ndarray
        Their heights, any unit.
    distance : float
        Least spacing of kept peaks, in samples.

    Returns
    -------
    numpy.ndarray
        The peaks kept, ascending.

    References
    ----------
    ``scipy.signal.find_peaks`` with ``distance`` (the same rule).

    Examples
    --------
    >>> select_by_distance(np.array([2, 4, 10]), np.array([1.0, 3.0, 2.0]), 5).tolist()
    [4, 10]
    """
    if distance <= 1 or len(peaks) < 2:
        return peaks
    # each peak's neighbourhood, all at once; the walk from the highest then runs on plain ints and bytes
    below = np.searchsorted(peaks, peaks - distance, side="right").tolist()
    above = np.searchsorted(peaks, peaks + distance, side="left").tolist()
    keep = bytearray(b"\x01") * len(peaks)
    for i in np.argsort(heights, kind="stable")[::-1].tolist():
        if not keep[i]:
            continue
        lo, hi = below[i], above[i]
        keep[lo:i] = bytes(i - lo)
        keep[i + 1:hi] = bytes(max(0, hi - i - 1))
    return peaks[np.frombuffer(keep, dtype=bool)]


def peaks_above(a: np.ndarray, height: float, distance: float = 1) -> np.ndarray:
    """``scipy.signal.find_peaks(a, height=height, distance=distance)[0]``.

    Parameters
    ----------
    a : numpy.ndarray
        Values, any unit.
    height : float
        Least height of a peak, in the unit of ``a``.
    distance : float
        Least spacing in samples.

    Returns
    -------
    numpy.ndarray
        Indices of the peaks, ascending.

    References
    ----------
    ``scipy.signal.find_peaks`` (the reference in the tests).

    Examples
    --------
    >>> peaks_above(np.array([0, 2, 0, 5, 0, 1, 0]), 1.5).tolist()
    [1, 3]
    """
    peaks = local_maxima(a)
    peaks = peaks[a[peaks] >= height]
    return select_by_distance(peaks, a[peaks], distance)


@cache
def _ratio_table(window_kind: str):
    offsets, k = kernel(window_kind)
    half = offsets <= 0.5
    d = offsets[half]
    # k(1 - d) / k(d): neighbour over peak for a tone d bins right of the peak line
    neighbour = np.interp(1.0 - d, offsets, k)
    return d, neighbour / k[half], offsets, k


def interpolate_line(spec: Spectrum, line: int) -> tuple[float, float]:
    """True frequency (Hz) and amplitude of the tone whose largest line is ``line``.

    Parameters
    ----------
    spec : Spectrum
        A windowed amplitude spectrum.
    line : int
        Index of the tone's largest line.

    Returns
    -------
    tuple of float
        Frequency in Hz and amplitude in the spectrum's unit, corrected for scalloping.

    References
    ----------
    Grandke (1983), "Interpolation algorithms for discrete Fourier transforms of
    weighted signals", IEEE Trans. Instrum. Meas. 32(2).

    Examples
    --------
    >>> from engine.analysis.spectrum import amplitude_spectrum
    >>> fs = 1024.0; t = np.arange(4096) / fs                        # lines 0.25 Hz apart
    >>> spec = amplitude_spectrum(2.0 * np.sin(2 * np.pi * 100.1 * t) + 0.001 * np.sin(2 * np.pi * 7 * t), fs)
    >>> f, a = interpolate_line(spec, int(np.argmax(spec.amplitude)))
    >>> round(f, 2), round(a, 3)
    (100.1, 2.0)
    """
    a = spec.amplitude
    if line <= 0 or line >= len(a) - 1:
        return float(spec.freq_hz[line]), float(a[line])
    side = 1 if a[line + 1] >= a[line - 1] else -1
    ratio = a[line + side] / a[line] if a[line] > 0 else 0.0
    d, ratios, offsets, k = _ratio_table(spec.window)
    delta = float(np.interp(ratio, ratios, d)) if ratio > ratios[0] else 0.0
    amplitude = a[line] / float(np.interp(delta, offsets, k))
    return float(spec.freq_hz[line] + side * delta * spec.resolution_hz), float(amplitude)


def noise_floor(spec: Spectrum, line: int, half_width: int = 25) -> float:
    """Median amplitude of the lines around ``line``: a robust local noise floor.

    Parameters
    ----------
    spec : Spectrum
        An amplitude spectrum.
    line : int
        Index of the line.
    half_width : int
        Lines either side (25: the 51-line running median).

    Returns
    -------
    float
        The floor, in the spectrum's unit.

    References
    ----------
    Common practice (a running median as a spectrum's local floor); Tukey (1977).

    Examples
    --------
    >>> from engine.analysis.spectrum import amplitude_spectrum
    >>> fs = 1024.0; t = np.arange(4096) / fs                        # lines 0.25 Hz apart
    >>> spec = amplitude_spectrum(2.0 * np.sin(2 * np.pi * 100.1 * t) + 0.001 * np.sin(2 * np.pi * 7 * t), fs)
    >>> noise_floor(spec, 400) < 1e-3
    True
    """
    if 2 * half_width + 1 == Spectrum.FLOOR_LINES:
        return float(spec.floor_at([line])[0])
    lo, hi = max(0, line - half_width), min(len(spec.amplitude), line + half_width + 1)
    return float(np.median(spec.amplitude[lo:hi]))


HANN_MAX_GAIN = 1.0 / 0.84      # interpolation raises a Hann line by at most 1.42 dB (Heinzel et al. 2002)


def find_peaks(spec: Spectrum, f_lo_hz: float = 0.0, f_hi_hz: float | None = None,
               min_snr: float = 3.0, max_peaks: int | None = None,
               min_fraction: float | None = None) -> list[Peak]:
    """Local maxima standing ``min_snr`` above the local noise floor, largest first, interpolated.

    With ``min_fraction``, only peaks at least that fraction of the largest
    qualifying peak are returned; the noise floor is then worked out only
    for the lines that could qualify (largest first), not for every maximum.

    Parameters
    ----------
    spec : Spectrum
        An amplitude spectrum.
    f_lo_hz, f_hi_hz : float
        Frequency range searched, Hz (``f_hi_hz`` None: up to Fmax).
    min_snr : float
        Least amplitude over the local floor (dimensionless).
    max_peaks : int, optional
        Most peaks returned.
    min_fraction : float, optional
        Least fraction of the largest qualifying peak.

    Returns
    -------
    list of Peak
        Frequency in Hz, amplitude in the spectrum's unit, line and SNR.

    References
    ----------
    Grandke (1983) for the interpolation; the local floor is common practice.

    Examples
    --------
    >>> from engine.analysis.spectrum import amplitude_spectrum
    >>> fs = 1024.0; t = np.arange(4096) / fs                        # lines 0.25 Hz apart
    >>> spec = amplitude_spectrum(2.0 * np.sin(2 * np.pi * 100.1 * t) + 0.001 * np.sin(2 * np.pi * 7 * t), fs)
    >>> [(round(p.freq_hz, 1), round(p.amplitude, 3)) for p in find_peaks(spec, min_snr=10.0)]
    [(100.1, 2.0), (7.0, 0.001)]
    """
    f_hi_hz = spec.fmax_hz if f_hi_hz is None else f_hi_hz
    lines = local_maxima(spec.amplitude)
    lines = lines[(spec.freq_hz[lines] >= f_lo_hz) & (spec.freq_hz[lines] <= f_hi_hz)]
    if min_fraction is not None and len(lines):
        gain = HANN_MAX_GAIN if spec.window == "hann" else 2.0
        lines = lines[np.argsort(spec.amplitude[lines], kind="stable")[::-1]]
        biggest = None
        for start in range(0, len(lines), 64):
            chunk = lines[start:start + 64]
            if biggest is not None and spec.amplitude[chunk[0]] * gain < biggest.amplitude:
                break          # nothing further down can be interpolated above it
            for p in _qualifying(spec, chunk, min_snr):
                biggest = p if biggest is None or p.amplitude > biggest.amplitude else biggest
        if biggest is None:
            return []
        lines = lines[spec.amplitude[lines] * gain >= min_fraction * biggest.amplitude]
        out = [p for p in _qualifying(spec, lines, min_snr) if p.amplitude >= min_fraction * biggest.amplitude]
    else:
        out = _qualifying(spec, lines, min_snr)
    out.sort(key=lambda p: p.amplitude, reverse=True)
    return out[:max_peaks] if max_peaks else out


def _qualifying(spec: Spectrum, lines: np.ndarray, min_snr: float) -> list[Peak]:
    floors = spec.floor_at(lines)
    amps = spec.amplitude[lines]
    with np.errstate(divide="ignore", invalid="ignore"):
        snr = np.where(floors > 0, amps / np.where(floors > 0, floors, 1.0), np.inf)
    keep = snr >= min_snr
    freq, amp = interpolate_lines(spec, lines[keep])
    return [Peak(float(f), float(a), int(line), float(r)) for f, a, line, r in zip(freq, amp, lines[keep], snr[keep])]


@dataclass(frozen=True)
class Lines:
    """The peaks found near several target frequencies at once; ``found`` marks which exist."""

    found: np.ndarray       # bool
    freq_hz: np.ndarray     # interpolated frequency (meaningless where not found)
    amplitude: np.ndarray   # interpolated amplitude
    line: np.ndarray        # index of the largest line
    snr: np.ndarray         # amplitude over the local noise floor

    def __len__(self) -> int:
        return len(self.found)

    def peak(self, i: int) -> Peak | None:
        """The peak found near target ``i``, or None where none was."""
        if not self.found[i]:
            return None
        return Peak(float(self.freq_hz[i]), float(self.amplitude[i]), int(self.line[i]), float(self.snr[i]))

    def with_snr(self, snr: np.ndarray, found: np.ndarray) -> Lines:
        """The same lines with new signal-to-noise ratios ``snr`` and ``found`` mask (a floor measured elsewhere)."""
        return Lines(found, self.freq_hz, self.amplitude, self.line, snr)


def interpolate_lines(spec: Spectrum, lines: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """``interpolate_line`` for many lines at once.

    Parameters
    ----------
    spec : Spectrum
        A windowed amplitude spectrum.
    lines : numpy.ndarray
        Indices of the tones' largest lines.

    Returns
    -------
    tuple of numpy.ndarray
        Frequencies in Hz and amplitudes in the spectrum's unit.

    References
    ----------
    Grandke (1983), IEEE Trans. Instrum. Meas. 32(2).

    Examples
    --------
    >>> from engine.analysis.spectrum import amplitude_spectrum
    >>> fs = 1024.0; t = np.arange(4096) / fs                        # lines 0.25 Hz apart
    >>> spec = amplitude_spectrum(2.0 * np.sin(2 * np.pi * 100.1 * t) + 0.001 * np.sin(2 * np.pi * 7 * t), fs)
    >>> f, a = interpolate_lines(spec, np.array([28, 400]))
    >>> np.round(f, 2).tolist(), np.round(a, 4).tolist()
    ([7.0, 100.1], [0.001, 2.0])
    """
    a = spec.amplitude
    lines = np.asarray(lines, dtype=int)
    freq = spec.freq_hz[lines].astype(float)
    amp = a[lines].astype(float)
    inner = (lines > 0) & (lines < len(a) - 1)
    if not inner.any():
        return freq, amp
    ln = lines[inner]
    side = np.where(a[ln + 1] >= a[ln - 1], 1, -1)
    peak_amp = a[ln]
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(peak_amp > 0, a[ln + side] / np.where(peak_amp > 0, peak_amp, 1.0), 0.0)
    d, ratios, offsets, k = _ratio_table(spec.window)
    delta = np.where(ratio > ratios[0], np.interp(ratio, ratios, d), 0.0)
    amp[inner] = peak_amp / np.interp(delta, offsets, k)
    freq[inner] = spec.freq_hz[ln] + side * delta * spec.resolution_hz
    return freq, amp


def peaks_near(spec: Spectrum, freqs_hz, tolerance_hz) -> Lines:
    """``peak_near`` for many target frequencies at once (tolerances per target or one for all).

    Parameters
    ----------
    spec : Spectrum
        An amplitude spectrum.
    freqs_hz : array_like
        Target frequencies in Hz.
    tolerance_hz : float or array_like
        Half-width of each search, Hz (at least one line).

    Returns
    -------
    Lines
        Per target: found, interpolated frequency (Hz) and amplitude, line and SNR.

    References
    ----------
    Grandke (1983) for the interpolation.

    Examples
    --------
    >>> from engine.analysis.spectrum import amplitude_spectrum
    >>> fs = 1024.0; t = np.arange(4096) / fs                        # lines 0.25 Hz apart
    >>> spec = amplitude_spectrum(2.0 * np.sin(2 * np.pi * 100.1 * t) + 0.001 * np.sin(2 * np.pi * 7 * t), fs)
    >>> found = peaks_near(spec, [100.0, 50.0], 0.5)
    >>> found.found.tolist(), round(float(found.freq_hz[0]), 2)
    ([True, False], 100.1)
    """
    target = np.atleast_1d(np.asarray(freqs_hz, dtype=float))
    count = len(target)
    f, a = spec.freq_hz, spec.amplitude
    n_lines = len(a)
    half = np.maximum(np.broadcast_to(np.asarray(tolerance_hz, dtype=float), target.shape), spec.resolution_hz)
    lo = np.searchsorted(f, target - half, side="left")
    hi = np.minimum(np.searchsorted(f, target + half, side="left") + 1, n_lines)
    width = int(np.max(hi - lo, initial=0))
    empty = Lines(np.zeros(count, bool), np.zeros(count), np.zeros(count), np.zeros(count, int), np.zeros(count))
    if count == 0 or width <= 0:
        return empty
    idx = lo[:, None] + np.arange(width)[None, :]
    valid = idx < hi[:, None]
    idx = np.minimum(idx, n_lines - 1)
    valid &= np.abs(f[idx] - target[:, None]) <= half[:, None]
    amps = np.where(valid, a[idx], -np.inf)
    best = np.argmax(amps, axis=1)
    line = idx[np.arange(count), best]
    found = valid.any(axis=1)
    inner = (line > 0) & (line < n_lines - 1)
    left = a[np.maximum(line - 1, 0)]
    right = a[np.minimum(line + 1, n_lines - 1)]
    found &= ~inner | ((a[line] >= left) & (a[line] >= right))
    found &= a[line] > 0                  # a line of no amplitude is no line (a constant signal's spectrum)
    freq, amp = interpolate_lines(spec, line)
    snr = np.zeros(count)
    if found.any():
        floor = spec.floor_at(line[found])
        with np.errstate(divide="ignore", invalid="ignore"):
            snr[found] = np.where(floor > 0, amp[found] / np.where(floor > 0, floor, 1.0), np.inf)
    return Lines(found, freq, amp, line, snr)


def peak_near(spec: Spectrum, freq_hz: float, tolerance_hz: float) -> Peak | None:
    """The largest local maximum within ``tolerance_hz`` of ``freq_hz``, interpolated.

    Parameters
    ----------
    spec : Spectrum
        An amplitude spectrum.
    freq_hz : float
        Target frequency, Hz.
    tolerance_hz : float
        Half-width of the search, Hz (at least one line).

    Returns
    -------
    Peak or None
        Frequency in Hz, amplitude in the spectrum's unit, line and SNR; None
        when no local maximum lies there.

    References
    ----------
    Grandke (1983) for the interpolation.

    Examples
    --------
    >>> from engine.analysis.spectrum import amplitude_spectrum
    >>> fs = 1024.0; t = np.arange(4096) / fs                        # lines 0.25 Hz apart
    >>> spec = amplitude_spectrum(2.0 * np.sin(2 * np.pi * 100.1 * t) + 0.001 * np.sin(2 * np.pi * 7 * t), fs)
    >>> p = peak_near(spec, 100.0, 0.5)
    >>> round(p.freq_hz, 2), round(p.amplitude, 3), peak_near(spec, 50.0, 0.5)
    (100.1, 2.0, None)
    """
    half = max(tolerance_hz, spec.resolution_hz)
    lo, hi = np.searchsorted(spec.freq_hz, [freq_hz - half, freq_hz + half], side="left")
    hi = min(hi + 1, len(spec.freq_hz))
    idx = np.arange(lo, hi)
    idx = idx[np.abs(spec.freq_hz[idx] - freq_hz) <= half]
    if len(idx) == 0:
        return None
    line = int(idx[np.argmax(spec.amplitude[idx])])
    if 0 < line < len(spec.amplitude) - 1 and not (
            spec.amplitude[line] >= spec.amplitude[line - 1] and spec.amplitude[line] >= spec.amplitude[line + 1]):
        return None  # the window's maximum is only the skirt of something outside it
    floor = noise_floor(spec, line)
    f, amp = interpolate_line(spec, line)
    return Peak(f, amp, line, float(amp / floor) if floor > 0 else float("inf"))
