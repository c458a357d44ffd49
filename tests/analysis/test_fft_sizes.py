"""The analysis's fast FFT sizes are scipy's, and a diagnosis no longer imports scipy for them.

``engine.analysis._fft.next_fast_len`` replaced ``scipy.fft.next_fast_len``, whose import (scipy.special
and numpy.testing with it) took about a fifth of a whole ``tellwave diagnose``. Any size that differs
would change a transform's length and so the evidence; scipy is the reference here.
"""

from __future__ import annotations

import subprocess
import sys

import numpy as np
import pytest
from scipy.fft import next_fast_len as scipy_next_fast_len

from engine.analysis._fft import next_fast_len
from tests.support import RW2, npz_reading


@pytest.mark.parametrize("real", [True, False])
def test_every_size_to_40000_is_scipys(real):
    ours = [next_fast_len(n, real=real) for n in range(1, 40001)]
    assert ours == [scipy_next_fast_len(n, real=real) for n in range(1, 40001)]    # scipy as reference


@pytest.mark.parametrize("real", [True, False])
def test_large_sizes_are_scipys(real):
    rng = np.random.default_rng(23)
    for n in [int(v) for v in rng.integers(40_000, 2 ** 40, 2000)] + [2 ** 20, 2 ** 20 + 1, 3 ** 13 + 1]:
        assert next_fast_len(n, real=real) == scipy_next_fast_len(n, real=real), n   # scipy as reference


def test_zero_and_negative_sizes_as_scipy_treats_them():
    assert next_fast_len(0) == scipy_next_fast_len(0) == 0                     # scipy as reference
    with pytest.raises(ValueError):
        scipy_next_fast_len(-1)
    with pytest.raises(ValueError):
        next_fast_len(-1)


PROBE = ("import sys, contextlib, io\n"
         "import engine.cli\n"
         "with contextlib.redirect_stdout(io.StringIO()):\n"
         "    code = engine.cli.main(['diagnose', {reading!r}, '--machine', {machine!r}])\n"
         "print(code, ' '.join(sorted(m for m in sys.modules if m.split('.')[0] == 'scipy')) or '-')\n")


def test_a_diagnosis_from_an_npz_file_imports_no_scipy(tmp_path):
    n, fs = 16384, 8192.0
    x = 0.01 * np.random.default_rng(4).standard_normal(n) + 0.05 * np.sin(2 * np.pi * 24.7 * np.arange(n) / fs)
    reading = npz_reading(tmp_path / "r.npz", x, fs=fs, point="P1H", rpm=1482.0)
    done = subprocess.run([sys.executable, "-c", PROBE.format(reading=str(reading), machine=str(RW2))],
                          capture_output=True, text=True, check=True)
    code, imported = done.stdout.split(maxsplit=1)
    assert code in ("0", "7")                 # the diagnosis ran (7: withheld is an answer too)
    assert imported.strip() == "-"


@pytest.mark.parametrize("real", [True, False])
def test_the_largest_fast_size_at_or_below_a_length(real):
    from engine.analysis._fft import previous_fast_len

    rng = np.random.default_rng(29)
    lengths = list(range(2, 5001)) + [int(v) for v in rng.integers(5_000, 3_000_000, 300)] + [2 ** 20, 2 ** 22 + 1]
    for n in lengths:
        m = previous_fast_len(n, real=real)
        assert m <= n and scipy_next_fast_len(m, real=real) == m, n     # scipy as reference: m is fast
        assert scipy_next_fast_len(m + 1, real=real) > n, n              # and none lies between m and n
    assert previous_fast_len(1) == previous_fast_len(0) == 1
