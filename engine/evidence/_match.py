"""Matching measured peaks to expected frequencies, shared by the extractors."""

from __future__ import annotations

import numpy as np

from ..analysis import Peak, Spectrum, peak_near

MIN_SNR = 3.0               # a line must stand 3 x (9.5 dB) above its local floor
SPEED_TOLERANCE = 0.005     # shaft-locked lines after speed refinement: 0.5 %
UNREFINED_TOLERANCE = 0.02  # without a refined speed: 2 %
SLIP_TOLERANCE = 0.02       # bearing defect rates slip by 1-2 % (Randall & Antoni 2011)


def db(ratio: float) -> float:
    return float(20 * np.log10(ratio)) if ratio > 0 else -200.0


def tolerance_hz(spec: Spectrum, freq_hz: float, fraction: float) -> float:
    """Search half-width: the larger of 1.5 lines and ``fraction`` of the frequency."""
    return max(1.5 * spec.resolution_hz, fraction * freq_hz)


def local_floor(spec: Spectrum, freq_hz: float, width_fraction: float = 0.15, min_lines: int = 25) -> float:
    """Median amplitude within +-``width_fraction`` of ``freq_hz`` (at least +-min_lines)."""
    half = max(width_fraction * freq_hz, min_lines * spec.resolution_hz)
    mask = np.abs(spec.freq_hz - freq_hz) <= half
    vals = spec.amplitude[mask]
    return float(np.median(vals)) if len(vals) else 0.0


def find_line(spec: Spectrum, freq_hz: float, fraction: float, wide_floor: bool = False) -> Peak | None:
    """The peak near ``freq_hz`` if it stands MIN_SNR above its floor, else None."""
    if freq_hz <= 0 or freq_hz > spec.fmax_hz * 0.98:
        return None
    peak = peak_near(spec, freq_hz, tolerance_hz(spec, freq_hz, fraction))
    if peak is None:
        return None
    if wide_floor:
        floor = local_floor(spec, freq_hz)
        snr = peak.amplitude / floor if floor > 0 else float("inf")
        peak = Peak(peak.freq_hz, peak.amplitude, peak.line, float(snr))
    return peak if peak.snr >= MIN_SNR else None
