"""Tones at forcing frequencies, harmonic series, half orders and unexplained peaks."""

from __future__ import annotations

import numpy as np

from ..analysis import find_peaks
from ..units import STANDARD_GRAVITY_M_S2 as G
from ._match import SPEED_TOLERANCE, UNREFINED_TOLERANCE, db, find_line, tolerance_hz
from .context import ChannelContext, ReadingContext

MIN_TONE_HZ = 2.0
SKIPPED_AS_TONES = {"slip", "pole pass", "HTF", "FTF"}  # below the spectrum's useful range or spacings only
SHAFT_HARMONICS = 10
OTHER_HARMONICS = {"GMF": 3, "vane pass": 3, "blade pass": 3, "belt pass": 4,
                   "BPFO": 5, "BPFI": 5, "BSF": 5}
HALF_ORDERS = (0.5, 1.5, 2.5, 3.5, 4.5)
SUSTAINED_FRACTION = 0.1
NONSYNC_MIN_SNR = 6.0
NONSYNC_MIN_FRACTION = 0.05  # of the largest line: smaller peaks are not worth a finding


def _tol(rc: ReadingContext, family: str = "shaft") -> float:
    if family == "bearing":
        return 0.02
    return SPEED_TOLERANCE if rc.speed_estimate.refined else UNREFINED_TOLERANCE


def _one_x(c: ChannelContext, rc: ReadingContext, shaft: str) -> float:
    peak = find_line(c.velocity, rc.speeds_hz[shaft], _tol(rc))
    return peak.amplitude if peak else 0.0


def _uses_velocity(family: str, freq_hz: float) -> bool:
    return family in ("shaft", "rotor", "belt", "electrical") or freq_hz < 1000.0


def tones(rc: ReadingContext) -> list[dict]:
    """A ``tone`` fact for each forcing frequency that stands above the floor on a channel."""
    out = []
    for c in rc.channels:
        one_x = {s: _one_x(c, rc, s) for s in rc.speeds_hz}
        for f in rc.forcing:
            if f.name in SKIPPED_AS_TONES or f.frequency_hz < MIN_TONE_HZ:
                continue
            spec = c.velocity if _uses_velocity(f.family, f.frequency_hz) else c.spectrum
            peak = find_line(spec, f.frequency_hz, _tol(rc, f.family))
            if peak is None or (f.family == "bearing" and _is_shaft_order(rc, spec, peak.freq_hz, f.shaft)):
                continue
            accel = find_line(c.spectrum, peak.freq_hz, 0.0)
            v_peak = find_line(c.velocity, peak.freq_hz, 0.0)
            v = v_peak.amplitude if v_peak else 0.0
            out.append(c.base() | {
                "kind": "tone", "name": f.name, "component": f.component, "family": f.family,
                "shaft": f.shaft, "expected_hz": f.frequency_hz, "freq_hz": peak.freq_hz,
                "amplitude_mm_s": v, "amplitude_g": (accel.amplitude / G) if accel else 0.0,
                "snr_db": db(peak.snr),
                "ratio_to_1x": v / one_x[f.shaft] if one_x[f.shaft] > 0 else 0.0,
            })
    return out


def _series(c: ChannelContext, rc: ReadingContext, fundamental_hz: float, n: int, family: str):
    use_velocity = family in ("shaft", "rotor", "belt")
    spec = c.velocity if use_velocity else c.spectrum
    found = {}
    checked = 0
    for k in range(1, n + 1):
        if k * fundamental_hz > spec.fmax_hz * 0.98:
            break
        checked += 1
        peak = find_line(spec, k * fundamental_hz, _tol(rc, family))
        if peak is not None:
            found[k] = peak.amplitude
    return found, checked, use_velocity


