"""The ``Reading`` value every reader returns, and the quality notes it carries."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np


@dataclass(frozen=True)
class QualityIssue:
    """A problem a quality gate found in one channel; data, not an exception.

    ``blocking`` issues (non-finite samples, a dead channel) mean the channel
    cannot be analysed at all; the others mean results need care.
    """

    kind: str          # clipping, dc_offset, drift, dropout, nonfinite, dead, out_of_range,
                       # implausible_level, implausible_spectrum, implausible_slope, too_short
    channel: str
    message: str
    value: float
    blocking: bool = False


@dataclass(frozen=True)
class Channel:
    """One measured signal. ``samples`` are in the SI base of ``quantity``.

    ``unit`` is the unit the file was recorded in (shown to the user);
    ``full_scale_si`` is the recorder's full scale in SI units where the file
    format states it (PCM WAV), which makes clipping exact to detect.
    """

    name: str
    samples: np.ndarray
    quantity: str      # acceleration, velocity or displacement
    unit: str
    point: str | None = None
    direction: str | None = None
    full_scale_si: float | None = None


@dataclass(frozen=True)
class PhaseReading:
    """One 1X phase reading as a sidecar or route states it (not measured from the samples).

    ``point`` is a measurement point of the machine or a bearing (then ``direction`` says
    which way); ``phase_deg`` is the 1X phase against the once-per-revolution mark, in
    degrees; ``amplitude_mm_s_rms`` the 1X velocity it was read with, mm/s RMS, if stated.
    ``file`` and ``line`` say where it was written, for errors.
    """

    point: str
    direction: str | None
    phase_deg: float
    amplitude_mm_s_rms: float | None
    file: str
    line: int | None = None


@dataclass(frozen=True)
class Reading:
    """One acquisition: channels sampled together at ``fs_hz``."""

    source: str
    fs_hz: float
    channels: tuple[Channel, ...]
    speed_rpm: float | None = None
    timestamp: str | None = None
    quality: tuple[QualityIssue, ...] = field(default=())
    phase_1x: tuple[PhaseReading, ...] = field(default=())   # 1X phase readings the sidecar or route gives

    @property
    def n_samples(self) -> int:
        """Samples per channel (every channel has as many)."""
        return len(self.channels[0].samples)

    @property
    def duration_s(self) -> float:
        """Length of the record in seconds."""
        return self.n_samples / self.fs_hz

    def channel(self, name: str) -> Channel:
        """The channel of this name; a ReadingError naming the channels there are if none."""
        for ch in self.channels:
            if ch.name == name:
                return ch
        from ..common.errors import ReadingError
        known = ", ".join(c.name for c in self.channels)
        raise ReadingError(f"no channel {name!r}; channels are {known}", path=self.source)

    def issues_for(self, channel: str) -> list[QualityIssue]:
        """The data-quality issues found on one channel."""
        return [q for q in self.quality if q.channel == channel]
