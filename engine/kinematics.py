"""Forcing frequencies of a drive train: where each fault shows in a spectrum.

Formulas
--------
Rolling bearings (stationary outer race, shaft rate ``fr``, ``n`` rolling
elements of diameter ``d`` on pitch diameter ``D`` at contact angle ``phi``),
the standard kinematic results (e.g. Randall & Antoni 2011, "Rolling element
bearing diagnostics - A tutorial", MSSP 25, eqs. 1-4)::

    FTF  = fr/2 (1 - d/D cos phi)
    BPFO = n fr/2 (1 - d/D cos phi)
    BPFI = n fr/2 (1 + d/D cos phi)
    BSF  = D fr/(2 d) (1 - (d/D cos phi)^2)

Gears: GMF = z x fr of either gear; hunting tooth frequency
f_HT = GMF gcd(z1, z2) / (z1 z2); assembly phase passing frequency
f_A = GMF / gcd(z1, z2) (listed only when gcd > 1).

Belts: belt pass frequency = belt speed / belt length = pi D1 f1 / L.

Induction motors (line frequency f_L, ``p`` poles): synchronous speed
f_s = 2 f_L / p; slip frequency f_s - fr; pole pass frequency p (f_s - fr);
twice line frequency 2 f_L; rotor bar pass frequency = bars x fr.
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass

from .machine import Bearing, Machine


@dataclass(frozen=True)
class ForcingFrequency:
    """One frequency at which a component of the machine can excite vibration."""

    name: str          # trade name: 1X, BPFO, GMF, 2xLF, ...
    component: str     # id of the shaft, bearing, mesh, belt, rotor or motor
    family: str        # shaft, bearing, gear, belt, rotor or electrical
    shaft: str         # the shaft whose speed it is a multiple of
    order: float       # frequency / that shaft's speed
    frequency_hz: float

    @property
    def label(self) -> str:
        return f"{self.name} {self.component}"

    def as_dict(self) -> dict:
        return asdict(self) | {"label": self.label}


def bearing_multiples(bearing: Bearing) -> dict[str, float]:
    """BPFO, BPFI, BSF and FTF as multiples of shaft speed (orders)."""
    if bearing.multiples is not None:
        return dict(bearing.multiples)
    n = bearing.rolling_elements
    ratio = bearing.element_diameter / bearing.pitch_diameter * math.cos(math.radians(bearing.contact_angle_deg))
    return {
        "bpfo": n / 2 * (1 - ratio),
        "bpfi": n / 2 * (1 + ratio),
        "bsf": bearing.pitch_diameter / (2 * bearing.element_diameter) * (1 - ratio ** 2),
        "ftf": 0.5 * (1 - ratio),
    }


def forcing_frequencies(machine: Machine, speed_rpm: float | None = None,
                        shaft: str | None = None) -> list[ForcingFrequency]:
    """Every forcing frequency of ``machine``, with ``shaft`` (default the driver) at ``speed_rpm``.

    Without ``speed_rpm`` the nominal speeds of the machine file are used.
    The list is sorted by frequency.
    """
    speeds = machine.speeds_at(speed_rpm, shaft)
    out: list[ForcingFrequency] = []

    def add(name, component, family, on_shaft, hz):
        out.append(ForcingFrequency(name, component, family, on_shaft, hz / speeds[on_shaft], hz))

    for name, hz in speeds.items():
        add("1X", name, "shaft", name, hz)
    for b in machine.bearings:
        fr = speeds[b.shaft]
        for key, multiple in bearing_multiples(b).items():
            add(key.upper(), b.id, "bearing", b.shaft, multiple * fr)
    for g in machine.gears:
        gmf = g.driving_teeth * speeds[g.driving_shaft]
        common = math.gcd(g.driving_teeth, g.driven_teeth)
        add("GMF", g.id, "gear", g.driving_shaft, gmf)
        add("HTF", g.id, "gear", g.driving_shaft, gmf * common / (g.driving_teeth * g.driven_teeth))
        if common > 1:
            add("APPF", g.id, "gear", g.driving_shaft, gmf / common)
    for belt in machine.belts:
        belt_speed_mm_s = math.pi * belt.driving_diameter_mm * speeds[belt.driving_shaft]
        add("belt pass", belt.id, "belt", belt.driving_shaft, belt_speed_mm_s / belt.belt_length_mm)
    for r in machine.rotors:
        add("vane pass" if r.type == "impeller" else "blade pass", r.id, "rotor", r.shaft,
            r.vanes * speeds[r.shaft])
    for m in machine.motors:
        fr = speeds[m.shaft]
        sync_hz = 2 * m.line_frequency_hz / m.poles
        slip_hz = sync_hz - fr
        add("2xLF", m.id, "electrical", m.shaft, 2 * m.line_frequency_hz)
        if slip_hz > 0:
            add("slip", m.id, "electrical", m.shaft, slip_hz)
            add("pole pass", m.id, "electrical", m.shaft, m.poles * slip_hz)
        if m.rotor_bars:
            add("rotor bar pass", m.id, "electrical", m.shaft, m.rotor_bars * fr)
    out.sort(key=lambda f: (f.frequency_hz, f.name, f.component))
    return out
