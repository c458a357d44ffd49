"""Gear faults (Randall 2011, "Vibration-based Condition Monitoring", Wiley, ch. 2 and 5).

Gears mesh at GMF with harmonics; eccentricity modulates the mesh at the
gear's shaft speed; a local tooth fault adds a once-per-revolution impact;
distributed wear raises GMF harmonics and spreads sideband families. The
fault sits on the mesh's driving gear (the pinion) or on its driven gear
(``Scene.gear_side``).
"""

from __future__ import annotations

import numpy as np

from ..machine import Point
from .signal import G, Part, Scene, periodic_impact_signal, resonance_ring

MESH_G = 0.15        # the mesh's own level, g peak
AWAY = 0.2           # seen from a point on a shaft the mesh does not touch
# A damaged tooth by stage: its knock once per turn (g peak) and how much the mesh changes while it is in
# mesh (a fraction of the mesh level; a crack lowers the tooth's stiffness, a chip or spall makes it
# strike). FM4 measures how far one tooth stands out of its peers in the synchronous average (Stewart
# 1977), so the stages are sized against a sound gear's own tooth-to-tooth scatter (healthy.py
# TOOTH_SCATTER_G), not against the noise that averaging removes. An incipient crack (stage 1) barely
# stands out (FM4 about 6 to 11, near the healthy 3: seen, if at all, as a possibility); a distinct chip
# (2) and a spall over much of the face (3) stand out more and more; at a broken tooth (4) the mesh loses
# that tooth's share of the load and its neighbour takes it with a knock (2 g, some thirteen times the mesh's
# own level) that makes the raw waveform impulsive too: FM4 31 to 76 over the demo and test gearboxes
# (at 1 g, some read 25 to 29). The published accounts give no scale of FM4 against
# damage (Lebold et al. 2000); in the NASA gear-rig tests FM4 stayed near 3 until one or two teeth were
# pitted or cracked and rose to tens at a fractured tooth (Zakrajsek et al. 1993; Decker 2002; from
# memory). The old sizes (0.5 to 6 g, mesh changed 80 to 320 %) stood alone in the average at every
# stage: FM4 of 35 to 80 at stage 1, the same at stage 4.
TOOTH_IMPACT_G = {1: 0.06, 2: 0.15, 3: 0.25, 4: 2.0}
TOOTH_MESH_DEPTH = {1: 0.35, 2: 0.85, 3: 1.3, 4: 4.0}


def _mesh_part(s: Scene, x: np.ndarray, extra: dict) -> Part:
    def add(out: np.ndarray, point: Point) -> None:
        out += x * (1.0 if s.near(point) else AWAY)
    return Part(add, extra)


def _faulty_gear(s: Scene, mesh_id: str):
    """The mesh's rates, and the faulty gear's shaft, speed (Hz) and tooth count."""
    mesh = next(m for m in s.rates.meshes if m.mesh == mesh_id)
    shaft = mesh.driving_shaft if s.gear_side == "driving" else mesh.driven_shaft
    return mesh, shaft, s.speeds[shaft], mesh.teeth_on(shaft)


def eccentricity(s: Scene, mesh_id: str, stage: int) -> Part:
    """An eccentric (or run-out) gear: the mesh amplitude- and phase-modulated at its speed."""
    mesh, shaft, f_gear, _ = _faulty_gear(s, mesh_id)
    gmf, t = mesh.gmf_hz, s.t
    x = np.zeros(s.n)
    depth = 0.2 * stage
    am = 1 + depth * np.cos(2 * np.pi * f_gear * t)
    pm = 0.3 * stage * np.sin(2 * np.pi * f_gear * t)
    for k, a in ((1, 1.0), (2, 0.4)):
        if k * gmf < s.fs / 2.2:
            x += MESH_G * G * a * am * np.sin(2 * np.pi * k * gmf * t + k * pm)
    x += s.shaft_tone(shaft, 1, 1.0 * stage)
    return _mesh_part(s, x, {"modulation_hz": f_gear})


def tooth(s: Scene, mesh_id: str, stage: int) -> Part:
    """One damaged tooth: once per turn of its gear a short mesh impact, and the mesh modulated
    while that tooth is in mesh, at the same angle."""
    mesh, _, f_gear, teeth = _faulty_gear(s, mesh_id)
    gmf, t = mesh.gmf_hz, s.t
    x = np.zeros(s.n)
    first = s.rng.uniform(0, 1 / f_gear)
    times = np.arange(first, s.n / s.fs, 1 / f_gear)
    ring = resonance_ring(s.fs, s.resonance_hz, damping=0.05, response=s.ring_response)
    x += periodic_impact_signal(first, 1 / f_gear, TOOTH_IMPACT_G[stage] * G, s.fs, s.n, ring)
    window = np.exp(-0.5 * ((((t - first) * f_gear + 0.5) % 1.0 - 0.5) / (0.5 / teeth)) ** 2)
    x += MESH_G * G * (1 + TOOTH_MESH_DEPTH[stage] * window) * np.sin(2 * np.pi * gmf * t)
    return _mesh_part(s, x, {"impact_times_s": times})


def wear(s: Scene, mesh_id: str, stage: int) -> Part:
    """Distributed wear: GMF harmonics rise and random modulation at both shafts spreads sidebands."""
    from scipy import signal

    mesh = next(m for m in s.rates.meshes if m.mesh == mesh_id)
    gmf, t = mesh.gmf_hz, s.t
    x = np.zeros(s.n)
    mod = np.zeros(s.n)
    for shaft_hz in (s.speeds[mesh.driving_shaft], s.speeds[mesh.driven_shaft]):
        for k in range(1, 7):
            mod += (0.12 * stage / k) * np.cos(2 * np.pi * k * shaft_hz * t + s.rng.uniform(0, 6.3))
    for k, a in ((1, 1.0), (2, 0.6 * stage), (3, 0.4 * stage)):
        if k * gmf < s.fs / 2.2:
            x += MESH_G * G * a * (1 + mod) * np.sin(2 * np.pi * k * gmf * t + s.rng.uniform(0, 6.3))
    b, a = signal.butter(2, [0.8 * gmf, min(1.2 * gmf, s.fs / 2.3)], btype="bandpass", fs=s.fs)
    x += 0.02 * G * stage * signal.lfilter(b, a, s.rng.standard_normal(s.n))
    return _mesh_part(s, x, {})
