"""Belt faults: belt-pass harmonics, the second the strongest, and the driven sheave's 1X
(common practice: a worn or mismatched belt shows at 2 x belt pass)."""

from __future__ import annotations

import numpy as np

from ..machine import Point
from .signal import Part, Scene, velocity_tone_accel

AWAY = 0.3
HARMONICS_MM_S = ((1, 1.2), (2, 2.0), (3, 0.8), (4, 0.4))   # belt-pass order, mm/s RMS per stage


def worn(s: Scene, belt_id: str, stage: int) -> Part:
    """Belt-pass harmonics 1 to 4 (the second the strongest, 2 mm/s RMS x stage) and the driven shaft's 1X."""
    belt = next(b for b in s.rates.belts if b.belt == belt_id)
    bpf = belt.belt_pass_hz

    def add(x: np.ndarray, point: Point) -> None:
        gain = 1.0 if s.near(point) else AWAY
        for k, v in HARMONICS_MM_S:
            x += gain * stage * s.tone(k * bpf, velocity_tone_accel(v, k * bpf), s.rng.uniform(0, 6.3))
        x += gain * s.shaft_tone(belt.driven_shaft, 1, 0.8 * stage)
    return Part(add)
