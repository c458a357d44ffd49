"""Are the acquisition settings adequate for this machine, and is the data sound?

Conventions (common practice in analyzer documentation, check-values.md):
usable Fmax = sample rate / 2.56; lines = samples / 2.56; a Hann spectrum
separates two lines about 3 lines apart; ringing impacts need about 10
samples per cycle to keep their peak (a tone sampled k times per cycle reads
low by up to cos(pi / k)).
"""

from __future__ import annotations

import numpy as np

from ..analysis import Analysis

FMAX_FACTOR = 2.56
LINES_TO_SEPARATE = 3.0
MIN_REVOLUTIONS = 10
MIN_SAMPLES_PER_CYCLE = 10.0
STANDARD_LINES = (400, 800, 1600, 3200, 6400, 12800, 25600, 51200)


def _needed_frequencies(rc: Analysis) -> dict[str, float]:
    """The highest line each analysis needs: 3 x GMF, 2 x vane pass, 3 x BPFI, 10 x 1X, ..."""
    needed = {}
    for f in rc.forcing:
        mult = {"GMF": 3, "vane pass": 2, "blade pass": 2, "BPFI": 3, "BPFO": 3, "belt pass": 4,
                "rotor bar pass": 1, "2xLF": 2, "1X": 10}.get(f.name)
        if mult:
            needed[f"{mult}x {f.label}" if mult > 1 else f.label] = mult * f.frequency_hz
    return needed


SEPARATED = {"1X", "2xLF", "GMF", "vane pass", "blade pass", "belt pass"}


def _closest_pair(rc: Analysis, fmax: float):
    """The two closest discrete lines a diagnosis must tell apart (2X included: 2X against 2xLF).

    Bearing defect lines are left out: they slip by 1-2 % and are told apart
    by their harmonic pattern, not by one line.
    """
    lines = {(round(f.frequency_hz, 6), f.label) for f in rc.forcing if f.name in SEPARATED}
    lines |= {(round(2 * hz, 6), f"2X {shaft}") for shaft, hz in rc.speeds_hz.items()}
    lines = sorted((f, label) for f, label in lines if 2.0 <= f <= fmax)
    best = None
    for (f1, l1), (f2, l2) in zip(lines, lines[1:]):
        gap = f2 - f1
        if gap > 1e-3 * f2 and (best is None or gap < best[0]):
            best = (gap, f"{l1} / {l2}")
    return best


def _sideband_spacings(rc: Analysis) -> list[tuple[float, str]]:
    spacings = []
    for g in rc.rates.meshes:
        spacings += [(rc.speeds_hz[s], f"1X {s} sidebands of {g.mesh}") for s in (g.driving_shaft, g.driven_shaft)]
    for m in rc.rates.motors:
        if m.pole_pass_hz is not None:
            spacings.append((m.pole_pass_hz, f"pole pass sidebands of {m.motor}"))
    return spacings


def acquisition(rc: Analysis) -> list[dict]:
    """One fact about the reading's settings: Fmax, resolution, revolutions, samples per cycle."""
    fs = rc.fs_hz
    fmax = fs / FMAX_FACTOR
    resolution = fs / rc.n_samples
    needed = _needed_frequencies(rc)
    highest = max(needed.values()) if needed else 0.0
    pair = _closest_pair(rc, fmax)
    separations = ([pair] if pair else []) + _sideband_spacings(rc)
    tightest = min(separations) if separations else (resolution * LINES_TO_SEPARATE, "")
    needed_resolution = tightest[0] / LINES_TO_SEPARATE
    slowest = min(rc.speeds_hz.values())
    centres = [c.kurtogram.best.centre_hz for c in rc.channels if c.kurtogram is not None]
    spc = fs / max(centres) if centres else fs / max(highest, 1.0)
    suggested_fmax = max(fmax, highest * 1.1)
    lines_needed = suggested_fmax / needed_resolution
    suggested_lines = next((n for n in STANDARD_LINES if n >= lines_needed), STANDARD_LINES[-1])
    return [{
        "kind": "acquisition", "fmax_hz": fmax, "highest_needed_hz": highest,
        "fmax_ok": bool(fmax >= highest), "resolution_hz": resolution,
        "needed_resolution_hz": needed_resolution,
        "resolution_for": tightest[1],
        "resolution_ok": bool(resolution <= needed_resolution * 1.0001),
        "revolutions": rc.duration_s * slowest,
        "revolutions_ok": bool(rc.duration_s * slowest >= MIN_REVOLUTIONS),
        "samples_per_cycle": spc, "samples_per_cycle_ok": bool(spc >= MIN_SAMPLES_PER_CYCLE),
        "suggested_fmax_hz": float(np.ceil(suggested_fmax / 100) * 100),
        "suggested_lines": int(suggested_lines),
        "speed_refined": rc.speed_estimate.refined,
        "speed_rpm": rc.speed_estimate.speed_hz * 60, "speed_shaft": rc.speed_shaft,
    }]


def data_quality(rc: Analysis) -> list[dict]:
    """One fact per quality issue the reader's gates found."""
    return [{"kind": "data_quality", "channel": q.channel, "issue": q.kind, "value": q.value,
             "blocking": q.blocking} for q in rc.quality]



def machine_class(rc: Analysis) -> list[dict]:
    """What kind of machine this is, so a site rule can hold for one class only."""
    m = rc.machine
    return [{"kind": "machine", "name": m.name, "iso_group": m.iso_group or 0, "support": m.support or "",
             "driver_rpm": rc.speeds_hz[m.driver_shaft] * 60, "gears": len(m.gears), "belts": len(m.belts),
             "motors": len(m.motors)}]
