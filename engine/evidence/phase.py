"""1X phase facts: the phase readings a sidecar or route states, and the differences the trade reads.

The phases are not measured from the samples: a reading carries no once-per-revolution
channel (``engine.analysis.synchronous`` cuts turns from the speed, or from tach pulse
times a caller gives, and keeps no phase), so they come as stated, each against the
same once-per-revolution mark. Readings of one place (point and direction) given more
than once are one ``phase_1x`` fact with their circular mean and their spread; the
pairs compared are ``engine.machine.phase.phase_pairs``' alone. A stated 1X amplitude
sits beside the 1X the reading's own channel at that place measures, so a rule can tell
when the phase was read with another sensor, unit or point.
"""

from __future__ import annotations

import math
from collections import defaultdict

from ..analysis import Analysis
from ..machine.phase import PhasePlace, folded_difference_deg, phase_pairs, phase_place
from ..readings import scale_doubts
from .tones import one_x_mm_s


def _circular_mean_deg(phases: list[float]) -> float:
    """The mean direction of ``phases`` in degrees, 0 to under 360 (360 and -360 read as 0)."""
    s = sum(math.sin(math.radians(p)) for p in phases)
    c = sum(math.cos(math.radians(p)) for p in phases)
    return round(math.degrees(math.atan2(s, c)), 6) % 360.0


def _measured_1x(rc: Analysis, place: PhasePlace, doubted) -> tuple[str, float | None]:
    """The channel at ``place`` and the 1X of the place's shaft it measures, mm/s RMS (0.0 when no 1X
    line stands): the line the tones found (``tones.one_x_mm_s``, found once per channel); ("", None) when
    no channel sits there, and (channel, None) when its scale is doubted."""
    for c in rc.channels:
        if c.point is not None and c.point.at == place.location and c.point.direction == place.direction:
            if c.name in doubted:
                return c.name, None
            return c.name, one_x_mm_s(c, rc).get(place.shaft, 0.0)
    return "", None


def _factor(stated: float | None, measured: float | None) -> float | None:
    """The larger of stated and measured over the smaller; None unless both are there and above 0."""
    if stated is None or measured is None or stated <= 0 or measured <= 0:
        return None
    return round(max(stated / measured, measured / stated), 3)


def phase_facts(rc: Analysis) -> list[dict]:
    """One ``phase_1x`` fact per place read, then one ``phase_difference`` per pair of places
    (across a coupling once from each side, the second marked ``mirrored``)."""
    if not rc.phase_1x:
        return []
    groups: defaultdict[PhasePlace, list] = defaultdict(list)
    for p in rc.phase_1x:
        place = phase_place(rc.machine, p.point, p.direction)
        if isinstance(place, PhasePlace):          # check_phase refused the others before the analysis
            groups[place].append(p)
    out: list[dict] = []
    mean: dict[PhasePlace, float] = {}
    doubted = scale_doubts(rc.quality)
    for place, given in groups.items():
        phases = [p.phase_deg for p in given]
        mean[place] = _circular_mean_deg(phases)
        amps = [p.amplitude_mm_s_rms for p in given if p.amplitude_mm_s_rms is not None]
        stated = round(sum(amps) / len(amps), 3) if amps else None
        channel, measured = _measured_1x(rc, place, doubted)
        out.append({
            "kind": "phase_1x", "point": given[0].point, "location": place.location,
            "location_shaft": place.shaft, "direction": place.direction,
            "phase_deg": round(mean[place], 1) % 360.0,
            "amplitude_mm_s": stated,
            "readings": len(given),
            "spread_deg": round(max((folded_difference_deg(a, b) for a in phases for b in phases), default=0.0), 1),
            "measured_channel": channel,
            "measured_1x_mm_s": None if measured is None else round(measured, 3),
            "amplitude_factor": _factor(stated, measured),
        })
    for pair in phase_pairs(rc.machine, groups):
        diff = round(folded_difference_deg(mean[pair.first], mean[pair.second]), 1)
        sides = [(pair.first, pair.second, False)]
        if pair.relation == "across coupling":
            sides.append((pair.second, pair.first, True))
        for one, other, mirrored in sides:
            out.append({
                "kind": "phase_difference", "relation": pair.relation,
                "direction": "radial" if pair.relation == "horizontal-vertical" else one.direction,
                "location": one.location, "location_shaft": one.shaft, "first_direction": one.direction,
                "other_location": other.location, "other_shaft": other.shaft, "other_direction": other.direction,
                "difference_deg": diff, "from_quadrature_deg": round(abs(diff - 90.0), 1), "mirrored": mirrored,
                "coupling": pair.coupling,
            })
    return out
