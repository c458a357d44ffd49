"""Tones at forcing frequencies, harmonic series, half orders and unexplained peaks."""

from __future__ import annotations

import weakref

import numpy as np

from ..analysis import Analysis, ChannelAnalysis, find_peaks
from ..common.units import STANDARD_GRAVITY_M_S2 as G
from .matching import (
    HALF_ORDERS,
    SHAFT_HARMONICS,
    SPEED_TOLERANCE,
    UNREFINED_TOLERANCE,
    db,
    explained_frequencies,
    find_lines,
    tolerance_hz,
)
from .signs import SIGNS, match_fit, spectrum_line

MIN_TONE_HZ = 2.0
SKIPPED_AS_TONES = {"slip", "pole pass", "HTF", "FTF"}  # below the spectrum's useful range or spacings only
OTHER_HARMONICS = {"GMF": 3, "vane pass": 3, "blade pass": 3, "belt pass": 4,
                   "BPFO": 5, "BPFI": 5, "BSF": 5}
SUSTAINED_FRACTION = 0.1
NONSYNC_MIN_SNR = 6.0
NONSYNC_MIN_FRACTION = 0.05  # of the largest line: smaller peaks are not worth a finding
VELOCITY_FAMILIES = ("shaft", "rotor", "belt")


def _tol(rc: Analysis, family: str = "shaft") -> float:
    if family == "bearing":
        return 0.02
    return SPEED_TOLERANCE if rc.speed_estimate.refined else UNREFINED_TOLERANCE


_ONE_X_KEPT = 16     # the channels whose 1X lines were found last: tones, series, half orders and the phase ask again
_one_x: dict[int, tuple] = {}


def _search_one_x(c: ChannelAnalysis, rc: Analysis) -> dict[str, float]:
    shafts = list(rc.speeds_hz)
    lines = find_lines(c.velocity, [rc.speeds_hz[s] for s in shafts], _tol(rc))
    return {s: float(lines.amplitude[i]) if lines.found[i] else 0.0 for i, s in enumerate(shafts)}


def one_x_mm_s(c: ChannelAnalysis, rc: Analysis) -> dict[str, float]:
    """1X velocity amplitude (mm/s RMS) of every shaft on this channel, 0 when absent.

    Found once per channel and speeds: a repeated call (the tones, the harmonic series, the unexplained
    peaks and the phase check each ask) returns the first answer. The channel is held weakly, so no
    analysis outlives its diagnosis here."""
    asked = (tuple(rc.speeds_hz.items()), _tol(rc))
    known = _one_x.get(id(c))
    if known is not None and known[0]() is c and known[1] == asked:
        return dict(known[2])
    found = _search_one_x(c, rc)
    if len(_one_x) >= _ONE_X_KEPT:
        _one_x.pop(next(iter(_one_x)))
    _one_x[id(c)] = (weakref.ref(c), asked, found)
    return dict(found)


def searched_hz(rc: Analysis, f) -> tuple[str, float]:
    """(rate name, Hz) a forcing frequency's line is looked for at: its own, but for a ball defect 2 x BSF.

    A spall on a rolling element strikes both races once per spin turn, so its impacts, and the lines
    they put in the spectrum, repeat at twice BSF (Randall & Antoni 2011, MSSP 25(2), section 2.1; the
    envelope evidence and the impact trains read the ball at the same rate, ``BearingRates.impact_rate_hz``).
    """
    if f.family == "bearing" and f.name == "BSF":
        return "2xBSF", rc.rates.bearing(f.component).impact_rate_hz("BSF")
    return f.name, f.frequency_hz


def _uses_velocity(family: str, freq_hz: float) -> bool:
    return family in ("shaft", "rotor", "belt", "electrical") or freq_hz < 1000.0


def _amplitudes_at(c: ChannelAnalysis, freqs: np.ndarray, fraction: float | np.ndarray):
    """Acceleration (g peak) and velocity (mm/s RMS) of the peaks at ``freqs``, 0 where none."""
    accel = find_lines(c.spectrum, freqs, fraction)
    vel = find_lines(c.velocity, freqs, fraction)
    return (np.where(accel.found, accel.amplitude / G, 0.0), np.where(vel.found, vel.amplitude, 0.0))


