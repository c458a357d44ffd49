"""Spectral peaks with sub-bin frequency and amplitude.

A tone between two lines reads low (scalloping) and at the wrong frequency.
For an isolated tone the ratio of the largest line to its larger neighbour
fixes the offset, and the window's own transform (its kernel) at that
offset gives the amplitude lost. This is exact for a pure tone in any of the
windows of ``windows.py``; for Hann it reduces to the closed form of
Grandke (1983), "Interpolation algorithms for discrete Fourier transforms of
weighted signals", IEEE Trans. Instrum. Meas. 32(2).
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

import numpy as np
from scipy import signal

from .spectrum import Spectrum
from .windows import kernel


@dataclass(frozen=True)
class Peak:
    freq_hz: float
    amplitude: float   # in the spectrum's unit and scaling
    line: int          # index of the largest line
    snr: float         # amplitude over the local noise floor (median of nearby lines)


@lru_cache(maxsize=None)
def _ratio_table(window_kind: str):
    offsets, k = kernel(window_kind)
    half = offsets <= 0.5
    d = offsets[half]
    # k(1 - d) / k(d): neighbour over peak for a tone d bins right of the peak line
    neighbour = np.interp(1.0 - d, offsets, k)
    return d, neighbour / k[half], offsets, k


def interpolate_line(spec: Spectrum, line: int) -> tuple[float, float]:
    """True frequency (Hz) and amplitude of the tone whose largest line is ``line``."""
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
    """Median amplitude of the lines around ``line``: a robust local noise floor."""
    if 2 * half_width + 1 == Spectrum.FLOOR_LINES:
        return float(spec.floor[line])
    lo, hi = max(0, line - half_width), min(len(spec.amplitude), line + half_width + 1)
    return float(np.median(spec.amplitude[lo:hi]))


def find_peaks(spec: Spectrum, f_lo_hz: float = 0.0, f_hi_hz: float | None = None,
               min_snr: float = 3.0, max_peaks: int | None = None) -> list[Peak]:
    """Local maxima standing ``min_snr`` above the local noise floor, largest first.

    Uses ``scipy.signal.find_peaks`` for the maxima, then interpolates each.
    """
    f_hi_hz = spec.fmax_hz if f_hi_hz is None else f_hi_hz
    lines, _ = signal.find_peaks(spec.amplitude)
    lines = lines[(spec.freq_hz[lines] >= f_lo_hz) & (spec.freq_hz[lines] <= f_hi_hz)]
    floors = spec.floor
    out = []
    for line in lines:
        floor = floors[line]
        snr = spec.amplitude[line] / floor if floor > 0 else np.inf
        if snr < min_snr:
            continue
        f, amp = interpolate_line(spec, int(line))
        out.append(Peak(f, amp, int(line), float(snr)))
    out.sort(key=lambda p: p.amplitude, reverse=True)
    return out[:max_peaks] if max_peaks else out


def peak_near(spec: Spectrum, freq_hz: float, tolerance_hz: float) -> Peak | None:
    """The largest local maximum within ``tolerance_hz`` of ``freq_hz``, interpolated."""
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
