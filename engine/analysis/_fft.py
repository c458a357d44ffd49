"""The FFTs of the analysis, all in one place: numpy's pocketfft, and the fast sizes for it.

``scipy.fft`` keeps the plan (twiddle factors and work space) of every size
it has transformed in a cache; a reading of 2^20 samples transforms a dozen
sizes of that order, and the cache then holds tens of MB for the rest of the
process. ``numpy.fft`` (numpy 2, the same pocketfft algorithm, single
precision kept single) builds its plan for each call and frees it, so the
analysis uses it.

``next_fast_len`` is the size computation of ``scipy.fft.next_fast_len`` (pocketfft's
``good_size``): the smallest 5-smooth number at or above the target for a real transform,
11-smooth for a complex one. It lives here because importing ``scipy.fft`` for it (scipy.special
and numpy.testing come with it) took about a fifth of a whole ``tellwave diagnose``;
``tests/analysis/test_fft_sizes.py`` holds it to scipy's.
"""

from __future__ import annotations

from bisect import bisect_left, bisect_right
from operator import index

import numpy as np

rfft = np.fft.rfft
irfft = np.fft.irfft

_RADICES = {True: (2, 3, 5), False: (2, 3, 5, 7, 11)}    # pocketfft's fast radices: real, complex
_SIZES: dict[bool, list[int]] = {}                        # every such size up to a power of two, sorted


def _fast_sizes(real: bool, at_least: int) -> list[int]:
    """Every size made of the radices, sorted, up to at least the power of two at or above ``at_least``."""
    sizes = _SIZES.get(real)
    if sizes is None or sizes[-1] < at_least:
        limit = max(1 << 22, 1 << (at_least - 1).bit_length())
        sizes = [1]
        for radix in _RADICES[real]:
            grown = []
            for m in sizes:
                while m <= limit:
                    grown.append(m)
                    m *= radix
            sizes = grown
        sizes.sort()
        _SIZES[real] = sizes
    return sizes


def next_fast_len(target: int, real: bool = False) -> int:
    """The smallest size at or above ``target`` whose only prime factors are pocketfft's radices
    (2, 3 and 5 when ``real``, else also 7 and 11), as ``scipy.fft.next_fast_len`` gives.

    Parameters
    ----------
    target : int
        The least length wanted (samples); 0 gives 0, a negative one is refused.
    real : bool
        For a real transform (``rfft``): 5-smooth sizes only.

    Returns
    -------
    int
        The fast length (samples).

    References
    ----------
    scipy.fft.next_fast_len (pocketfft ``good_size``); Frigo & Johnson, "The design and
    implementation of FFTW3", Proc. IEEE 93 (2005): mixed-radix FFTs are fastest on smooth sizes.

    Examples
    --------
    >>> next_fast_len(1000, real=True), next_fast_len(1021), next_fast_len(65537, real=True)
    (1000, 1024, 65610)
    """
    n = index(target)
    if n < 1:
        if n == 0:
            return 0                         # as scipy gives
        raise ValueError(f"Target length must be positive, got {n}")
    sizes = _fast_sizes(bool(real), n)
    return sizes[bisect_left(sizes, n)]     # the power of two at or above n is among them


def previous_fast_len(target: int, real: bool = False) -> int:
    """The largest size at or below ``target`` (1 for a target below 2) whose only prime factors are pocketfft's
    radices: the counterpart of ``next_fast_len``, looked up in the same sorted table (a walk down
    from ``target`` calling ``next_fast_len`` at each step took hundreds of calls)."""
    n = index(target)
    if n <= 1:
        return 1
    sizes = _fast_sizes(bool(real), n)
    return sizes[bisect_right(sizes, n) - 1]


def ifft(a, axis: int = -1, overwrite_x: bool = False):
    """``numpy.fft.ifft`` along ``axis``; with ``overwrite_x`` the result is written into ``a``."""
    return np.fft.ifft(a, axis=axis, out=a if overwrite_x else None)


__all__ = ["ifft", "irfft", "next_fast_len", "previous_fast_len", "rfft"]