def tones(rc: Analysis) -> list[dict]:
    """A ``tone`` fact for each forcing frequency that stands above the floor on a channel."""
    wanted = [f for f in rc.forcing if f.name not in SKIPPED_AS_TONES and f.frequency_hz >= MIN_TONE_HZ]
    searched = {f: searched_hz(rc, f) for f in wanted}
    out = []
    one_x_of = {c.name: one_x_mm_s(c, rc) for c in rc.channels}
    # the largest 1X of each shaft at each bearing, over the bearing's channels (radial and axial)
    at_bearing: dict[tuple[str, str], float] = {}
    for c in rc.channels:
        for shaft, amp in one_x_of[c.name].items():
            key = (c.location or c.name, shaft)
            at_bearing[key] = max(at_bearing.get(key, 0.0), amp)
    for c in rc.channels:
        one_x = one_x_of[c.name]
        bearing_1x = {shaft: at_bearing[(c.location or c.name, shaft)] for shaft in one_x}
        hits = []
        for use_velocity in (True, False):
            group = [f for f in wanted if _uses_velocity(f.family, searched[f][1]) == use_velocity]
            if not group:
                continue
            spec = c.velocity if use_velocity else c.spectrum
            lines = find_lines(spec, [searched[f][1] for f in group], [_tol(rc, f.family) for f in group])
            for i, f in enumerate(group):
                peak = lines.peak(i)       # None when the line was not found
                if peak is None or (f.family == "bearing" and _is_shaft_order(rc, spec, lines.freq_hz[i], f.shaft)):
                    continue
                if f.family == "electrical" and _shaft_order_nearer(rc, lines.freq_hz[i], f.frequency_hz):
                    continue
                if f.family == "bearing" and _other_source_nearer(rc, lines.freq_hz[i], searched[f][1]):
                    continue
                hits.append((f, peak, spec))
        if not hits:
            continue
        accel_g, v = _amplitudes_at(c, np.array([p.freq_hz for _, p, _ in hits]), 0.0)
        for (f, peak, spec), a_g, v_mm_s in sorted(zip(hits, accel_g, v), key=lambda h: wanted.index(h[0][0])):
            out.append(c.base() | {
                "kind": "tone", "name": f.name, "rate": searched[f][0], "component": f.component, "family": f.family,
                "shaft": f.shaft, "expected_hz": searched[f][1], "freq_hz": peak.freq_hz,
                "amplitude_mm_s": float(v_mm_s), "amplitude_g": float(a_g), "snr_db": db(peak.snr),
                "ratio_to_1x": float(v_mm_s) / one_x[f.shaft] if one_x[f.shaft] > 0 else 0.0,
                "ratio_to_bearing_1x": float(v_mm_s) / bearing_1x[f.shaft] if bearing_1x[f.shaft] > 0 else 0.0,
                "shaft_order_within_tolerance": (f.family == "electrical"
                                                 and _shaft_order_within(rc, spec, f.frequency_hz)),
                SIGNS: {spectrum_line(c.name, peak.line): match_fit(peak.freq_hz / searched[f][1] - 1,
                                                                    _tol(rc, f.family))},
            })
    return out


def _sources(rc: Analysis):
    """(name, component, shaft, fundamental Hz, harmonics, family) of every series worth following."""
    out = [("1X", s, s, hz, SHAFT_HARMONICS, "shaft") for s, hz in rc.speeds_hz.items()]
    for f in rc.forcing:
        if f.name in OTHER_HARMONICS:      # a ball defect's series is of its impact rate, 2 x BSF
            out.append((f.name, f.component, f.shaft, searched_hz(rc, f)[1], OTHER_HARMONICS[f.name], f.family))
    return out


