"""Impact trains in a squared envelope: their spacing, regularity and count.

A train of impacts makes the squared envelope periodic; its autocorrelation
peaks at the spacing (common practice in time-waveform review; the
autocorrelation of the envelope is the time-domain twin of the envelope
spectrum of Randall & Antoni 2011). Impacts themselves are counted where the
squared envelope rises above its median by eight median absolute deviations,
a robust threshold that noise alone seldom crosses.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from . import _fft as sfft
from .peaks import local_maxima, peaks_above

MIN_PERIODICITY = 0.1     # an autocorrelation peak weaker than this is no train
DETECTION_MADS = 8.0


@dataclass(frozen=True)
class ImpactTrain:
    """A train of impacts in a squared envelope: rate (Hz), spacing (s), periodicity, count, regularity."""

    rate_hz: float
    spacing_s: float
    periodicity: float        # normalised autocorrelation at the spacing, 0 to 1
    count: int                # impacts detected
    regularity_cv: float      # coefficient of variation of the intervals near the spacing


FRACTIONS = (4, 3, 2)    # a train faster than the fastest rate looked for is read at 1/k of the lag found


def _peak_near(acf: np.ndarray, centre: float) -> int | None:
    """The autocorrelation's local maximum within 3 % and a lag of ``centre`` (a lag), or None."""
    reach = max(1, int(np.ceil(0.03 * centre)))
    start, stop = max(1, int(round(centre)) - reach), min(len(acf) - 2, int(round(centre)) + reach)
    if stop < start:
        return None
    j = start + int(np.argmax(acf[start:stop + 1]))
    return j if acf[j] > acf[j - 1] and acf[j] >= acf[j + 1] else None


def _whole_fraction(acf: np.ndarray, lag: int, lo: int, least: float) -> int:
    """The lag of the train whose every k-th impact ``lag`` spans, when its autocorrelation peak lies below
    the lags searched (``lo``): a train repeating faster than 1.3 x the fastest rate the machine file gives
    (a part the file lacks, or a sample rate or speed stated off by a factor) puts its autocorrelation
    peaks at its own spacing and at every whole multiple of it, and the search, which starts at the fastest
    rate's spacing, finds a multiple. A peak at ``lag`` / k (k 4, 3 or 2, within 3 % and a lag) as tall as
    ``least`` (half the tallest peak searched, the height the train's first peak is held to), with a peak
    at each of its multiples below ``lo`` (``MIN_PERIODICITY`` tall), is the train's own spacing; else
    ``lag`` stands."""
    for k in FRACTIONS:
        centre = lag / k
        if centre >= lo or centre < 2:
            continue
        j = _peak_near(acf, centre)
        if j is None or acf[j] < max(least, MIN_PERIODICITY):
            continue
        between = [_peak_near(acf, m * centre) for m in range(2, k) if m * centre < lo]
        if all(b is not None and acf[b] >= MIN_PERIODICITY for b in between):
            return j
    return lag


def impact_train(envelope: np.ndarray, fs: float, slowest_hz: float, fastest_hz: float,
                 faster: bool = False) -> ImpactTrain | None:
    """The impact train of a squared envelope ``envelope`` (sampled at ``fs``) whose rate lies
    between 0.7 x ``slowest_hz`` and 1.3 x ``fastest_hz``, or with ``faster`` up to 4 times faster
    (``_whole_fraction``); None when there is none.

    Parameters
    ----------
    envelope : numpy.ndarray
        Squared envelope in time, any unit.
    fs : float
        Its sample rate in Hz.
    slowest_hz, fastest_hz : float
        The slowest and fastest repetition rates looked for, Hz.
    faster : bool
        Read a train faster than 1.3 x ``fastest_hz`` at its own rate when the
        rate found is a whole fraction (1/2 to 1/4) of it.

    Returns
    -------
    ImpactTrain or None
        Rate in Hz and spacing in s (autocorrelation peak, parabola-refined),
        periodicity (normalised autocorrelation, 0 to 1), impacts counted above
        the median plus a number of MADs, and the coefficient of variation of
        the intervals.

    References
    ----------
    Randall & Antoni (2011), MSSP 25(2), section 2 (impacts and their 1-2 %
    random slip); Ho & Randall (2000), "Optimisation of bearing diagnostic
    techniques using simulated and actual bearing fault signals", MSSP 14(5).

    Examples
    --------
    >>> fs = 5000.0; env = np.zeros(20000); env[62::125] = 1.0      # an impact every 25 ms
    >>> train = impact_train(env, fs, 30.0, 50.0)
    >>> round(float(train.rate_hz), 3), train.count
    (40.0, 160)
    """
    n = len(envelope)
    lo = max(2, int(fs / (1.3 * fastest_hz)))
    hi = min(n // 4, int(fs / (0.7 * slowest_hz)))
    if hi <= lo + 2:
        return None
    env = envelope - envelope.mean()
    # zero padding to n + the longest lag read (hi, and one past it for the parabola): those lags are linear,
    # not circular; the lags beyond, which wrap, are never read
    size = sfft.next_fast_len(n + hi + 1, real=True)
    spectrum = sfft.rfft(env, size)
    del env
    power = np.square(spectrum.real)      # |X|^2 without temporaries as long as the spectrum
    power += np.square(spectrum.imag)
    del spectrum
    full = sfft.irfft(power, size)
    del power
    if full[0] <= 0:
        return None
    acf = full[:hi + 1] / full[0]
    del full
    acf /= 1 - np.arange(hi + 1) / n             # unbiased, normalised
    segment = acf[lo:hi]
    lags = local_maxima(segment)
    lags = lags[segment[lags] >= MIN_PERIODICITY]
    if len(lags) == 0:
        return None
    heights = segment[lags]
    first = int(lags[np.flatnonzero(heights >= 0.5 * heights.max())[0]]) + lo
    if faster:
        first = _whole_fraction(acf, first, lo, 0.5 * heights.max())
    # refine the lag by a parabola through the peak and its neighbours
    y0, y1, y2 = acf[first - 1], acf[first], acf[first + 1]
    curvature = y0 - 2 * y1 + y2
    shift = 0.5 * (y0 - y2) / curvature if curvature != 0 else 0.0
    period_s = (first + shift) / fs
    median = np.median(envelope)
    mad = np.median(np.abs(envelope - median))
    threshold = median + DETECTION_MADS * max(mad, 1e-300)
    idx = peaks_above(envelope, threshold, distance=max(1, int(0.5 * period_s * fs)))
    intervals = np.diff(idx) / fs
    near = intervals[(intervals > 0.7 * period_s) & (intervals < 1.3 * period_s)]
    cv = float(np.std(near) / np.mean(near)) if len(near) >= 3 else 1.0
    return ImpactTrain(1.0 / period_s, period_s, float(acf[first]), int(len(idx)), cv)
