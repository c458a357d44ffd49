"""Electrical faults of induction motors: a stator fault raises twice line frequency; broken
rotor bars modulate 1X at the pole pass frequency, putting sidebands beside it.

Magnetic forces act radially across the air gap, so an axial point sees a
quarter of them (common practice).
"""

from __future__ import annotations

import numpy as np

from ..machine import Point
from .signal import Part, Scene, velocity_tone_accel

AWAY = 0.2
AXIAL = 0.25
ROTOR_BAR_1X_MM_S = 1.2     # 1X the broken-bar model adds, mm/s RMS


def rotor_bar_sideband_db(stage: int) -> float:
    """First pole-pass sideband below 1X in dB: -23 dB at stage 1 rising 5 dB a stage.

    Amplitude modulation of depth m puts each sideband at m/2 of its carrier, so
    a sideband can never stand above -6 dB; broken bars modulate 1X by a few to
    some tens of percent (common practice), -23 to -8 dB over the four stages.
    """
    return -28.0 + 5.0 * stage


def _gain(s: Scene, point: Point) -> float:
    gain = 1.0 if s.near(point) else AWAY
    if point.direction == "axial":
        gain *= AXIAL
    return gain


def _motor(s: Scene, motor_id: str):
    return next(m for m in s.rates.motors if m.motor == motor_id)


def stator(s: Scene, motor_id: str, stage: int) -> Part:
    """Twice line frequency at 1.5 mm/s RMS x stage."""
    f2 = _motor(s, motor_id).twice_line_hz

    def add(x: np.ndarray, point: Point) -> None:
        x += _gain(s, point) * s.tone(f2, velocity_tone_accel(1.5 * stage, f2))
    return Part(add)


def rotor_bar(s: Scene, motor_id: str, stage: int) -> Part:
    """First and second pole-pass sidebands round 1X, and 1X raised at the motor's own points."""
    motor = _motor(s, motor_id)
    fr, fp = s.speeds[motor.shaft], motor.pole_pass_hz

    def add(x: np.ndarray, point: Point) -> None:
        gain = _gain(s, point)
        if s.near(point):    # the magnetic pull raises 1X at the motor's own bearings; sidebands travel on
            x += gain * s.shaft_tone(motor.shaft, 1, ROTOR_BAR_1X_MM_S)
        for k in (1, 2):
            side_mm_s = ROTOR_BAR_1X_MM_S * 10 ** (rotor_bar_sideband_db(stage) / 20) / k
            for sgn in (-1, 1):
                f = fr + sgn * k * fp
                x += gain * s.tone(f, velocity_tone_accel(side_mm_s, f), s.rng.uniform(0, 6.3))
    return Part(add)
