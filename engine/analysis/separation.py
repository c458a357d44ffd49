"""Discrete/random separation: which lines of a spectrum are deterministic.

Shaft, gear, electrical and rig components are deterministic: phase-locked to
something, they stay correlated with themselves over any delay. Bearing
impacts are not: their 1-2 % random slip makes the part of the signal the
impacts ring decorrelate within a few impacts. Antoni & Randall (2004),
"Unsupervised noise cancellation for vibration signals: part II - a novel
frequency-domain algorithm", MSSP 18, separate the two with a frequency-
domain filter estimated from the record and a delayed copy of it; Smith &
Randall (2015, MSSP 64-65) make it the first step of their benchmark method
for bearings, before the kurtogram and the squared envelope.

Here the filter's gain is estimated Welch-fashion: Hann segments with half
overlap, each paired with the one a whole segment later (the delay),

    G(f) = |sum X_k(f) conj X_{k+2}(f)| / sum |X_k(f)|^2     (0 <= G <= 1)

which is near 1 where a deterministic line dominates and near
1/sqrt(pairs) in random content. The envelope analysis then keeps
(1 - G) of each line: deterministic components and their beating no longer
masquerade as defect tones in the squared envelope.
"""

from __future__ import annotations

import numpy as np

from . import _fft as sfft

RESOLUTION_HZ = 2.0     # the gain resolves lines this far apart (a segment of about fs / 2 Hz samples)
MIN_PAIRS = 12          # at fewer pairs the gain of random content stays too high; segments shrink first
MIN_SEGMENT = 512
CHUNK = 32              # segments transformed at once


def segment_length(n: int, fs: float) -> int:
    """A power of two near fs / RESOLUTION_HZ samples, short enough for MIN_PAIRS delayed pairs.

    Parameters
    ----------
    n : int
        Record length in samples.
    fs : float
        Sample rate in Hz.

    Returns
    -------
    int
        Segment length in samples.

    References
    ----------
    Antoni & Randall (2004), "Unsupervised noise cancellation for vibration
    signals: part II", MSSP 18(1) (segment length against resolution and pairs).

    Examples
    --------
    >>> segment_length(262144, 25600.0), segment_length(16384, 25600.0)
    (16384, 2048)
    """
    want = int(2 ** np.ceil(np.log2(max(fs / RESOLUTION_HZ, MIN_SEGMENT))))
    while want > MIN_SEGMENT and 2 * n // want - 3 < MIN_PAIRS:
        want //= 2
    return want


def deterministic_gain(x: np.ndarray, fs: float) -> tuple[np.ndarray, np.ndarray] | None:
    """(frequencies in Hz, gain G in [0, 1]) of the deterministic part of ``x``; None when too short.

    Parameters
    ----------
    x : numpy.ndarray
        Samples, any unit.
    fs : float
        Sample rate in Hz.

    Returns
    -------
    tuple of numpy.ndarray or None
        Line frequencies in Hz and G per line: near 1 where a deterministic
        line dominates, near 1/sqrt(pairs) in random content.

    References
    ----------
    Antoni & Randall (2004), MSSP 18(1); Smith & Randall (2015), "Rolling element
    bearing diagnostics using the Case Western Reserve University data: a
    benchmark study", MSSP 64-65.

    Examples
    --------
    >>> fs = 1024.0; t = np.arange(65536) / fs
    >>> x = np.sin(2 * np.pi * 100 * t) + np.random.default_rng(2).standard_normal(len(t))
    >>> f, g = deterministic_gain(x, fs)
    >>> bool(g[np.argmin(abs(f - 100))] > 0.9), bool(np.median(g) < 0.3)
    (True, True)
    """
    n = len(x)
    size = segment_length(n, fs)
    step = size // 2
    count = (n - size) // step + 1
    if count < 3:
        return None
    window = 0.5 - 0.5 * np.cos(2 * np.pi * np.arange(size) / size)
    power = np.zeros(size // 2 + 1)
    cross = np.zeros(size // 2 + 1, dtype=complex)
    carry = None                       # the last two spectra of the previous slice, for the pairs across it
    every = np.lib.stride_tricks.sliding_window_view(x, size)[::step]    # a view: no index array
    for first in range(0, count, CHUNK):
        segments = every[first:min(count, first + CHUNK)].copy()
        segments -= segments.mean(axis=1, keepdims=True)
        segments *= window
        spectra = sfft.rfft(segments, axis=1)
        power += (spectra.real ** 2 + spectra.imag ** 2).sum(axis=0)
        both = spectra if carry is None else np.concatenate((carry, spectra))
        cross += (both[:-2] * np.conj(both[2:])).sum(axis=0)
        carry = both[-2:]
    cross = np.abs(cross)
    with np.errstate(divide="ignore", invalid="ignore"):
        gain = np.where(power > 0, cross / power * count / (count - 2), 0.0)
    return np.arange(len(gain)) * fs / size, np.clip(gain, 0.0, 1.0)


def random_part_factor(x: np.ndarray, fs: float, n_lines: int, n: int) -> np.ndarray:
    """1 - G on the ``n_lines`` lines of an ``n``-point FFT of the record (all ones when too short).

    Parameters
    ----------
    x : numpy.ndarray
        Samples, any unit.
    fs : float
        Sample rate in Hz.
    n_lines : int
        Lines of the one-sided FFT the factor multiplies.
    n : int
        Record length of that FFT in samples.

    Returns
    -------
    numpy.ndarray
        Factor per line in [0, 1], dimensionless.

    References
    ----------
    Antoni & Randall (2004), MSSP 18(1).

    Examples
    --------
    >>> random_part_factor(np.zeros(100), 1000.0, 51, 100).tolist() == [1.0] * 51    # too short to judge
    True
    """
    found = deterministic_gain(x, fs)
    if found is None:
        return np.ones(n_lines)
    f, gain = found
    return 1.0 - np.interp(np.arange(n_lines) * fs / n, f, gain)
