"""Shaft faults: sums of shaft-order sinusoids (Randall 2011, "Vibration-based Condition
Monitoring", Wiley, ch. 2).

Unbalance rises with the speed squared; angular misalignment is strong axial
1X and 2X; parallel (offset) misalignment is a radial 2X above 1X; rotating
looseness is a truncated waveform rich in harmonics and half orders;
structural looseness (a weak support direction) is a 1X several times
stronger horizontally than vertically.
"""

from __future__ import annotations

import numpy as np

from ..machine import Point
from .signal import Part, Scene, direction_phase

AWAY = 0.25          # a shaft fault seen from a point on another shaft
SUPPORT_AWAY = 0.15  # a loose support seen from a point at another bearing
OVERHUNG_AXIAL = 1.0  # an overhung rotor's unbalance rocks the shaft: axial 1X as high as radial (common practice)


def _on_shaft(s: Scene, shaft: str, signal_at) -> Part:
    """A fault on ``shaft`` whose signal at a point is ``signal_at(point)``, weaker away from the shaft."""
    def add(x: np.ndarray, point: Point) -> None:
        x += signal_at(point) * (1.0 if s.near(point) else AWAY)
    return Part(add)


def unbalance(s: Scene, shaft: str, stage: int) -> Part:
    """1X at 2 mm/s RMS x stage x (speed / nominal)^2 radially, 15 % of it axially; on a shaft whose
    rotor is overhung, ``OVERHUNG_AXIAL`` of it axially."""
    overhung = any(r.overhung and r.shaft == shaft for r in s.machine.rotors)
    axial = OVERHUNG_AXIAL if overhung else 0.15

    def at(point: Point) -> np.ndarray:
        radial = point.direction != "axial"
        v = 2.0 * stage * s.speed_scale ** 2
        return s.shaft_tone(shaft, 1, v if radial else axial * v, direction_phase(point.direction))
    return _on_shaft(s, shaft, at)


def misalignment_angular(s: Scene, shaft: str, stage: int) -> Part:
    """1X, 2X and 3X, 2X the strongest at 1.5 mm/s RMS x stage, 1.6 times stronger axially."""
    def at(point: Point) -> np.ndarray:
        ph = direction_phase(point.direction)
        v = 1.5 * stage
        axial_gain = 1.6 if point.direction == "axial" else 1.0
        return (s.shaft_tone(shaft, 1, 0.6 * v * axial_gain, ph)
                + s.shaft_tone(shaft, 2, v * axial_gain, 2 * ph + 0.4)
                + s.shaft_tone(shaft, 3, 0.3 * v * axial_gain, 3 * ph + 0.9))
    return _on_shaft(s, shaft, at)


def misalignment_parallel(s: Scene, shaft: str, stage: int) -> Part:
    """Radial 2X at 1.8 mm/s RMS x stage above 1X and 3X; axially 35 % of that."""
    def at(point: Point) -> np.ndarray:
        ph = direction_phase(point.direction)
        v = 1.5 * stage
        gain = 1.0 if point.direction != "axial" else 0.35
        return gain * (s.shaft_tone(shaft, 1, 0.5 * v, ph) + s.shaft_tone(shaft, 2, 1.2 * v, 2 * ph + 0.4)
                       + s.shaft_tone(shaft, 3, 0.25 * v, 3 * ph + 0.9))
    return _on_shaft(s, shaft, at)


def looseness_rotating(s: Scene, shaft: str, stage: int) -> Part:
    """1X, harmonics to 10X and half orders, the waveform truncated on one side."""
    def at(point: Point) -> np.ndarray:
        ph = direction_phase(point.direction)
        v = 1.0 * stage
        x = s.shaft_tone(shaft, 1, 2.0 * v, ph)
        for k in range(2, 11):
            x += s.shaft_tone(shaft, k, v * 0.9 ** k, k * ph + s.rng.uniform(0, 6.3))
        for half in (0.5, 1.5, 2.5, 3.5):
            x += s.shaft_tone(shaft, half, 0.35 * v, s.rng.uniform(0, 6.3))
        # rocking on a loose foot: the response is truncated on one side
        limit = 0.6 * np.max(x)
        x = np.minimum(x, limit)
        return x - x.mean()
    return _on_shaft(s, shaft, at)


def looseness_structural(s: Scene, bearing: str, stage: int) -> Part:
    """A loose foot or a weak base under ``bearing``: strongest at the points on that bearing."""
    shaft = next(b.shaft for b in s.machine.bearings if b.id == bearing)

    def add(x: np.ndarray, point: Point) -> None:
        ph = direction_phase(point.direction)
        v = 1.4 * stage
        gain = {"horizontal": 1.0, "vertical": 0.12, "axial": 0.1}[point.direction]
        x += (gain * (s.shaft_tone(shaft, 1, v, ph) + s.shaft_tone(shaft, 2, 0.15 * v, 2 * ph + 0.2))
              * (1.0 if point.at == bearing else SUPPORT_AWAY))
    return Part(add)
