"""The FFTs of the analysis, all in one place: numpy's pocketfft, sizes from scipy.

``scipy.fft`` keeps the plan (twiddle factors and work space) of every size
it has transformed in a cache; a reading of 2^20 samples transforms a dozen
sizes of that order, and the cache then holds tens of MB for the rest of the
process. ``numpy.fft`` (numpy 2, the same pocketfft algorithm, single
precision kept single) builds its plan for each call and frees it, so the
analysis uses it; ``next_fast_len`` is scipy's (a pure size computation).
"""

from __future__ import annotations

import numpy as np
from scipy.fft import next_fast_len

rfft = np.fft.rfft
irfft = np.fft.irfft


def ifft(a, axis: int = -1, overwrite_x: bool = False):
    """``numpy.fft.ifft`` along ``axis``; with ``overwrite_x`` the result is written into ``a``."""
    return np.fft.ifft(a, axis=axis, out=a if overwrite_x else None)


__all__ = ["ifft", "irfft", "next_fast_len", "rfft"]
