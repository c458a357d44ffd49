"""Acquisition settings: Fmax, lines, sample rate and the waveform's length, kept consistent.

By the trade's conventions (common practice, check-values "Acquisition"):
sample rate = 2.56 x Fmax, resolution = Fmax / lines, one record lasts
lines / Fmax seconds and holds 2.56 x lines samples. The waveform tellwave
analyses may be longer than one record (several averages, or a long record
for a synchronous average).
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass

from ..common.errors import UsageError
from ..readings.limits import MAX_SAMPLE_RATE_HZ, MIN_SAMPLE_RATE_HZ, sample_limit
from .policy import Policy


@dataclass(frozen=True)
class Settings:
    """One way to take a reading. ``duration_s`` is the waveform's length."""

    fmax_hz: float
    lines: int
    sample_rate_hz: float
    duration_s: float
    label: str                 # proposed, given, or the reading file

    @property
    def resolution_hz(self) -> float:
        """Line spacing of the spectrum, Fmax / lines."""
        return self.fmax_hz / self.lines

    @property
    def record_s(self) -> float:
        """One record (one average), lines / Fmax."""
        return self.lines / self.fmax_hz

    @property
    def nyquist_hz(self) -> float:
        """Half the sample rate, Hz."""
        return self.sample_rate_hz / 2

    @property
    def n_samples(self) -> int:
        """Samples in the waveform: duration x sample rate."""
        return int(round(self.duration_s * self.sample_rate_hz))

    def as_dict(self) -> dict:
        """A plain dict of the settings, with the resolution, record length and sample count."""
        return asdict(self) | {"resolution_hz": self.resolution_hz, "record_s": self.record_s,
                               "n_samples": self.n_samples}


def _positive(name: str, value) -> None:
    if value is not None and not (math.isfinite(value) and value > 0):
        raise UsageError(f"{name} must be a positive number, got {value}")


def given_settings(policy: Policy, fmax_hz: float | None = None, lines: int | None = None,
                   sample_rate_hz: float | None = None, duration_s: float | None = None,
                   label: str = "given", max_samples: int | None = None) -> Settings:
    """Complete the settings a user gave, by the policy's 2.56 rule where one is missing.

    Fmax or the sample rate must be given, and lines or the duration. They
    must describe a reading tellwave could read (``engine.readings.limits``):
    a sample rate at most ``MAX_SAMPLE_RATE_HZ`` and a waveform of at most
    ``max_samples`` samples (default ``MAX_SAMPLES_PER_CHANNEL``), else
    ``UsageError`` before anything is computed.
    """
    for name, value in (("--fmax", fmax_hz), ("--lines", lines), ("--sample-rate", sample_rate_hz),
                        ("--duration", duration_s)):
        _positive(name, value)
    k = policy.sample_rate_per_fmax
    if fmax_hz is None and sample_rate_hz is None:
        raise UsageError("give --fmax or --sample-rate (or --reading FILE) to check settings")
    if lines is None and duration_s is None:
        raise UsageError("give --lines or --duration (or --reading FILE) to check settings")
    if sample_rate_hz is not None:
        fs = sample_rate_hz
    else:
        assert fmax_hz is not None      # one of the two is given, checked above
        fs = k * fmax_hz
    fmax = fmax_hz if fmax_hz is not None else fs / k
    if fmax > fs / 2:
        raise UsageError(f"Fmax {fmax:g} Hz lies above half the sample rate ({fs / 2:g} Hz)")
    if fs < MIN_SAMPLE_RATE_HZ:
        raise UsageError(f"a sample rate of {fs:g} Hz (Fmax {fmax:g} Hz) is less than a reading may have "
                         f"({MIN_SAMPLE_RATE_HZ:g} Hz, Fmax {MIN_SAMPLE_RATE_HZ / k:g} Hz)")
    if fs > MAX_SAMPLE_RATE_HZ:
        raise UsageError(f"a sample rate of {fs:g} Hz (Fmax {fmax:g} Hz) is more than any vibration recorder "
                         f"takes ({MAX_SAMPLE_RATE_HZ:g} Hz, Fmax {MAX_SAMPLE_RATE_HZ / k:g} Hz)")
    limit = sample_limit(max_samples).per_channel
    record = (lines / fmax if lines is not None else 0.0)
    longest = max(record, duration_s or 0.0)
    if longest * fs > limit:
        what = f"one record of {lines} lines" if record >= (duration_s or 0.0) else "a waveform"
        raise UsageError(f"{what} of {longest:g} s at {fs:g} Hz is {longest * fs:.4g} samples; a reading holds at most "
                         f"{limit} (engine/readings/limits.py; --max-samples raises it)")
    if lines is None:
        assert duration_s is not None   # one of the two is given, checked above
        lines = max(1, int(round(duration_s * fmax)))
    if duration_s is None:
        duration_s = lines / fmax
    if duration_s < 0.999 * lines / fmax:
        raise UsageError(f"one record of {lines} lines at Fmax {fmax:g} Hz lasts {lines / fmax:g} s, "
                         f"longer than --duration {duration_s:g} s")
    return Settings(float(fmax), int(lines), float(fs), float(duration_s), label)


def reading_settings(policy: Policy, fs_hz: float, n_samples: int, label: str) -> Settings:
    """The settings a reading was taken with: Fmax = fs / 2.56, lines = samples / 2.56."""
    k = policy.sample_rate_per_fmax
    return Settings(fs_hz / k, max(1, int(n_samples / k)), float(fs_hz), n_samples / fs_hz, label)