def harmonic_series(rc: Analysis) -> list[dict]:
    """Harmonics of 1X of each shaft, of GMF, vane/blade/belt pass and bearing defect lines."""
    sources = _sources(rc)
    out = []
    for c in rc.channels:
        found_by_source: list[dict[int, float]] = [{} for _ in sources]
        signs_by_source: list[dict[str, float]] = [{} for _ in sources]
        checked = [0] * len(sources)
        for use_velocity in (True, False):
            spec = c.velocity if use_velocity else c.spectrum
            targets = []
            for si, (_, _, _, hz, n, family) in enumerate(sources):
                if (family in VELOCITY_FAMILIES) != use_velocity:
                    continue
                ks = [k for k in range(1, n + 1) if k * hz <= spec.fmax_hz * 0.98]
                checked[si] = len(ks)
                targets += [(si, k, k * hz, _tol(rc, family)) for k in ks]
            if not targets:
                continue
            lines = find_lines(spec, [t[2] for t in targets], [t[3] for t in targets])
            for (si, k, expected, tol), ok, amp, line, freq in zip(targets, lines.found, lines.amplitude,
                                                                    lines.line, lines.freq_hz):
                if ok:
                    found_by_source[si][k] = float(amp)
                    signs_by_source[si][spectrum_line(c.name, line)] = match_fit(freq / expected - 1, tol)
        present = [si for si, found in enumerate(found_by_source) if found]
        firsts = [si for si in present if 1 in found_by_source[si]]
        first_freqs = np.array([sources[si][3] for si in firsts])
        first_tols = np.array([_tol(rc, sources[si][5]) for si in firsts])
        accel = find_lines(c.spectrum, first_freqs, first_tols)
        vel = find_lines(c.velocity, first_freqs, first_tols)
        first_g = {si: (float(accel.amplitude[i]) / G if accel.found[i] else 0.0) for i, si in enumerate(firsts)}
        first_mm_s = {si: (float(vel.amplitude[i]) if vel.found[i] else 0.0) for i, si in enumerate(firsts)}
        for si in present:
            name, component, shaft, hz, _, _ = sources[si]
            found = found_by_source[si]
            first = found.get(1, 0.0)
            sustained = sum(1 for k, a in found.items() if k >= 3 and first > 0 and a >= SUSTAINED_FRACTION * first)
            out.append(c.base() | {
                "kind": "harmonic_series", "source": name, "component": component, "shaft": shaft,
                "fundamental_hz": hz, "count": len(found), "checked": checked[si],
                "highest_order": max(found), "first_mm_s": first_mm_s.get(si, 0.0), "first_g": first_g.get(si, 0.0),
                "second_to_first": found.get(2, 0.0) / first if first > 0 else 0.0,
                "sustained_count": sustained,
                SIGNS: signs_by_source[si],
            })
    return out


def subharmonics(rc: Analysis) -> list[dict]:
    """Half orders of each shaft (0.5X, 1.5X, ...), as looseness and rubs produce."""
    out = []
    shafts = list(rc.speeds_hz)
    for c in rc.channels:
        targets = [(s, order * rc.speeds_hz[s]) for s in shafts for order in HALF_ORDERS]
        lines = find_lines(c.velocity, [t[1] for t in targets], _tol(rc))
        one_x = None
        for s in shafts:
            at = [i for i, (shaft, _) in enumerate(targets)
                  if shaft == s and lines.found[i] and not _is_other_line(rc, lines.freq_hz[i], exclude_shaft=s)]
            if at:
                amps = [float(lines.amplitude[i]) for i in at]
                one_x = one_x or one_x_mm_s(c, rc)
                out.append(c.base() | {"kind": "subharmonics", "shaft": s, "count": len(amps),
                                       "max_ratio_to_1x": max(amps) / one_x[s] if one_x[s] > 0 else 0.0,
                                       SIGNS: {spectrum_line(c.name, lines.line[i]):
                                               match_fit(lines.freq_hz[i] / targets[i][1] - 1, _tol(rc))
                                               for i in at}})
    return out


def _is_shaft_order(rc: Analysis, spec, freq_hz: float, shaft: str) -> bool:
    """A line at an integer order of its shaft is a shaft harmonic before it is anything else."""
    fr = rc.speeds_hz[shaft]
    k = round(freq_hz / fr)
    return k >= 1 and abs(freq_hz - k * fr) <= tolerance_hz(spec, freq_hz, _tol(rc))


def _nearest_shaft_order(rc: Analysis, freq_hz: float) -> tuple[float, float]:
    """(relative distance, Hz) of the shaft harmonic (1X to 10X of any shaft) nearest ``freq_hz``."""
    best = (float("inf"), 0.0)
    for fr in rc.speeds_hz.values():
        k = min(max(round(freq_hz / fr), 1), SHAFT_HARMONICS)
        best = min(best, (abs(freq_hz / (k * fr) - 1), k * fr))
    return best


