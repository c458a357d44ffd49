"""What a simulation returns: the channels, the measurement points and the ground truth."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..machine import Point


@dataclass(frozen=True)
class Truth:
    """The ground truth: fault, component, stage, speed (r/min), seed, sample rate (Hz), length (s), further faults."""

    fault: str
    component: str | None
    stage: int
    speed_rpm: float
    seed: int
    fs_hz: float
    duration_s: float
    also: tuple = ()        # further faults present at the same time: (fault, component, stage)

    def as_dict(self) -> dict:
        """The truth as a plain dict (the truth file's content), ``also`` as lists."""
        out = {k: getattr(self, k) for k in self.__dataclass_fields__}
        if isinstance(out.get("speed_rpm"), float):    # a speed scaled through ratios: 985.0000000000001
            out["speed_rpm"] = round(out["speed_rpm"], 6)
        out["also"] = [list(x) for x in self.also]
        return out


@dataclass
class Simulation:
    """One simulation: acceleration channels (m/s^2) by name, their points, the truth and model internals."""

    fs_hz: float
    channels: dict[str, np.ndarray]          # acceleration, m/s^2
    points: dict[str, Point]                  # channel name -> measurement point
    truth: Truth
    speed_rpm: float
    extra: dict = field(default_factory=dict)  # model internals tests can check (impact times)
