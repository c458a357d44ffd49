"""The waveform in the angle domain: revolutions and time synchronous averaging.

Resampling the record at a fixed number of samples per shaft revolution
lines each revolution up with the next; averaging them (time synchronous
averaging, TSA) keeps what repeats once per turn and suppresses everything
else by about sqrt(number of revolutions) (McFadden 1987, "A revised model
for the extraction of periodic waveforms by time domain averaging", MSSP 1).

At a constant speed the record is resampled by cubic convolution (Keys 1981,
"Cubic convolution interpolation for digital image processing", IEEE Trans.
ASSP 29(6), with a = -0.5): four samples per point, local (a record that is
not periodic does not ring at its ends, as Fourier interpolation would) and
done in slices of whole revolutions, so memory stays near one copy of the
record. With a tach, the revolutions are cut at the pulse times by
cubic-spline interpolation. The part taken out before a bearing's envelope
(``synchronous_part``) is not interpolated at all: it is the record's lines
at the shaft's orders, by chirp z transforms, because an interpolation's
error near the Nyquist frequency differs from turn to turn and would leave
lines between the orders.

The once-per-revolution analysis of a gear shaft (``synchronous_events``)
uses the TSA difference signal: the average revolution less its lowest
shaft orders and the mesh harmonics with their first sidebands, whose
kurtosis is FM4 (Stewart 1977, "Some useful data analysis techniques for
gearbox diagnostics"; about 3 for a healthy gear).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from . import _fft as sfft

LOW_ORDERS = (0, 1, 2, 3)
REPEAT_WINDOW = 0.1       # a revolution's largest spike within +-36 degrees of the average's


@dataclass(frozen=True)
class Revolutions:
    """The record cut into revolutions: ``samples`` has shape (revolutions, samples_per_rev)."""

    samples: np.ndarray
    speed_hz: float            # mean speed over the revolutions used

    @property
    def count(self) -> int:
        """Number of revolutions (rows of ``samples``)."""
        return self.samples.shape[0]

    @property
    def samples_per_rev(self) -> int:
        """Samples in each revolution (columns of ``samples``)."""
        return self.samples.shape[1]

    def average(self) -> np.ndarray:
        """The time synchronous average: one revolution."""
        return self.samples.mean(axis=0)


def default_samples_per_rev(fs: float, speed_hz: float) -> int:
    """The power of two at or above the samples one revolution holds in time.

    Parameters
    ----------
    fs : float
        Sample rate in Hz.
    speed_hz : float
        Shaft speed in Hz.

    Returns
    -------
    int
        Samples per revolution.

    References
    ----------
    McFadden (1987), "A revised model for the extraction of periodic waveforms by
    time domain averaging", MSSP 1(1).

    Examples
    --------
    >>> default_samples_per_rev(25600.0, 24.75), default_samples_per_rev(1024.0, 4.0)
    (2048, 256)
    """
    return int(2 ** np.ceil(np.log2(fs / speed_hz)))


def keys_weights(u: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Weights of samples i-1, i, i+1, i+2 for a point u (0 <= u < 1) past sample i (Keys, a = -0.5).

    Parameters
    ----------
    u : numpy.ndarray
        Fractional positions past each sample, 0 <= u < 1.

    Returns
    -------
    tuple of numpy.ndarray
        The four weights (dimensionless; they sum to 1).

    References
    ----------
    Keys (1981), "Cubic convolution interpolation for digital image processing",
    IEEE Trans. ASSP 29(6), eq. (15) with a = -0.5.

    Examples
    --------
    >>> [float(w[0]) for w in keys_weights(np.array([0.5]))]
    [-0.0625, 0.5625, 0.5625, -0.0625]
    """
    u2 = u * u
    u3 = u2 * u
    return (0.5 * (2 * u2 - u3 - u), 0.5 * (3 * u3 - 5 * u2) + 1, 0.5 * (4 * u2 + u - 3 * u3), 0.5 * (u3 - u2))


