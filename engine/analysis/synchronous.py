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
cubic-spline interpolation.

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
        return self.samples.shape[0]

    @property
    def samples_per_rev(self) -> int:
        return self.samples.shape[1]

    def average(self) -> np.ndarray:
        """The time synchronous average: one revolution."""
        return self.samples.mean(axis=0)


def default_samples_per_rev(fs: float, speed_hz: float) -> int:
    """The power of two at or above the samples one revolution holds in time."""
    return int(2 ** np.ceil(np.log2(fs / speed_hz)))


def keys_weights(u: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Weights of samples i-1, i, i+1, i+2 for a point u (0 <= u < 1) past sample i (Keys, a = -0.5)."""
    u2 = u * u
    u3 = u2 * u
    return (0.5 * (2 * u2 - u3 - u), 0.5 * (3 * u3 - 5 * u2) + 1, 0.5 * (4 * u2 + u - 3 * u3), 0.5 * (u3 - u2))


def resample_at(x: np.ndarray, positions: np.ndarray) -> np.ndarray:
    """``x`` at fractional sample ``positions`` by cubic convolution (ends held)."""
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
SAMPLES_PER_SLICE = 1 << 16


def revolution_rows(x: np.ndarray, fs: float, speed_hz: float, samples_per_rev: int) -> np.ndarray:
    """The whole revolutions of ``x`` at a constant ``speed_hz``, one per row, from t = 0."""
    count = int(np.floor((len(x) - 1) / fs * speed_hz + 1e-9))
    rows = np.empty((count, samples_per_rev))
    step = fs / (speed_hz * samples_per_rev)          # input samples per output sample
    phase = np.arange(samples_per_rev) * step
    for start in range(0, count, ROWS_PER_SLICE):
        stop = min(count, start + ROWS_PER_SLICE)
        turn_start = np.arange(start, stop)[:, None] * (fs / speed_hz)
        rows[start:stop] = resample_at(x, turn_start + phase[None, :])
    return rows


def synchronous_part(rows: np.ndarray, n: int, fs: float, speed_hz: float) -> np.ndarray:
    """The time synchronous average of ``rows`` (from ``revolution_rows``) laid back on the record's
    ``n`` samples: what repeats exactly once per turn, at every turn.

    Subtracted from the record it leaves the part that does not repeat with
    the shaft (bearing impacts, with their random slip), the way gear signals
    are removed before a bearing's envelope analysis (Randall & Antoni 2011,
    "Rolling element bearing diagnostics - a tutorial", MSSP 25(2), section
    3.1; McFadden 1987 for the average). Each sample's angle is its time times
    the speed, from the first revolution's start at t = 0; the average is
    read there by cubic convolution, periodically.
    """
    tsa = rows.mean(axis=0)
    spr = len(tsa)
    periodic = np.concatenate((tsa[-1:], tsa, tsa[:2]))
    out = np.empty(n)
    for start in range(0, n, SAMPLES_PER_SLICE):      # in slices: the interpolation's temporaries stay small
        positions = np.arange(start, min(n, start + SAMPLES_PER_SLICE)) * (speed_hz * spr / fs) % spr
        out[start:start + len(positions)] = resample_at(periodic, positions + 1.0)
    return out


def tach_pulse_times(tach, fs: float, pulses_per_rev: int = 1, threshold: float | None = None) -> np.ndarray:
    """Times (s) of the rising threshold crossings of a tach signal, one per revolution.

    The crossing is interpolated between samples; with several pulses per
    revolution every ``pulses_per_rev``-th one is kept.
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
    """Time synchronous average of ``x``: one revolution, and how many were averaged."""
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


def difference_signals(rows: np.ndarray, mesh_orders: list[int]) -> np.ndarray:
    """Each revolution less its low orders (0-3) and each mesh harmonic with its first sidebands."""
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
    """
    return events_of_rows(revolution_rows(np.asarray(x, dtype=float), fs, speed_hz, samples_per_rev), mesh_orders)


def events_of_rows(rows: np.ndarray, mesh_orders: list[int]) -> SynchronousEvents | None:
    """``synchronous_events`` of revolutions already cut (shafts at one speed share their rows)."""
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
