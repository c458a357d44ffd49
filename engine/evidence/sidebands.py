"""Sideband families: carriers modulated at a shaft speed or at the pole-pass frequency."""

from __future__ import annotations

import numpy as np

from ._match import db, find_line
from .context import ReadingContext

MAX_ORDER = 6
SPACING_TOLERANCE = 0.005  # sidebands sit at exact multiples of the spacing: 0.5 % of it


def _carriers(rc: ReadingContext):
    """(carrier name, component, carrier Hz, spacing name, spacing shaft, spacing Hz, use velocity)."""
    out = []
    for g in rc.machine.gears:
        gmf = g.driving_teeth * rc.speeds_hz[g.driving_shaft]
        for k, name in ((1, "GMF"), (2, "2xGMF")):
            for shaft in (g.driving_shaft, g.driven_shaft):
                out.append((name, g.id, k * gmf, "1X", shaft, rc.speeds_hz[shaft], False))
    defects = rc.defect_rates_hz()
    for b in rc.machine.bearings:
        out.append(("BPFI", b.id, defects[(b.id, "BPFI")], "1X", b.shaft, rc.speeds_hz[b.shaft], False))
    for m in rc.machine.motors:
        fr = rc.speeds_hz[m.shaft]
        pole_pass = m.poles * (2 * m.line_frequency_hz / m.poles - fr)
        if pole_pass > 0:
            # The carrier is the motor shaft's 1X; the family belongs to the motor itself.
            out.append(("1X", m.id, fr, "pole pass", m.shaft, pole_pass, True))
    return out


def sideband_family(rc: ReadingContext) -> list[dict]:
    """Sidebands at carrier +- k x spacing, k = 1..6, counted where they stand above the floor."""
    out = []
    for c in rc.channels:
        for carrier, component, fc, spacing_name, spacing_shaft, spacing, use_velocity in _carriers(rc):
            spec = c.velocity if use_velocity else c.spectrum
            if fc + spacing > spec.fmax_hz * 0.98 or spacing < 2.5 * spec.resolution_hz:
                continue
            centre = find_line(spec, fc, 0.002)
            found, orders_low, orders_high, ratios = 0, set(), set(), []
            for k in range(1, MAX_ORDER + 1):
                for sign, orders in ((-1, orders_low), (1, orders_high)):
                    f = fc + sign * k * spacing
                    if f <= 0:
                        continue
                    frac = max(SPACING_TOLERANCE * k * spacing, 0.5 * spec.resolution_hz) / f
                    peak = find_line(spec, f, frac)
                    if peak is None:
                        continue
                    found += 1
                    orders.add(k)
                    if centre is not None:
                        ratios.append(peak.amplitude / centre.amplitude)
            if found < 2:
                continue
            out.append(c.base() | {
                "kind": "sideband_family", "carrier": carrier, "component": component,
                "carrier_hz": fc, "carrier_found": centre is not None,
                "spacing": spacing_name, "spacing_shaft": spacing_shaft, "spacing_hz": spacing,
                "count": found, "pairs": len(orders_low & orders_high),
                "max_order": max(orders_low | orders_high),
                "sideband_to_carrier_db": db(float(np.mean(ratios))) if ratios else 0.0,
            })
    return out