def resample_at(x: np.ndarray, positions: np.ndarray) -> np.ndarray:
    """``x`` at fractional sample ``positions`` by cubic convolution (ends held).

    Parameters
    ----------
    x : numpy.ndarray
        Samples, any unit.
    positions : numpy.ndarray
        Fractional sample indices.

    Returns
    -------
    numpy.ndarray
        ``x`` interpolated there, in the unit of ``x``.

    References
    ----------
    Keys (1981), IEEE Trans. ASSP 29(6) (exact for a quadratic, a = -0.5).

    Examples
    --------
    >>> resample_at(np.arange(8.0) ** 2, np.array([2.5, 3.25])).tolist()     # exact for a quadratic
    [6.25, 10.5625]
    """
    i = np.floor(positions).astype(np.int64)
    u = positions - i
    w_before, w_at, w_after, w_next = keys_weights(u)
    i -= 1
    out = w_before * np.take(x, i, mode="clip")
    i += 1
    out += w_at * np.take(x, i, mode="clip")
    i += 1
    out += w_after * np.take(x, i, mode="clip")
    i += 1
    out += w_next * np.take(x, i, mode="clip")
    return out


ROWS_PER_SLICE = 64
SAMPLES_PER_SLICE = 1 << 15


def _slice_length(n: int, sums: int) -> int:
    """The length of the equal slices of an ``n``-sample record whose chirp z transforms give ``sums`` sums
    each: at most a quarter, a half or all of SAMPLES_PER_SLICE, whichever costs the least FFT work (4
    transforms of length + sums - 1 per pair of slices, 1 for the kernel, m log m each). Few orders (a fast
    shaft) favour short slices, whose transforms are also kinder to the cache; many orders, long ones."""
    costs = []
    for longest in (SAMPLES_PER_SLICE // 4, SAMPLES_PER_SLICE // 2, SAMPLES_PER_SLICE):
        slices = -(-n // max(longest, 1))
        length = -(-n // slices)
        size = sfft.next_fast_len(length + sums - 1)
        costs.append(((4 * -(-slices // 2) + 1) * size * float(np.log2(max(size, 2))), length))
    return min(costs, key=lambda c: c[0])[1]      # the first of equal costs, as the loop before took it


def revolution_rows(x: np.ndarray, fs: float, speed_hz: float, samples_per_rev: int) -> np.ndarray:
    """The whole revolutions of ``x`` at a constant ``speed_hz``, one per row, from t = 0.

    Parameters
    ----------
    x : numpy.ndarray
        Samples, any unit.
    fs : float
        Sample rate in Hz.
    speed_hz : float
        Shaft speed in Hz.
    samples_per_rev : int
        Samples per row.

    Returns
    -------
    numpy.ndarray
        (revolutions, samples_per_rev), in the unit of ``x``.

    References
    ----------
    McFadden (1987), "A revised model for the extraction of periodic waveforms by
    time domain averaging", MSSP 1(1).

    Examples
    --------
    >>> fs = 1000.0; x = np.sin(2 * np.pi * 10 * np.arange(1000) / fs)
    >>> rows = revolution_rows(x, fs, 10.0, 64)
    >>> rows.shape, round(float(np.max(np.abs(rows - rows[0]))), 6)       # every turn alike
    ((9, 64), 0.0)
    """
    count = int(np.floor((len(x) - 1) / fs * speed_hz + 1e-9))
    rows = np.empty((count, samples_per_rev))
    step = fs / (speed_hz * samples_per_rev)          # input samples per output sample
    phase = np.arange(samples_per_rev) * step
    for start in range(0, count, ROWS_PER_SLICE):
        stop = min(count, start + ROWS_PER_SLICE)
        turn_start = np.arange(start, stop)[:, None] * (fs / speed_hz)
        rows[start:stop] = resample_at(x, turn_start + phase[None, :])
    return rows


def _unit_phasors(phase_rad: np.ndarray) -> np.ndarray:
    """exp(i phase) as cos + i sin, written straight into the complex result: the same values as
    ``np.exp(1j * phase)`` (whose complex path, for a pure imaginary argument, is cos and sin too)
    at about half the cost."""
    out = np.empty(len(phase_rad), dtype=complex)
    np.cos(phase_rad, out=out.real)
    np.sin(phase_rad, out=out.imag)
    return out


def _block(length: int) -> int:
    """The power of two at or above sqrt(``length``): the row length of a phase table of ``length`` values."""
    return 1 << int(np.sqrt(max(length - 1, 0))).bit_length()


def _powers(g: np.ndarray, count: int) -> np.ndarray:
    """Rows g ** q for q = 0 .. ``count`` - 1, by doubling: row q is the product of at most log2(``count``) + 1
    factors, so its rounding error stays a few units of the last place."""
    rows = np.empty((count, len(g)), dtype=complex)
    rows[0] = 1.0
    have = 1
    while have < count:
        take = min(have, count - have)
        np.multiply(rows[:take], rows[have - 1] * g, out=rows[have:have + take])    # times g ** have
        have += take
    return rows


def _chirp(c: float, length: int) -> np.ndarray:
    """exp(i c j^2) for j = 0 .. ``length`` - 1, from about 3 sqrt(``length``) sines and cosines: with j = q B + r,
    c j^2 = c q^2 B^2 + 2 c B q r + c r^2, so each value is a row factor times a column factor times
    exp(i 2 c B r) ** q. The same values as ``_unit_phasors(c * j * j)`` to the rounding of c j^2 itself
    (about 1e-16 of it, held by both) at a third of the cost."""
    b = _block(length)
    rows = _powers(_unit_phasors((2.0 * c * b) * np.arange(b, dtype=float)), -(-length // b))
    r = np.arange(b, dtype=float)
    rows *= _unit_phasors(c * (r * r))
    qb = np.arange(len(rows), dtype=float) * b
    rows *= _unit_phasors(c * (qb * qb))[:, None]
    return rows.reshape(-1)[:length]


def _ramp(a: float, length: int) -> np.ndarray:
    """exp(i a j) for j = 0 .. ``length`` - 1 as the outer product exp(i a q B) exp(i a r), j = q B + r: about
    2 sqrt(``length``) sines and cosines instead of ``length``, the same values to a unit of the last place."""
    b = _block(length)
    rows = _unit_phasors((a * b) * np.arange(-(-length // b), dtype=float))[:, None] \
        * _unit_phasors(a * np.arange(b, dtype=float))
    return rows.reshape(-1)[:length]


class _ChirpSums:
    """sum_j v[j] exp(1j step j m) for m = 0 .. outputs - 1, for any v of ``inputs`` values (Bluestein's
    chirp z transform: j m = (j^2 + m^2 - (m - j)^2) / 2 makes it a convolution); the chirp and the
    kernel's FFT are computed once for every block of the same shape. ``reverse()`` gives the sums the
    other way (``outputs`` values in, ``inputs`` out, the opposite step) from the same chirp and kernel:
    that kernel is this one conjugated and reversed in time, so its FFT is this FFT's conjugate."""

    def __init__(self, inputs: int, outputs: int, step_rad: float, _from=None):
        self.inputs, self.outputs = inputs, outputs
        if _from is not None:
            self.size, self.chirp, self.kernel = _from.size, np.conj(_from.chirp), np.conj(_from.kernel)
            return
        self.size = sfft.next_fast_len(inputs + outputs - 1)
        self.chirp = _chirp(0.5 * step_rad, max(inputs, outputs))  # exp(i step j^2 / 2)
        kernel = np.zeros(self.size, dtype=complex)             # exp(-i step d^2 / 2), d = -(inputs-1) .. outputs-1
        kernel[:outputs] = np.conj(self.chirp[:outputs])
        if inputs > 1:
            kernel[self.size - inputs + 1:] = np.conj(self.chirp[1:inputs][::-1])
        self.kernel = np.fft.fft(kernel)

    def reverse(self) -> _ChirpSums:
        return _ChirpSums(self.outputs, self.inputs, 0.0, _from=self)

    def __call__(self, values: np.ndarray) -> np.ndarray:
        padded = np.zeros(self.size, dtype=complex)
        np.multiply(values, self.chirp[:len(values)], out=padded[:len(values)])
        spectrum = np.fft.fft(padded)
        spectrum *= self.kernel
        return sfft.ifft(spectrum, overwrite_x=True)[:self.outputs] * self.chirp[:self.outputs]


def synchronous_part(x: np.ndarray, fs: float, speed_hz: float) -> np.ndarray:
    """What repeats exactly once per turn, at every turn of ``x``: its lines at the shaft's orders,
    measured over the record's whole revolutions and laid back on every sample.

    This is the time synchronous average laid back on the record, computed
    without resampling: the average of ``count`` revolutions holds exactly the
    Fourier coefficients of the record at the shaft's orders k x speed,
    measured over those revolutions (McFadden 1987: the averaging is a comb
    filter whose teeth sit on the orders). Both the coefficients (the record's
    DFT at the orders) and the sum of their sines at every sample are chirp z
    transforms (Bluestein 1970; Rabiner, Schafer & Rader 1969), done in slices of
    at most ``SAMPLES_PER_SLICE`` samples, two real slices in one complex transform
    (``_paired_coefficients``, ``_paired_sums``). Nothing is interpolated, so nothing depends on
    where a revolution starts between two samples: interpolating near the
    Nyquist frequency (cubic convolution at a quarter of the sample rate and
    above) gives each revolution its own error, and taking such an average out
    of the record left lines between the orders that the record does not hold.

    Parameters
    ----------
    x : numpy.ndarray
        Samples, any unit.
    fs : float
        Sample rate in Hz.
    speed_hz : float
        Shaft speed in Hz (constant).

    Returns
    -------
    numpy.ndarray
        ``len(x)`` samples in the unit of ``x`` (zeros when the record holds no whole revolution).

    References
    ----------
    McFadden (1987), "A revised model for the extraction of periodic waveforms by
    time domain averaging", MSSP 1(1); Randall & Antoni (2011), "Rolling element
    bearing diagnostics - a tutorial", MSSP 25(2), section 3.1 (removing the
    synchronous part before a bearing's envelope analysis); Rabiner, Schafer &
    Rader (1969), "The chirp z-transform algorithm", IEEE Trans. Audio
    Electroacoustics 17(2); ``scipy.signal.czt`` as reference in the tests.

    Examples
    --------
    >>> fs = 1000.0; t = np.arange(2000) / fs; x = np.sin(2 * np.pi * 10 * t + 1) + 0.2 * np.cos(2 * np.pi * 60 * t)
    >>> round(float(np.max(np.abs(x - synchronous_part(x, fs, 10.0)))), 6)      # 1X and 6X are all synchronous
    0.0
    """
    n = len(x)
    count = int(np.floor((n - 1) / fs * speed_hz + 1e-9))
    out = np.zeros(n)
    if count < 1:
        return out
    whole = min(n, int(round(count * fs / speed_hz)))    # samples in the whole revolutions
    orders = int(np.ceil(fs / 2 / speed_hz))               # orders 0 .. orders - 1 lie below fs / 2
    step = 2 * np.pi * speed_hz / fs                       # radians per sample of order 1
    k = np.arange(orders, dtype=float)
    slice_len = _slice_length(n, 2 * orders - 1)
    # orders -(orders - 1) .. orders - 1: the sums over a real slice at -m are the conjugates of those at m,
    # which parts two real slices carried as the real and imaginary parts of one complex one
    forward = _ChirpSums(slice_len, 2 * orders - 1, -step)
    shift = _ramp(step * (orders - 1), slice_len)           # order -(orders - 1) to 0
    coef = np.zeros(orders, dtype=complex)
    for (a, sum_a), (b, sum_b) in _paired_coefficients(x[:whole], slice_len, forward, shift, orders):
        coef += sum_a * np.exp(-1j * step * k * a)
        if sum_b is not None:
            coef += sum_b * np.exp(-1j * step * k * b)
    coef *= 2.0 / whole
    coef[0] *= 0.5
    back = forward.reverse()
    np.conjugate(shift, out=shift)                         # moves order 0 back to -(orders - 1)
    starts = list(range(0, n, slice_len))
    for a, b in zip(starts[0::2], starts[1::2] + [None]):
        both = _two_sided(coef * np.exp(1j * step * k * a))
        if b is not None:
            both += 1j * _two_sided(coef * np.exp(1j * step * k * b))
        sums = back(both)
        sums *= shift
        length = min(n, a + slice_len) - a
        out[a:a + length] = sums.real[:length]
        if b is not None:
            length = min(n, b + slice_len) - b
            out[b:b + length] = sums.imag[:length]
    return out


def _paired_coefficients(x: np.ndarray, slice_len: int, forward: _ChirpSums, shift: np.ndarray, orders: int):
    """For each pair of slices of ``x`` (the last one alone when their count is odd), their chirp sums at
    orders 0 .. ``orders`` - 1 each: ((start, sums), (start or None, sums or None)). The pair goes in as
    one complex slice, a + i b; its sums G at orders m and -m give A(m) = (G(m) + conj G(-m)) / 2 and
    B(m) = (G(m) - conj G(-m)) / 2i, since a and b are real (the Hermitian symmetry of a real signal's
    transform; Press et al., Numerical Recipes, "FFT of two real functions simultaneously")."""
    starts = list(range(0, len(x), slice_len))
    packed = np.empty(slice_len, dtype=complex)
    for a, b in zip(starts[0::2], starts[1::2] + [None]):
        packed[:] = 0.0
        part = x[a:a + slice_len]
        packed.real[:len(part)] = part
        if b is not None:
            part = x[b:b + slice_len]
            packed.imag[:len(part)] = part
        packed *= shift
        g = forward(packed)
        up = g[orders - 1:]                          # G(m), m = 0 .. orders - 1
        down = np.conj(g[orders - 1::-1])            # conj G(-m)
        if b is None:
            yield (a, 0.5 * (up + down)), (None, None)
        else:
            yield (a, 0.5 * (up + down)), (b, -0.5j * (up - down))


def _two_sided(c: np.ndarray) -> np.ndarray:
    """Coefficients at orders -(n - 1) .. n - 1 whose sum of sines is Re(sum_m c_m exp(i m ...)), m = 0 .. n - 1:
    half of c at m > 0, its conjugate's half at -m, the real part of c_0 at 0."""
    m = len(c)
    out = np.empty(2 * m - 1, dtype=complex)
    out[m:] = 0.5 * c[1:]
    out[:m - 1] = 0.5 * np.conj(c[:0:-1])
    out[m - 1] = c[0].real
    return out


def tach_pulse_times(tach, fs: float, pulses_per_rev: int = 1, threshold: float | None = None) -> np.ndarray:
    """Times (s) of the rising threshold crossings of a tach signal, one per revolution.

    The crossing is interpolated between samples; with several pulses per
    revolution every ``pulses_per_rev``-th one is kept.

    Parameters
    ----------
    tach : array_like
        Tach signal, any unit.
    fs : float
        Sample rate in Hz.
    pulses_per_rev : int
        Pulses per revolution.
    threshold : float, optional
        Crossing level (default: halfway between the extremes).

    Returns
    -------
    numpy.ndarray
        Pulse times in s.

    References
    ----------
    Common practice (once-per-revolution tach reference for order analysis);
    Brandt (2011), "Noise and Vibration Analysis", section 12.2.

    Examples
    --------
    >>> tach = np.tile([0.0, 0.0, 1.0, 1.0], 3)
    >>> tach_pulse_times(tach, 4.0).tolist()
    [0.375, 1.375, 2.375]
    """
    tach = np.asarray(tach, dtype=float)
    level = (tach.max() + tach.min()) / 2 if threshold is None else threshold
    above = tach >= level
    idx = np.flatnonzero(~above[:-1] & above[1:])
    frac = (level - tach[idx]) / (tach[idx + 1] - tach[idx])
    return ((idx + frac) / fs)[::pulses_per_rev]


def cut_revolutions(x, fs: float, speed_hz: float | None = None, pulse_times=None,
                    samples_per_rev: int | None = None) -> Revolutions:
    """Resample ``x`` to a fixed number of samples per revolution.

    Give either a constant ``speed_hz`` or ``pulse_times`` (one per revolution,
    from ``tach_pulse_times``). The default samples per revolution is the
    power of two at or above the samples one revolution holds in time.

    Parameters
    ----------
    x : array_like
        Samples, any unit.
    fs : float
        Sample rate in Hz.
    speed_hz : float, optional
        Constant shaft speed in Hz.
    pulse_times : array_like, optional
        One time per revolution, s.
    samples_per_rev : int, optional
        Samples per revolution.

    Returns
    -------
    Revolutions
        (revolutions, samples per revolution) and the mean speed in Hz.

    References
    ----------
    McFadden (1987), "A revised model for the extraction of periodic waveforms by
    time domain averaging", MSSP 1(1).

    Examples
    --------
    >>> fs = 1000.0; x = np.sin(2 * np.pi * 10 * np.arange(1000) / fs)
    >>> revs = cut_revolutions(x, fs, speed_hz=10.0)
    >>> revs.count, revs.samples_per_rev, revs.speed_hz
    (9, 128, 10.0)
    """
    x = np.asarray(x, dtype=float)
    duration = (len(x) - 1) / fs
    if pulse_times is None:
        if not speed_hz or not np.isfinite(speed_hz) or speed_hz <= 0:
            raise ValueError("cut_revolutions needs a positive speed_hz or pulse_times")
        if duration * speed_hz < 1:
            raise ValueError("the record holds less than one revolution")
        spr = samples_per_rev or default_samples_per_rev(fs, speed_hz)
        return Revolutions(revolution_rows(x, fs, speed_hz, spr), float(speed_hz))
    from scipy.interpolate import CubicSpline

    starts = np.asarray(pulse_times, dtype=float)
    starts = starts[(starts >= 0) & (starts <= duration)]
    n_revs = len(starts) - 1
    if n_revs < 1:
        raise ValueError("the record holds less than one revolution")
    mean_period = (starts[-1] - starts[0]) / n_revs
    spr = samples_per_rev or int(2 ** np.ceil(np.log2(mean_period * fs)))
    t = np.arange(len(x)) / fs
    phase = np.arange(spr) / spr
    times = starts[:-1, None] + phase[None, :] * np.diff(starts)[:, None]
    return Revolutions(CubicSpline(t, x)(times), 1.0 / mean_period)


def synchronous_average(x, fs: float, speed_hz: float | None = None, pulse_times=None,
                        samples_per_rev: int | None = None) -> tuple[np.ndarray, int]:
    """Time synchronous average of ``x``: one revolution, and how many were averaged.

    Parameters
    ----------
    x : array_like
        Samples, any unit.
    fs : float
        Sample rate in Hz.
    speed_hz : float, optional
        Constant shaft speed in Hz.
    pulse_times : array_like, optional
        One time per revolution, s.
    samples_per_rev : int, optional
        Samples per revolution.

    Returns
    -------
    tuple
        The average revolution (unit of ``x``) and the number of revolutions.

    References
    ----------
    McFadden (1987), "A revised model for the extraction of periodic waveforms by
    time domain averaging", MSSP 1(1). Noise falls by about sqrt(revolutions).

    Examples
    --------
    >>> fs = 1000.0; t = np.arange(10000) / fs
    >>> x = np.sin(2 * np.pi * 10 * t) + np.random.default_rng(0).standard_normal(len(t))
    >>> tsa, count = synchronous_average(x, fs, speed_hz=10.0, samples_per_rev=100)
    >>> count, bool(np.max(np.abs(tsa - np.sin(2 * np.pi * np.arange(100) / 100))) < 0.5)
    (99, True)
    """
    revs = cut_revolutions(x, fs, speed_hz, pulse_times, samples_per_rev)
    return revs.average(), revs.count


@dataclass(frozen=True)
class SynchronousEvents:
    """What repeats once per turn of a shaft, from the TSA difference signal."""

    revolutions: int
    fm4: float                # kurtosis of the TSA difference signal (about 3 when healthy)
    peak_to_rms: float
    peak_angle_deg: float     # of the largest event, from the start of the record
    repeat_fraction: float    # share of turns whose own largest spike is within 36 degrees of it
    order_tracked: bool = False   # turns cut at a mesh line's tracked angle (the speed wandered), not at one speed


def difference_signals(rows: np.ndarray, mesh_orders: list[int]) -> np.ndarray:
    """Each revolution less its low orders (0-3) and each mesh harmonic with its first sidebands.

    Parameters
    ----------
    rows : numpy.ndarray
        Revolutions, (count, samples per revolution), any unit.
    mesh_orders : list of int
        Teeth of each gear on the shaft (its mesh orders).

    Returns
    -------
    numpy.ndarray
        The difference signals, same shape and unit.

    References
    ----------
    Stewart (1977), "Some useful data analysis techniques for gearbox
    diagnostics" (the difference signal and FM4).

    Examples
    --------
    >>> k = np.arange(64) / 64
    >>> rows = np.tile(np.sin(2 * np.pi * 20 * k) + np.sin(2 * np.pi * 2 * k), (3, 1))
    >>> round(float(np.max(np.abs(difference_signals(rows, [20])))), 9)   # mesh and 2X both removed
    0.0
    """
    spec = sfft.rfft(rows, axis=1)
    orders = np.arange(spec.shape[1])
    drop = np.isin(orders, LOW_ORDERS)
    for z in mesh_orders:
        if z > 0:
            r = orders % z
            drop |= (orders >= z - 1) & ((r == 0) | (r == 1) | (r == z - 1))
    spec[:, drop] = 0.0
    return sfft.irfft(spec, rows.shape[1], axis=1)


def synchronous_events(x: np.ndarray, fs: float, speed_hz: float, samples_per_rev: int,
                       mesh_orders: list[int]) -> SynchronousEvents | None:
    """FM4, peak over RMS, peak angle and repeatability of the TSA difference signal of one shaft.

    Each revolution's difference signal is formed from its own spectrum (one
    batched FFT); their average is the difference signal of the TSA. None
    when the record holds no whole revolution or the difference is empty.

    Parameters
    ----------
    x : numpy.ndarray
        Samples, any unit.
    fs : float
        Sample rate in Hz.
    speed_hz : float
        Shaft speed in Hz.
    samples_per_rev : int
        Samples per revolution.
    mesh_orders : list of int
        Teeth of each gear on the shaft.

    Returns
    -------
    SynchronousEvents or None
        Revolutions, FM4 (about 3 when healthy), peak over RMS, peak angle in
        degrees and the share of turns whose own largest spike lies within 36
        degrees of it.

    References
    ----------
    Stewart (1977); McFadden (1987), "A revised model for the extraction of periodic waveforms by
    time domain averaging", MSSP 1(1).

    Examples
    --------
    >>> fs = 2048.0; x = np.zeros(20480); x[512::256] = 1.0          # one spike per turn at 8 Hz
    >>> e = synchronous_events(x, fs, 8.0, 256, [17])
    >>> e.revolutions, round(e.peak_angle_deg), e.repeat_fraction, e.fm4 > 10
    (79, 0, 1.0, True)
    """
    return events_of_rows(revolution_rows(np.asarray(x, dtype=float), fs, speed_hz, samples_per_rev), mesh_orders)


def events_of_rows(rows: np.ndarray, mesh_orders: list[int]) -> SynchronousEvents | None:
    """``synchronous_events`` of revolutions already cut (shafts at one speed share their rows).

    Parameters
    ----------
    rows : numpy.ndarray
        Revolutions, (count, samples per revolution), any unit.
    mesh_orders : list of int
        Teeth of each gear on the shaft.

    Returns
    -------
    SynchronousEvents or None
        As ``synchronous_events``.

    References
    ----------
    Stewart (1977); McFadden (1987), "A revised model for the extraction of periodic waveforms by
    time domain averaging", MSSP 1(1).

    Examples
    --------
    >>> rows = np.zeros((10, 64)); rows[:, 16] = 1.0                   # a spike a quarter turn in
    >>> e = events_of_rows(rows, [])
    >>> e.revolutions, e.peak_angle_deg, e.repeat_fraction
    (10, 90.0, 1.0)
    """
    if len(rows) == 0:
        return None
    samples_per_rev = rows.shape[1]
    rows = difference_signals(rows, mesh_orders)
    diff = rows.mean(axis=0)
    sq = diff * diff
    m2 = float(sq.mean())
    if m2 == 0:
        return None
    rms = np.sqrt(m2)
    peak_at = int(np.argmax(np.abs(diff)))
    maxima = np.argmax(np.abs(rows), axis=1)
    distance = np.abs(((maxima - peak_at) / samples_per_rev + 0.5) % 1.0 - 0.5)
    return SynchronousEvents(
        revolutions=len(rows), fm4=float(np.mean(sq * sq) / (m2 * m2)),
        peak_to_rms=float(np.max(np.abs(diff)) / rms), peak_angle_deg=360.0 * peak_at / samples_per_rev,
        repeat_fraction=float(np.mean(distance <= REPEAT_WINDOW)))
