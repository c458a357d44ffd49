"""Spectral windows and their published correction factors.

Windows come from ``scipy.signal.get_window`` in their periodic (DFT-even)
form, the form for spectral analysis. The factors follow Heinzel, Ruediger &
Schilling (2002), "Spectrum and spectral density estimation by the Discrete
Fourier Transform (DFT)", section 10: coherent gain S1/N, equivalent noise
bandwidth ENBW = N S2 / S1^2 bins, scalloping loss at half a bin.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

import numpy as np
from scipy.signal import get_window

WINDOWS = {"hann": "hann", "hanning": "hann", "hamming": "hamming", "flattop": "flattop",
           "rectangular": "boxcar", "boxcar": "boxcar", "uniform": "boxcar", "blackmanharris": "blackmanharris"}
KERNEL_LENGTH = 1024   # window length used to tabulate its spectral kernel
KERNEL_OVERSAMPLE = 512  # kernel points per DFT bin


def window_name(name: str) -> str:
    """Canonical scipy name of a window, or ValueError naming the ones known."""
    try:
        return WINDOWS[name.lower()]
    except KeyError:
        raise ValueError(f"unknown window {name!r}; expected one of {', '.join(sorted(WINDOWS))}") from None


def window(name: str, n: int) -> np.ndarray:
    """Periodic window of length ``n``."""
    return get_window(window_name(name), n, fftbins=True)


@dataclass(frozen=True)
class WindowFactors:
    coherent_gain: float          # S1 / N
    amplitude_correction: float   # 1 / coherent gain
    energy_correction: float      # sqrt(N / S2)
    enbw_bins: float              # N S2 / S1^2
    scalloping_loss_db: float     # loss of a tone half a bin off centre


def window_factors(name: str, n: int = 4096) -> WindowFactors:
    """Correction factors of a window (Heinzel, Ruediger & Schilling 2002)."""
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


@lru_cache(maxsize=None)
def kernel(name: str) -> tuple[np.ndarray, np.ndarray]:
    """Normalised magnitude of the window's transform against offset in bins, 0 to 2.

    Used to interpolate the true frequency and amplitude of a tone that falls
    between bins: for an isolated tone the ratio of the two largest bins fixes
    the offset, and the kernel at that offset gives the amplitude lost.
    """
    w = window(name, KERNEL_LENGTH)
    spectrum = np.abs(np.fft.rfft(w, KERNEL_LENGTH * KERNEL_OVERSAMPLE))
    count = 2 * KERNEL_OVERSAMPLE + 1
    offsets = np.arange(count) / KERNEL_OVERSAMPLE
    return offsets, spectrum[:count] / spectrum[0]
