"""The healthy machine every fault sits on: residual unbalance, a little 2X and 3X, the meshes,
vane pass and twice line frequency at low levels, broadband noise and a structural resonance."""

from __future__ import annotations

import numpy as np

from ..machine import Point
from .signal import G, Scene, direction_phase, velocity_tone_accel


def background(s: Scene, point: Point) -> np.ndarray:
    """The healthy signal at ``point``: the nearer a source's shaft, the stronger it shows."""
    from scipy import signal

    x = np.zeros(s.n)
    radial = point.direction != "axial"
    for shaft in s.speeds:
        near = 1.0 if shaft == point.shaft else 0.3
        ph = direction_phase(point.direction) + s.rng.uniform(0, 2 * np.pi)
        x += near * s.shaft_tone(shaft, 1, 0.6 if radial else 0.3, ph)
        x += near * s.shaft_tone(shaft, 2, 0.2, 2 * ph + 0.3)
        x += near * s.shaft_tone(shaft, 3, 0.08, 3 * ph + 0.7)
    for mesh in s.rates.meshes:
        near = 1.0 if point.shaft in (mesh.driving_shaft, mesh.driven_shaft) else 0.3
        x += near * s.tone(mesh.gmf_hz, 0.08 * G, s.rng.uniform(0, 6.3))
        x += near * s.tone(2 * mesh.gmf_hz, 0.03 * G, s.rng.uniform(0, 6.3))
    for rotor in s.rates.rotors:
        near = 1.0 if point.shaft == rotor.shaft else 0.3
        x += near * s.velocity_tone(rotor.pass_hz, 0.3, s.rng.uniform(0, 6.3))
    for motor in s.rates.motors:
        x += 0.5 * s.tone(motor.twice_line_hz, velocity_tone_accel(0.1, motor.twice_line_hz))
    white = 0.004 * G * s.rng.standard_normal(s.n)
    b, a = signal.iirpeak(s.resonance_hz, Q=8, fs=s.fs)
    hump = 0.01 * G * signal.lfilter(b, a, s.rng.standard_normal(s.n)) * 3
    return x + white + hump
