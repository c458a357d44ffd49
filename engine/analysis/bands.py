"""The RMS of a windowed amplitude spectrum in frequency ranges (narrowband energy)."""

from __future__ import annotations

import numpy as np

from .spectrum import SCALINGS, Spectrum


def spectrum_band_rms(spec: Spectrum, ranges) -> float | None:
    """RMS of the lines of ``spec`` inside ``ranges``, corrected for the window's noise bandwidth.

    Parameters
    ----------
    spec : Spectrum
        An amplitude spectrum (peak, RMS or peak-to-peak scaling, any unit).
    ranges : sequence of (float, float)
        Frequency ranges in Hz, both edges included, not overlapping.

    Returns
    -------
    float or None
        RMS in the spectrum's unit: sqrt(sum A_rms^2 / ENBW), ENBW in lines; None when no
        range reaches a line of the spectrum (the band is above its Fmax).

    References
    ----------
    Heinzel, Ruediger & Schilling (2002), "Spectrum and spectral density estimation by the
    Discrete Fourier transform (DFT)", sections 9-10: the power in a band is the sum of the
    power spectrum's lines divided by the equivalent noise bandwidth in lines (1.5 for Hann).

    Examples
    --------
    >>> from engine.analysis.spectrum import Transform
    >>> fs = 1024.0; t = np.arange(4096) / fs
    >>> spec = Transform.of(np.sin(2 * np.pi * 100 * t) + np.sin(2 * np.pi * 300 * t), fs).amplitude("peak")
    >>> round(spectrum_band_rms(spec, [(90.0, 110.0)]), 4)     # one sine of 1 peak: 0.7071 RMS
    0.7071
    """
    if len(spec.freq_hz) == 0:
        return None
    to_rms = SCALINGS["rms"] / SCALINGS[spec.scaling]
    enbw_lines = spec.enbw_hz / spec.resolution_hz
    total, reached = 0.0, False
    for lo, hi in ranges:
        if lo > spec.fmax_hz:
            continue
        reached = True
        a = spec.amplitude[spec.band(max(lo, spec.resolution_hz / 2), hi)] * to_rms   # DC is no vibration
        total += float(np.sum(a * a))
    return float(np.sqrt(total / enbw_lines)) if reached else None
