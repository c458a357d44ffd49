"""What the reading's settings can show, measured against this machine; data quality; machine class.

Facts carry measurements only: the reading's Fmax, lines, resolution and
length beside the machine's rates that they must reach (the highest gear
mesh, pass and race rates, the closest pair of lines to separate, the
tightest sideband spacing, the slowest shaft the reading's points see:
``Machine.shafts_seen_from`` says which, and why). Whether the settings are
adequate is for the rulebooks to judge (rulebooks/reading.yaml), with limits
a site can change. Conventions (common practice in analyzer documentation):
usable Fmax = sample rate / 2.56 (``readings.length.FMAX_FACTOR``); lines =
samples / 2.56.
"""

from __future__ import annotations

from ..analysis import Analysis
from ..readings.length import FMAX_FACTOR
from ..readings.quality import CORRUPTING_ISSUES

SEPARATED = {"1X", "2xLF", "GMF", "vane pass", "blade pass", "belt pass"}


def _closest_pair(rc: Analysis, fmax_hz: float) -> tuple[float, str]:
    """The two closest discrete lines below Fmax a diagnosis must tell apart (2X against 2xLF included).

    Bearing defect lines are left out: they slip by 1-2 % and are told apart
    by their harmonic pattern, not by one line.
    """
    rates = {(round(f.frequency_hz, 6), f.label) for f in rc.forcing if f.name in SEPARATED}
    rates |= {(round(2 * hz, 6), f"2X {shaft}") for shaft, hz in rc.speeds_hz.items()}
    lines = sorted((f, label) for f, label in rates if 2.0 <= f <= fmax_hz)
    best = (0.0, "")
    for (f1, l1), (f2, l2) in zip(lines, lines[1:]):
        gap = f2 - f1
        if gap > 1e-3 * f2 and (best[0] == 0.0 or gap < best[0]):
            best = (gap, f"{l1} / {l2}")
    return best


def _tightest_sidebands(rc: Analysis, seen: set[str]) -> tuple[float, str]:
    """The closest sideband spacing the reading's points can see: 1X sidebands of a mesh with a gear
    on a shaft ``seen``, pole pass sidebands of a motor on one."""
    spacings = [(rc.speeds_hz[s], f"1X {s} sidebands of {g.mesh}") for g in rc.rates.meshes
                if {g.driving_shaft, g.driven_shaft} & seen for s in (g.driving_shaft, g.driven_shaft)]
    spacings += [(m.pole_pass_hz, f"pole pass sidebands of {m.motor}") for m in rc.rates.motors
                 if m.pole_pass_hz is not None and m.shaft in seen]
    return min(spacings) if spacings else (0.0, "")


def _shafts_seen(rc: Analysis) -> set[str]:
    """The shafts the reading's points see (``Machine.shafts_seen_from``); every shaft of the
    machine when a channel has no point."""
    points = [c.point for c in rc.channels]
    if not points or any(p is None for p in points):
        return set(rc.speeds_hz)
    return set().union(*(rc.machine.shafts_seen_from(p.shaft) for p in points if p is not None))


def acquisition(rc: Analysis) -> list[dict]:
    """One fact about the reading's settings beside the machine's rates they must reach."""
    fs = rc.fs_hz
    fmax = fs / FMAX_FACTOR
    seen = _shafts_seen(rc)
    # of shafts at one speed, the first in the machine file: a set's order changes from run to run
    slowest_shaft = min((s for s in rc.speeds_hz if s in seen), key=lambda shaft: rc.speeds_hz[shaft])
    gap, pair = _closest_pair(rc, fmax)
    spacing, spacing_for = _tightest_sidebands(rc, seen)
    centres = [c.kurtogram.best.centre_hz for c in rc.channels if c.kurtogram is not None]
    centre = max(centres) if centres else 0.0
    rates = rc.rates
    unplaced = [c.name for c in rc.channels if c.point is None]
    return [{
        "kind": "acquisition", "sample_rate_hz": fs, "fmax_hz": fmax, "lines": int(rc.n_samples / FMAX_FACTOR),
        "resolution_hz": fs / rc.n_samples, "duration_s": rc.duration_s,
        "slowest_shaft": slowest_shaft, "revolutions": rc.duration_s * rc.speeds_hz[slowest_shaft],
        "fastest_shaft_hz": max(rc.speeds_hz.values()),
        "highest_gmf_hz": max((g.gmf_hz for g in rates.meshes), default=0.0),
        "highest_pass_hz": max((r.pass_hz for r in rates.rotors), default=0.0),
        "highest_belt_pass_hz": max((b.belt_pass_hz for b in rates.belts), default=0.0),
        "highest_race_hz": max((max(b.bpfi_hz, b.bpfo_hz) for b in rates.bearings), default=0.0),
        "highest_rotor_bar_hz": max((m.rotor_bar_hz or 0.0 for m in rates.motors), default=0.0),
        "twice_line_hz": max((m.twice_line_hz for m in rates.motors), default=0.0),
        "closest_gap_hz": gap, "closest_pair": pair,
        "sideband_spacing_hz": spacing, "sideband_for": spacing_for,
        "envelope_centre_hz": centre, "samples_per_cycle": fs / centre if centre > 0 else 0.0,
        "speed_refined": rc.speed_estimate.refined,
        "speed_rpm": rc.speed_estimate.speed_hz * 60, "speed_shaft": rc.speed_shaft,
        "unplaced_channels": len(unplaced), "unplaced_names": ", ".join(unplaced),
    }]


