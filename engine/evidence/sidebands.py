"""Sideband families: carriers modulated at a shaft speed or at the pole-pass frequency."""

from __future__ import annotations

import numpy as np

from ..analysis import Analysis
from .matching import db, explained_frequencies, find_lines
from .signs import SIGNS, match_fit, spectrum_line

MAX_ORDER = 6
SPACING_TOLERANCE = 0.005  # sidebands sit at exact multiples of the spacing: 0.5 % of it


def _carriers(rc: Analysis):
    """(carrier name, component, carrier Hz, spacing name, spacing shaft, spacing Hz, use velocity)."""
    out = []
    for g in rc.rates.meshes:
        for k, name in ((1, "GMF"), (2, "2xGMF")):
            for shaft in (g.driving_shaft, g.driven_shaft):
                out.append((name, g.mesh, k * g.gmf_hz, "1X", shaft, rc.speeds_hz[shaft], False))
    for b in rc.rates.bearings:
        out.append(("BPFI", b.bearing, b.bpfi_hz, "1X", b.shaft, b.shaft_hz, False))
        # a damaged cage lets the shaft's 1X swing at the cage rate; the family belongs to the bearing
        out.append(("1X", b.bearing, b.shaft_hz, "FTF", b.shaft, b.ftf_hz, True))
    for m in rc.rates.motors:
        if m.pole_pass_hz is not None:
            # The carrier is the motor shaft's 1X; the family belongs to the motor itself.
            out.append(("1X", m.motor, rc.speeds_hz[m.shaft], "pole pass", m.shaft, m.pole_pass_hz, True))
    return out


UNLOCKED = {"FTF"}    # spacings that are no whole order of the carrier's shaft


def _taken(explained: np.ndarray, freq_hz: float, resolution_hz: float) -> bool:
    """Whether another source puts a line at ``freq_hz`` (a shaft harmonic, a belt or vane pass, the line
    frequency): a sideband at an unlocked spacing that lands there cannot be told from that line."""
    return bool(np.any(np.abs(explained - freq_hz) <= max(1.5 * resolution_hz, SPACING_TOLERANCE * freq_hz)))


def floor_between(spec, fc: float, spacing: float) -> float:
    """Median amplitude between the lines of a sideband family (0 if too few lines are left).

    A dense family at a coarse resolution fills most of the 51 lines a local
    floor takes its median over, and that median is a line's skirt, not the
    noise; the lines within 2 of the carrier and of every sideband (a Hann
    main lobe) are left out here.
    """
    df = spec.resolution_hz
    reach = (MAX_ORDER + 1) * spacing
    lo = max(1, int((fc - reach) / df))
    hi = min(len(spec.amplitude), int((fc + reach) / df) + 1)
    if hi - lo < 10:
        return 0.0
    f = spec.freq_hz[lo:hi]
    nearest = np.abs((f - fc) / spacing - np.rint((f - fc) / spacing)) * spacing
    between = spec.amplitude[lo:hi][nearest > 2.5 * df]
    return float(np.median(between)) if len(between) >= 10 else 0.0


def sideband_family(rc: Analysis) -> list[dict]:
    """Sidebands at carrier +- k x spacing, k = 1..6, counted where they stand above the floor."""
    out = []
    carriers = _carriers(rc)
    explained = explained_frequencies(rc)
    for c in rc.channels:
        families = []      # (carrier tuple, index of its centre search, [(k, sign, index of its search)])
        searches: dict[bool, list[tuple]] = {True: [], False: []}    # by spectrum (velocity?): (frequency, fraction)
        for car in carriers:
            fc, spacing_name, spacing, use_velocity = car[2], car[3], car[5], car[6]
            spec = c.velocity if use_velocity else c.spectrum
            if fc + spacing > spec.fmax_hz * 0.98 or spacing < 2.5 * spec.resolution_hz:
                continue
            todo = searches[use_velocity]
            centre_at = len(todo)
            floor = floor_between(spec, fc, spacing)
            todo.append((fc, 0.002, floor))
            sides = []
            for k in range(1, MAX_ORDER + 1):
                for sign in (-1, 1):
                    f = fc + sign * k * spacing
                    if f <= 0 or (spacing_name in UNLOCKED and _taken(explained, f, spec.resolution_hz)):
                        continue
                    sides.append((k, sign, len(todo)))
                    todo.append((f, max(SPACING_TOLERANCE * k * spacing, 0.5 * spec.resolution_hz) / f, floor))
            families.append((car, centre_at, sides))
        found_lines = {v: find_lines(c.velocity if v else c.spectrum, [t[0] for t in todo], [t[1] for t in todo],
                                     floors=[t[2] for t in todo])
                       for v, todo in searches.items() if todo}
        for (carrier, component, fc, spacing_name, spacing_shaft, spacing, use_velocity), centre_at, sides in families:
            lines = found_lines[use_velocity]
            centre = lines.peak(centre_at)
            found, ratios, signs = 0, [], {}
            orders_low: set[int] = set()
            orders_high: set[int] = set()
            for k, sign, at in sides:
                if not lines.found[at]:
                    continue
                found += 1
                expected = fc + sign * k * spacing
                signs[spectrum_line(c.name, lines.line[at])] = match_fit(
                    (lines.freq_hz[at] - expected) / (k * spacing), SPACING_TOLERANCE)
                (orders_low if sign < 0 else orders_high).add(k)
                if centre is not None and centre.amplitude > 0:
                    ratios.append(float(lines.amplitude[at]) / centre.amplitude)
            if found < 2:
                continue
            out.append(c.base() | {
                "kind": "sideband_family", "carrier": carrier, "component": component,
                "carrier_hz": fc, "carrier_found": centre is not None,
                "spacing": spacing_name, "spacing_shaft": spacing_shaft, "spacing_hz": spacing,
                "count": found, "pairs": len(orders_low & orders_high),
                "max_order": max(orders_low | orders_high),
                "sideband_to_carrier_db": db(float(np.mean(ratios))) if ratios else 0.0,
                # the same as an amplitude ratio, so a rule can compare two families by a factor
                "sideband_to_carrier": float(np.mean(ratios)) if ratios else 0.0,
                SIGNS: signs,
            })
    return out