def _shaft_order_nearer(rc: Analysis, line_hz: float, expected_hz: float) -> bool:
    """Whether a shaft harmonic explains a line found for an electrical rate better than that rate does.

    2X of a 2-pole motor lies a slip away from 2 x line frequency (2X at 2960 rpm is 98.7 Hz, 2 x LF
    100 Hz): both fall in one search window when the speed is only stated. The line goes to the rate
    it lies closer to, as a bearing-tone line goes to the family that explains it best.
    """
    shaft_error, _ = _nearest_shaft_order(rc, line_hz)
    return shaft_error < abs(line_hz / expected_hz - 1)


def _other_source_nearer(rc: Analysis, line_hz: float, expected_hz: float) -> bool:
    """Whether a shaft harmonic (1X to 10X of any shaft) or a forcing frequency of another family explains a
    line found for a bearing's rate better than that rate does.

    A bearing's line is looked for within its slip (2 %), wide enough to take in a line of another source:
    RW-2's 2 x BSF at full speed lies 0.07 % from twice line frequency, and the motor's 2xLF line, on every
    channel alike, read as a stage-3 ball line at stage 1. The line goes to the rate it lies closer to,
    as ``_shaft_order_nearer`` gives an electrical line to a shaft harmonic.
    """
    own = abs(line_hz / expected_hz - 1)
    if _nearest_shaft_order(rc, line_hz)[0] < own:
        return True
    return any(abs(line_hz / f.frequency_hz - 1) < own for f in rc.forcing
               if f.family != "bearing" and f.frequency_hz >= MIN_TONE_HZ)


def _shaft_order_within(rc: Analysis, spec, expected_hz: float) -> bool:
    """Whether a shaft harmonic lies within a shaft line's precision (1.5 lines, or 0.5 %) of an electrical
    rate: a line there cannot be told from that harmonic (nor the harmonic from it) in this reading.

    The line frequency is known to the grid's precision, so a line found on 2 x LF is a shaft harmonic only
    when one of those can sit there; a line nearer the stated harmonic went to it (``_shaft_order_nearer``)."""
    _, shaft_hz = _nearest_shaft_order(rc, expected_hz)
    return bool(abs(shaft_hz - expected_hz) <= tolerance_hz(spec, expected_hz, SPEED_TOLERANCE))


def _is_other_line(rc: Analysis, freq_hz: float, exclude_shaft: str) -> bool:
    """Whether ``freq_hz`` is an integer order of another shaft or a non-shaft forcing line."""
    for shaft, fr in rc.speeds_hz.items():
        if shaft == exclude_shaft or abs(fr - rc.speeds_hz[exclude_shaft]) < 1e-9:
            continue
        k = round(freq_hz / fr)
        if k >= 1 and abs(freq_hz - k * fr) <= 0.005 * freq_hz:
            return True
    return False


def nonsynchronous(rc: Analysis) -> list[dict]:
    """Clear velocity peaks that match no forcing frequency, no harmonic and no line frequency."""
    out = []
    explained = explained_frequencies(rc)
    for c in rc.channels:
        peaks = find_peaks(c.velocity, f_lo_hz=MIN_TONE_HZ, f_hi_hz=min(1000.0, c.velocity.fmax_hz),
                           min_snr=NONSYNC_MIN_SNR, min_fraction=NONSYNC_MIN_FRACTION)
        tol = np.maximum(0.01 * explained, 2 * c.velocity.resolution_hz)
        odd = [p for p in peaks if not np.any(np.abs(explained - p.freq_hz) <= tol)]
        if not odd:
            continue
        one_x = one_x_mm_s(c, rc)[rc.speed_shaft]
        top = odd[0]
        out.append(c.base() | {"kind": "nonsynchronous", "count": len(odd), "largest_hz": top.freq_hz,
                               "largest_mm_s": top.amplitude,
                               "largest_to_1x": top.amplitude / one_x if one_x > 0 else 0.0,
                               SIGNS: {spectrum_line(c.name, top.line): 1.0}})
    return out