# what analysis.speed's shaft-line check reports, with the value a missing entry takes
SHAFT_CHECK = {
    "one_x_found": False, "one_x_elsewhere_db": 0.0, "odd_order_lines": 0, "half_order_lines": 0,
    "half_to_one_x": 0.0,
    "double_speed_lines": 0, "half_x_snr_db": 0.0, "half_x_window_pct": 0.0, "two_x_snr_db": 0.0,
    "odd_to_two_x": 0.0,
    "near_family_lines": 0, "far_family_lines": 0, "near_family_chance_pct": 100.0, "far_family_chance_pct": 100.0,
    "near_one_x_db": 0.0, "far_one_x_db": 0.0, "far_family_hz": 0.0, "far_family_scale": 0.0,
}


def speed_check(rc: Analysis) -> list[dict]:
    """The speed the reading states, the speed its spectrum shows, and lines that contradict both.

    A sample rate or speed stated twice or half its true value moves every
    shaft line to half or twice its order; the rules in rulebooks/reading.yaml
    judge whether the stated values can be trusted. Beside them, the speeds the
    machine's drive allows the shaft (its stated range, or its line-fed motors;
    0 when the machine file fixes neither) and the machine file's own speed.
    """
    est = rc.speed_estimate
    limits = rc.speed_limits
    # a reading states its driver's speed (--rpm, the sidecar's speed_rpm, synth's sidecar): the
    # shaft the speed is measured on is compared with that speed carried to it by the machine's ratios
    stated = (rc.stated_shaft_rpm or 0.0) if rc.stated_rpm else 0.0
    measured = est.speed_hz * 60
    against = stated or rc.nominal_rpm
    deviation = 100.0 * (measured - against) / against if against > 0 else 0.0
    check = {name: type(default)(rc.speed_check.get(name, default)) for name, default in SHAFT_CHECK.items()}
    scale = check.pop("far_family_scale")
    family_deviation = 100.0 * (scale - 1) if scale else 0.0
    return [{
        "kind": "speed_check", "shaft": rc.speed_shaft, "stated_rpm": stated, "nominal_rpm": rc.nominal_rpm,
        "stated_driver_rpm": rc.stated_rpm or 0.0, "driver": rc.machine.driver_shaft,
        "measured_rpm": measured, "source": est.source, "harmonics": est.lines_found,
        "deviation_pct": deviation, "abs_deviation_pct": abs(deviation),
        **{name: value for name, value in check.items() if name != "far_family_hz"},
        "far_over_near_db": check["far_one_x_db"] - check["near_one_x_db"],
        "family_rpm": check["far_family_hz"] * 60,
        "family_deviation_pct": family_deviation, "abs_family_deviation_pct": abs(family_deviation),
        "allowed_low_rpm": limits.low_rpm if limits else 0.0,
        "allowed_high_rpm": limits.high_rpm if limits else 0.0,
        "allowed_by": limits.set_by if limits else "",
    }]


def data_quality(rc: Analysis) -> list[dict]:
    """One fact per quality issue the reader's gates found; whether the issue corrupts the channel's
    samples (``readings.quality.CORRUPTING_ISSUES``, the one list the rules read through ``corrupting``),
    whether its channel was left out of the analysis (the others diagnosed without it), its point, the
    bearing or part that point sits at, and how many analysed channels still sit there."""
    at = {p.id: p.at for p in rc.machine.points}
    where = {name: at.get(point, "") for name, point in rc.channel_points.items()}
    seen: dict[str, int] = {}
    for ch in rc.channels:
        seen[where.get(ch.name, "")] = seen.get(where.get(ch.name, ""), 0) + 1
    out = []
    for q in rc.quality:
        location = where.get(q.channel, "")
        out.append({"kind": "data_quality", "channel": q.channel, "issue": q.kind, "value": q.value,
                    "blocking": q.blocking, "corrupting": q.kind in CORRUPTING_ISSUES,
                    "left_out": q.channel in rc.left_out,
                    "point": rc.channel_points.get(q.channel, ""), "location": location,
                    "location_channels": seen.get(location, 0)})
    return out


def machine_class(rc: Analysis) -> list[dict]:
    """What kind of machine this is, so a site rule can hold for one class only."""
    m = rc.machine
    return [{"kind": "machine", "name": m.name, "iso_group": m.iso_group or 0, "support": m.support or "",
             "driver_rpm": rc.speeds_hz[m.driver_shaft] * 60, "gears": len(m.gears), "belts": len(m.belts),
             "motors": len(m.motors)}]


def drive_links(rc: Analysis) -> list[dict]:
    """How the machine's shafts are joined, from its file: for each coupling and each belt drive one fact
    per side, naming the link, its type, the shaft on that side and the shaft across it. A rule reads
    these to put a fault of the joint (misalignment) on the coupling or the belt that joins the shaft
    under the sensor; a shaft with no fact of this kind is joined to nothing."""
    m = rc.machine
    facts = []
    for c in m.couplings:
        a, b = c.shafts
        for shaft, other in ((a, b), (b, a)):
            facts.append({"kind": "drive_link", "component": c.id, "link": "coupling", "type": c.type,
                          "shaft": shaft, "other_shaft": other})
    for belt in m.belts:
        for shaft, other in ((belt.driving_shaft, belt.driven_shaft), (belt.driven_shaft, belt.driving_shaft)):
            facts.append({"kind": "drive_link", "component": belt.id, "link": "belt", "type": "belt",
                          "shaft": shaft, "other_shaft": other})
    return facts


def overhung_rotors(rc: Analysis) -> list[dict]:
    """The rotors the machine file says are overhung (outboard of both their shaft's bearings), one fact
    each: unbalance of an overhung rotor gives a high axial 1X, which a rule reads against unbalance on a
    rotor between its bearings."""
    return [{"kind": "overhung_rotor", "component": r.id, "shaft": r.shaft, "type": r.type}
            for r in rc.machine.rotors if r.overhung]
