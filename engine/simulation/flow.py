"""Flow faults of pumps and fans: vane or blade pass and its second harmonic raised (a vane
passing too close to the cutwater or a disturbed inflow; common practice)."""

from __future__ import annotations

import numpy as np

from ..machine import Point
from .signal import Part, Scene

AWAY = 0.3


def vane_pass(s: Scene, rotor_id: str, stage: int) -> Part:
    """Vane or blade pass at 1.5 mm/s RMS x stage, its second harmonic at 0.6 mm/s RMS x stage."""
    rotor = next(r for r in s.rates.rotors if r.rotor == rotor_id)

    def add(x: np.ndarray, point: Point) -> None:
        gain = 1.0 if s.near(point) else AWAY
        x += gain * s.velocity_tone(rotor.pass_hz, 1.5 * stage, s.rng.uniform(0, 6.3))
        x += gain * s.velocity_tone(2 * rotor.pass_hz, 0.6 * stage, s.rng.uniform(0, 6.3))
    return Part(add)
