"""The waveform in the angle domain: revolutions and time synchronous averaging.

Resampling the record at a fixed number of samples per shaft revolution
lines each revolution up with the next; averaging them (time synchronous
averaging, TSA) keeps what repeats once per turn and suppresses everything
else by about sqrt(number of revolutions) (McFadden 1987, "A revised model
for the extraction of periodic waveforms by time domain averaging", MSSP 1).
Speed comes either as a constant (Hz) or from a tach channel's pulses.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.interpolate import CubicSpline


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
    t = np.arange(len(x)) / fs
    if pulse_times is None:
        if not speed_hz or speed_hz <= 0:
            raise ValueError("cut_revolutions needs a positive speed_hz or pulse_times")
        n_revs = int(np.floor(t[-1] * speed_hz))
        starts = np.arange(n_revs + 1) / speed_hz
    else:
        starts = np.asarray(pulse_times, dtype=float)
        starts = starts[(starts >= 0) & (starts <= t[-1])]
        n_revs = len(starts) - 1
    if n_revs < 1:
        raise ValueError("the record holds less than one revolution")
    mean_period = (starts[-1] - starts[0]) / n_revs
    if samples_per_rev is None:
        samples_per_rev = int(2 ** np.ceil(np.log2(mean_period * fs)))
    spline = CubicSpline(t, x)
    phase = np.arange(samples_per_rev) / samples_per_rev
    times = starts[:-1, None] + phase[None, :] * np.diff(starts)[:, None]
    return Revolutions(spline(times), 1.0 / mean_period)


def synchronous_average(x, fs: float, speed_hz: float | None = None, pulse_times=None,
                        samples_per_rev: int | None = None) -> tuple[np.ndarray, int]:
    """Time synchronous average of ``x``: one revolution, and how many were averaged."""
    revs = cut_revolutions(x, fs, speed_hz, pulse_times, samples_per_rev)
    return revs.average(), revs.count
