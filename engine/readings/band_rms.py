"""The ISO 20816-3 velocity band and the band RMS of a record: one home for the quality gate and the analysis.

The plausibility gate (``quality.py``, stage 1) and the overall level of the
analysis (``engine/analysis/levels.py``, stage 2) both need the broadband
velocity RMS of a channel; both take it from ``band_rms_of_fft`` on the
one-sided FFT of the record they already hold, so the band, the window, the
integration and the scaling cannot drift apart. The function lives here,
in the lower stage, because the readings may not import the analysis.

The estimate is the Hann-windowed periodogram summed over the band, as
``scipy.signal.periodogram(x, fs, window="hann", scaling="density")`` gives
(Heinzel, Ruediger & Schilling 2002, "Spectrum and spectral density
estimation by the Discrete Fourier Transform (DFT)", sections 9-10: power
spectral density |Y|^2 / (fs S2), S2 = 3N/8 for the periodic Hann window).
The band is ISO 20816-3:2022, clause 4.3: 10 Hz to 1000 Hz, or 2 Hz to
1000 Hz for machines running at 600 r/min or below.
"""

from __future__ import annotations

import numpy as np

ISO_BAND_HZ = (10.0, 1000.0)
ISO_BAND_SLOW_HZ = (2.0, 1000.0)
ISO_SLOW_SPEED_RPM = 600.0
INTEGRATIONS_TO_VELOCITY = {"acceleration": 1, "velocity": 0, "displacement": -1}


def hann_from_rectangular(spec: np.ndarray, n: int) -> np.ndarray:
    """The one-sided FFT of the Hann-windowed record, from the one-sided FFT ``spec`` of the record.

    The periodic Hann window is 0.5 - 0.25 e^{j theta_k} - 0.25 e^{-j theta_k},
    so windowing is a circular convolution with three lines:
    Y[k] = 0.5 X[k] - 0.25 (X[k-1] + X[k+1]), the lines beyond the one-sided
    range being the conjugates of those inside it.
    """
    x = spec
    m = len(x)
    y = 0.5 * x
    if m < 2:
        return y
    quarter = 0.25 * x
    y[1:] -= quarter[:-1]
    y[:-1] -= quarter[1:]
    y[0] -= np.conj(quarter[1])
    # X[n/2+1] = conj X[n/2-1]; odd n: X[(n+1)/2] = conj X[(n-1)/2]
    y[-1] -= np.conj(quarter[-2] if n % 2 == 0 else quarter[-1])
    return y


def band_rms_of_fft(rect: np.ndarray, n: int, fs: float, f_lo_hz: float, f_hi_hz: float,
                    integrations: int = 0, hann: np.ndarray | None = None) -> float:
    """RMS in [f_lo_hz, f_hi_hz] of the record whose plain one-sided FFT is ``rect``, optionally integrated.

    ``hann`` is ``hann_from_rectangular(rect, n)`` when the caller already has it.
    Each line is divided by (2 pi f)^integrations: acceleration in m/s^2 with
    ``integrations=1`` gives velocity in m/s. DC is never in the band.
    """
    df = fs / n
    first = max(1, int(np.ceil(f_lo_hz / df)) - 1)       # the lines k with f_lo <= k df <= f_hi, k >= 1,
    while first * df < f_lo_hz:                           # found as a comparison of k * df would find them
        first += 1
    stop = min(len(rect), max(first, int(f_hi_hz / df) - 1))
    while stop < len(rect) and stop * df <= f_hi_hz:
        stop += 1
    if stop <= first:
        return 0.0
    if hann is None:
        lo, hi = first - 1, min(len(rect), stop + 1)      # the three-tap sum needs one line either side
        y = hann_from_rectangular(rect[lo:hi].copy(), n)[first - lo:stop - lo] if (lo > 0 and hi < len(rect)) \
            else hann_from_rectangular(rect.copy(), n)[first:stop]
    else:
        y = hann[first:stop]
    f = np.arange(first, stop) * df
    power = np.abs(y) ** 2 / (fs * 3.0 * n / 8.0)
    double = np.full(len(f), 2.0)
    if n % 2 == 0 and stop - 1 == n // 2:
        double[-1] = 1.0                                  # the Nyquist line has no negative twin
    weight = (2 * np.pi * f) ** (-2 * integrations)
    return float(np.sqrt(np.sum(power * double * weight) * df))
