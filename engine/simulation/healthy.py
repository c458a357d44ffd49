"""The healthy machine every fault sits on: residual unbalance, a little 2X and 3X, the meshes and
each gear's tooth-to-tooth irregularity, vane pass and twice line frequency at low levels, broadband
noise and a structural resonance."""

from __future__ import annotations

import numpy as np

from ..machine import Point
from .signal import G, Scene, direction_phase, velocity_tone_accel

# No two teeth of a sound gear are alike (spacing and profile errors within the gear's quality grade), so
# the mesh force repeats, once per turn of each gear, a noise-like pattern of small deviations from the
# mean mesh: it survives the gear's time synchronous average, and its difference signal (the average less
# the mesh harmonics) is near Gaussian, FM4 about 3 for a sound gear (Stewart 1977; the check-values note).
# Without it the average of a simulated gear holds only the non-synchronous noise that averaging removes,
# and any tooth event, however small, stands alone in it (FM4 near 80 at every damage stage). The pattern
# is Gaussian, TOOTH_SCATTER_G RMS (g, invented: under the broadband noise in the raw waveform, above what
# 30 or more turns of averaging leave of that noise), in a band round the structural resonance the
# deviations ring (an octave wide, so nothing reaches the mesh lines and their sidebands).
TOOTH_SCATTER_G = 0.01
OVERSAMPLE = 4     # the pattern's points per sample of the record: the turn is read off it by linear interpolation


def _turn_pattern(s: Scene, rng: np.random.Generator, shaft_hz: float) -> np.ndarray:
    """One gear's pattern laid on the record: a function of the shaft's angle alone, so it repeats
    exactly once per turn (lines at the shaft's orders only, whatever the interpolation does)."""
    points = OVERSAMPLE * int(np.ceil(s.fs / shaft_hz))
    spectrum = np.fft.rfft(rng.standard_normal(points))
    f = np.fft.rfftfreq(points, 1.0 / (points * shaft_hz))
    spectrum *= np.exp(-0.5 * ((f - s.resonance_hz) / (0.25 * s.resonance_hz)) ** 2)
    turn = np.fft.irfft(spectrum, points)
    turn *= TOOTH_SCATTER_G * G / np.sqrt(np.mean(turn ** 2))
    where = ((s.t * shaft_hz + rng.uniform(0, 1)) % 1.0) * points
    return np.interp(where, np.arange(points + 1), np.append(turn, turn[0]))


def gear_signatures(s: Scene) -> dict[str, np.ndarray]:
    """Each mesh's two gears' tooth-to-tooth irregularity (m/s^2), by mesh id; drawn once per scene from a
    stream of its own (spawned: the scene's stream, and every other draw, stay as they were)."""
    if s.rates.meshes and not s.gear_signatures:
        rng = s.rng.spawn(1)[0]
        for mesh in s.rates.meshes:
            s.gear_signatures[mesh.mesh] = (_turn_pattern(s, rng, s.speeds[mesh.driving_shaft])
                                            + _turn_pattern(s, rng, s.speeds[mesh.driven_shaft]))
    return s.gear_signatures


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
        x += near * gear_signatures(s)[mesh.mesh]
    for rotor in s.rates.rotors:
        near = 1.0 if point.shaft == rotor.shaft else 0.3
        x += near * s.velocity_tone(rotor.pass_hz, 0.3, s.rng.uniform(0, 6.3))
    for motor in s.rates.motors:
        x += 0.5 * s.tone(motor.twice_line_hz, velocity_tone_accel(0.1, motor.twice_line_hz))
    white = 0.004 * G * s.rng.standard_normal(s.n)
    b, a = signal.iirpeak(s.resonance_hz, Q=8, fs=s.fs)
    hump = 0.01 * G * signal.lfilter(b, a, s.rng.standard_normal(s.n)) * 3
    return x + white + hump
