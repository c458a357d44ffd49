"""Spectral windows and their published correction factors.

Windows are used in their periodic (DFT-even) form, the form for spectral
analysis. The factors follow Heinzel, Ruediger & Schilling (2002), "Spectrum
and spectral density estimation by the Discrete Fourier Transform (DFT)",
section 10: coherent gain S1/N, equivalent noise bandwidth ENBW = N S2 / S1^2
bins, scalloping loss at half a bin.

The Hann window, the one the diagnosis uses, is the closed form
0.5 - 0.5 cos(2 pi k / N) (identical to ``scipy.signal.get_window("hann", N)``,
which the tests use as reference); its transform has three non-zero lines, so
a Hann spectrum follows from the plain FFT of the same record by a three-tap
sum (``hann_from_rectangular``, kept in ``engine.readings.band_rms`` with the
band RMS that the quality gates share) instead of a second FFT. The other windows
come from ``scipy.signal.get_window``, imported only when one is asked for
(scipy.signal takes about half a second to import).
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cache, lru_cache

import numpy as np

# re-exported (the redundant alias marks it so): its home is band_rms, the quality gates use it too
from ..readings.band_rms import hann_from_rectangular as hann_from_rectangular

WINDOWS = {"hann": "hann", "hanning": "hann", "hamming": "hamming", "flattop": "flattop",
           "rectangular": "boxcar", "boxcar": "boxcar", "uniform": "boxcar", "blackmanharris": "blackmanharris"}
KERNEL_LENGTH = 1024   # window length used to tabulate its spectral kernel
KERNEL_OVERSAMPLE = 512  # kernel points per DFT bin


def window_name(name: str) -> str:
    """Canonical scipy name of a window, or ValueError naming the ones known.

    Parameters
    ----------
    name : str
        A window name as a user writes it (``hann``, ``hanning``, ``rectangular``...).

    Returns
    -------
    str
        The name ``scipy.signal.get_window`` knows it by.

    References
    ----------
    Heinzel, Ruediger & Schilling (2002), "Spectrum and spectral density estimation
    by the Discrete Fourier Transform (DFT)", section 10 (the windows listed).

    Examples
    --------
    >>> window_name("Hanning"), window_name("rectangular")
    ('hann', 'boxcar')
    """
    try:
        return WINDOWS[name.lower()]
    except KeyError:
        raise ValueError(f"unknown window {name!r}; expected one of {', '.join(sorted(WINDOWS))}") from None


@lru_cache(maxsize=16)
def _window(canonical: str, n: int) -> np.ndarray:
    if canonical == "hann":
        w = 0.5 - 0.5 * np.cos(2.0 * np.pi * np.arange(n) / n)
    elif canonical == "boxcar":
        w = np.ones(n)
    else:
        from scipy.signal import get_window

        w = get_window(canonical, n, fftbins=True)
    w.setflags(write=False)
    return w


def window(name: str, n: int) -> np.ndarray:
    """Periodic window of length ``n`` (read-only; cached, so a channel builds it once).

    Parameters
    ----------
    name : str
        Window name (see ``window_name``).
    n : int
        Length in samples.

    Returns
    -------
    numpy.ndarray
        The periodic (DFT-even) window, dimensionless, read-only.

    References
    ----------
    Heinzel, Ruediger & Schilling (2002), section 10; the Hann window is
    0.5 - 0.5 cos(2 pi k / N), identical to ``scipy.signal.get_window("hann", N)``.

    Examples
    --------
    >>> np.round(window("hann", 4), 12).tolist()
    [0.0, 0.5, 1.0, 0.5]
    """
    return _window(window_name(name), int(n))


def window_sum(name: str, n: int) -> float:
    """S1, the sum of the window's samples: N/2 for the periodic Hann window.

    Parameters
    ----------
    name : str
        Window name.
    n : int
        Length in samples.

    Returns
    -------
    float
        S1 (dimensionless); the coherent gain is S1 / N.

    References
    ----------
    Heinzel, Ruediger & Schilling (2002), section 9, eq. (19) for S1.

    Examples
    --------
    >>> window_sum("hann", 1024), window_sum("rectangular", 8)
    (512.0, 8.0)
    """
    if window_name(name) == "hann":
        return n / 2.0
    return float(window(name, n).sum())


@dataclass(frozen=True)
class WindowFactors:
    """Correction factors of one window: gains, ENBW in bins and scalloping loss in dB."""

    coherent_gain: float          # S1 / N
    amplitude_correction: float   # 1 / coherent gain
    energy_correction: float      # sqrt(N / S2)
    enbw_bins: float              # N S2 / S1^2
    scalloping_loss_db: float     # loss of a tone half a bin off centre


@lru_cache(maxsize=32)
def window_factors(name: str, n: int = 4096) -> WindowFactors:
    """Correction factors of a window (Heinzel, Ruediger & Schilling 2002).

    Parameters
    ----------
    name : str
        Window name.
    n : int, optional
        Length in samples used to compute the factors (4096).

    Returns
    -------
    WindowFactors
        Coherent gain S1/N, amplitude and energy corrections, ENBW in bins and
        the scalloping loss in dB of a tone half a bin off a line.

    References
    ----------
    Heinzel, Ruediger & Schilling (2002), section 10 and table of window
    properties: Hann ENBW 1.5 bins, scalloping loss 1.42 dB.

    Examples
    --------
    >>> f = window_factors("hann")
    >>> [round(float(v), 2) for v in (f.coherent_gain, f.enbw_bins, f.scalloping_loss_db)]
    [0.5, 1.5, 1.42]
    """
    w = window(name, n)
    s1, s2 = w.sum(), (w ** 2).sum()
    half_bin = abs(np.sum(w * np.exp(-1j * np.pi * np.arange(n) / n)))
    return WindowFactors(
        coherent_gain=s1 / n,
        amplitude_correction=n / s1,
        energy_correction=np.sqrt(n / s2),
        enbw_bins=n * s2 / s1 ** 2,
        scalloping_loss_db=-20 * np.log10(half_bin / s1),
    )


def enbw_bins(name: str, n: int) -> float:
    """Equivalent noise bandwidth in bins: exactly 1.5 for the periodic Hann window.

    Parameters
    ----------
    name : str
        Window name.
    n : int
        Length in samples.

    Returns
    -------
    float
        ENBW = N S2 / S1^2, in bins (multiply by fs / N for Hz).

    References
    ----------
    Heinzel, Ruediger & Schilling (2002), section 9, eq. (22).

    Examples
    --------
    >>> enbw_bins("hann", 4096), float(enbw_bins("rectangular", 4096))
    (1.5, 1.0)
    """
    if window_name(name) == "hann":
        return 1.5
    return window_factors(name, n).enbw_bins


@cache
def kernel(name: str) -> tuple[np.ndarray, np.ndarray]:
    """Normalised magnitude of the window's transform against offset in bins, 0 to 2.

    Used to interpolate the true frequency and amplitude of a tone that falls
    between bins: for an isolated tone the ratio of the two largest bins fixes
    the offset, and the kernel at that offset gives the amplitude lost.

    Parameters
    ----------
    name : str
        Window name.

    Returns
    -------
    offsets : numpy.ndarray
        Offsets from the line, in bins (0 to 2).
    magnitude : numpy.ndarray
        The window's transform there over its value at 0 (dimensionless).

    References
    ----------
    Heinzel, Ruediger & Schilling (2002), section 10: the Hann window reads
    -1.42 dB (0.849) half a bin off a line and 0.5 one bin off.

    Examples
    --------
    >>> offsets, magnitude = kernel("hann")
    >>> round(float(magnitude[offsets == 0.5][0]), 3), round(float(magnitude[offsets == 1.0][0]), 3)
    (0.849, 0.5)
    """
    w = window(name, KERNEL_LENGTH)
    spectrum = np.abs(np.fft.rfft(w, KERNEL_LENGTH * KERNEL_OVERSAMPLE))
    count = 2 * KERNEL_OVERSAMPLE + 1
    offsets = np.arange(count) / KERNEL_OVERSAMPLE
    return offsets, spectrum[:count] / spectrum[0]