def harmonic_series(rc: ReadingContext) -> list[dict]:
    """Harmonics of 1X of each shaft, of GMF, vane/blade/belt pass and bearing defect lines."""
    sources = [("1X", s, s, hz, SHAFT_HARMONICS, "shaft") for s, hz in rc.speeds_hz.items()]
    for f in rc.forcing:
        if f.name in OTHER_HARMONICS:
            sources.append((f.name, f.component, f.shaft, f.frequency_hz, OTHER_HARMONICS[f.name], f.family))
    out = []
    for c in rc.channels:
        for name, component, shaft, hz, n, family in sources:
            found, checked, use_velocity = _series(c, rc, hz, n, family)
            if not found:
                continue
            first = found.get(1, 0.0)
            sustained = sum(1 for k, a in found.items() if k >= 3 and first > 0 and a >= SUSTAINED_FRACTION * first)
            first_g = 0.0
            if 1 in found:
                accel = find_line(c.spectrum, hz, _tol(rc, family))
                first_g = accel.amplitude / G if accel else 0.0
            first_mm_s = 0.0
            if 1 in found:
                vel = find_line(c.velocity, hz, _tol(rc, family))
                first_mm_s = vel.amplitude if vel else 0.0
            out.append(c.base() | {
                "kind": "harmonic_series", "source": name, "component": component, "shaft": shaft,
                "fundamental_hz": hz, "count": len(found), "checked": checked,
                "highest_order": max(found), "first_mm_s": first_mm_s, "first_g": first_g,
                "second_to_first": found.get(2, 0.0) / first if first > 0 else 0.0,
                "sustained_count": sustained,
            })
    return out


def subharmonics(rc: ReadingContext) -> list[dict]:
    """Half orders of each shaft (0.5X, 1.5X, ...), as looseness and rubs produce."""
    out = []
    for c in rc.channels:
        for shaft, fr in rc.speeds_hz.items():
            amps = []
            for order in HALF_ORDERS:
                peak = find_line(c.velocity, order * fr, _tol(rc))
                if peak is not None and not _is_other_line(rc, peak.freq_hz, exclude_shaft=shaft):
                    amps.append(peak.amplitude)
            if amps:
                one_x = _one_x(c, rc, shaft)
                out.append(c.base() | {"kind": "subharmonics", "shaft": shaft, "count": len(amps),
                                       "max_ratio_to_1x": max(amps) / one_x if one_x > 0 else 0.0})
    return out


def _explained_frequencies(rc: ReadingContext) -> np.ndarray:
    freqs = []
    for f in rc.forcing:
        n = SHAFT_HARMONICS if f.family == "shaft" else 5
        freqs += [k * f.frequency_hz for k in range(1, n + 1)]
    for fr in rc.speeds_hz.values():
        freqs += [k * fr for k in HALF_ORDERS]
    for m in rc.machine.motors:
        freqs += [k * m.line_frequency_hz for k in range(1, 11)]
    return np.array(freqs)


def _is_shaft_order(rc: ReadingContext, spec, freq_hz: float, shaft: str) -> bool:
    """A line at an integer order of its shaft is a shaft harmonic before it is anything else."""
    fr = rc.speeds_hz[shaft]
    k = round(freq_hz / fr)
    return k >= 1 and abs(freq_hz - k * fr) <= tolerance_hz(spec, freq_hz, _tol(rc))


def _is_other_line(rc: ReadingContext, freq_hz: float, exclude_shaft: str) -> bool:
    """Whether ``freq_hz`` is an integer order of another shaft or a non-shaft forcing line."""
    for shaft, fr in rc.speeds_hz.items():
        if shaft == exclude_shaft or abs(fr - rc.speeds_hz[exclude_shaft]) < 1e-9:
            continue
        k = round(freq_hz / fr)
        if k >= 1 and abs(freq_hz - k * fr) <= 0.005 * freq_hz:
            return True
    return False


def nonsynchronous(rc: ReadingContext) -> list[dict]:
    """Clear velocity peaks that match no forcing frequency, no harmonic and no line frequency."""
    out = []
    explained = _explained_frequencies(rc)
    for c in rc.channels:
        peaks = find_peaks(c.velocity, f_lo_hz=MIN_TONE_HZ, f_hi_hz=min(1000.0, c.velocity.fmax_hz),
                           min_snr=NONSYNC_MIN_SNR)
        if not peaks:
            continue
        biggest = peaks[0].amplitude
        tol = np.maximum(0.01 * explained, 2 * c.velocity.resolution_hz)
        odd = [p for p in peaks if p.amplitude >= NONSYNC_MIN_FRACTION * biggest
               and not np.any(np.abs(explained - p.freq_hz) <= tol)]
        if not odd:
            continue
        one_x = _one_x(c, rc, rc.speed_shaft)
        top = odd[0]
        out.append(c.base() | {"kind": "nonsynchronous", "count": len(odd), "largest_hz": top.freq_hz,
                               "largest_mm_s": top.amplitude,
                               "largest_to_1x": top.amplitude / one_x if one_x > 0 else 0.0})
    return out
