"""The acquisition plan as one plain dict: proposals per point and purpose, the check of given
settings, the proof by simulation and the figures. Templates and JSON read only this dict."""

from __future__ import annotations

from typing import Any

from ..common.units import ShownUnits
from ..machine import Machine, Point
from ..machine.kinematics import forcing_frequencies, mesh_rates
from ..reasoning import Rulebook
from .check import CANNOT, check, frequencies_above, verdicts
from .needs import ring_down_s, rules_of
from .policy import Policy
from .proof import SEED, STAGE, prove, resonance_hz
from .propose import Proposal, propose
from .settings import Settings
from .shown import reasoner_for
from .targets import PURPOSE_TITLES, Target, purposes_at, targets_at

SCHEMA_VERSION = 1


def _rows(p: Proposal) -> list[dict]:
    slow = p.slowest_shaft
    lines = (("raw lines", f"{p.raw_lines}, resolution {p.raw_resolution_hz:.3g} Hz") if p.raw_lines is not None
             else ("lines", f"{p.lines}, resolution {p.resolution_hz:.3g} Hz"))
    rows = [
        ("Fmax", f"{p.fmax_hz:g} Hz"),
        lines,
        ("sample rate", f"{p.sample_rate_hz:g} Hz"),
        ("record", f"{p.record_s:.3g} s = {p.record_revolutions:.1f} turns of {slow}"),
        ("window", p.window.capitalize()),
        ("averages", f"{p.averages}, {p.overlap_pct:g} % overlap"),
    ]
    if p.envelope_band_hz is not None:
        rows.append(("envelope band", f"{p.envelope_band_hz[0]:.0f}-{p.envelope_band_hz[1]:.0f} Hz"))
    if p.envelope_fmax_hz is not None:
        rows.append(("envelope Fmax", f"{p.envelope_fmax_hz:g} Hz"))
        rows.append(("envelope lines", f"{p.envelope_lines}, resolution {p.envelope_resolution_hz:.3g} Hz"))
    rows.append(("waveform", f"{p.waveform_s:.3g} s = {p.waveform_revolutions:.1f} turns of {slow} "
                             f"({round(p.waveform_s * p.sample_rate_hz)} samples)"))
    return [{"setting": name, "value": value, "why": p.reasons[name]} for name, value in rows]


def _proposal_dict(p: Proposal) -> dict:
    return {
        "purpose": p.purpose, "title": p.title, "fmax_hz": p.fmax_hz, "lines": p.lines,
        "resolution_hz": p.resolution_hz, "sample_rate_hz": p.sample_rate_hz, "record_s": p.record_s,
        "slowest_shaft": p.slowest_shaft, "record_revolutions": p.record_revolutions, "window": p.window,
        "averages": p.averages, "overlap_pct": p.overlap_pct, "acquisition_s": p.acquisition_s,
        "waveform_s": p.waveform_s, "waveform_revolutions": p.waveform_revolutions,
        "envelope_band_hz": list(p.envelope_band_hz) if p.envelope_band_hz else None,
        "raw_lines": p.raw_lines, "raw_resolution_hz": p.raw_resolution_hz,
        "envelope_fmax_hz": p.envelope_fmax_hz, "envelope_lines": p.envelope_lines,
        "envelope_resolution_hz": p.envelope_resolution_hz,
        "rows": _rows(p), "notes": list(p.notes),
    }


def _grouped(proposals: dict) -> list[dict]:
    """Proposals by purpose, points with the very same settings and reasons taken together."""
    groups: dict[tuple, dict] = {}
    for (point, purpose), p in proposals.items():
        d = _proposal_dict(p)
        key = (purpose, repr(d))
        if key in groups:
            groups[key]["points"].append(point)
        else:
            groups[key] = d | {"points": [point]}
    order = list(PURPOSE_TITLES)
    return sorted(groups.values(), key=lambda g: order.index(g["purpose"]))


def _counts(machine: Machine, given: Settings, policy: Policy, speeds: dict) -> list[dict]:
    """What the given settings hold, stated whether or not a need asks for it."""
    rows = [{"what": f"turns of {shaft}", "value": f"{given.duration_s * hz:.1f} in the waveform, "
                                                    f"{given.sample_rate_hz / hz:.0f} samples per turn"}
            for shaft, hz in speeds.items()]
    for g in machine.gears:
        mesh = mesh_rates(g, speeds)
        rows.append({"what": f"mesh {g.id}", "value": f"{given.duration_s * mesh.htf_hz:.2f} hunting-tooth periods, "
                                                      f"{given.sample_rate_hz / mesh.gmf_hz:.1f} samples on one "
                                                      "tooth impact"})
    if machine.bearings:
        lo, hi = policy.bearing_resonance_hz
        where = ("under Fmax" if hi <= given.fmax_hz else "partly above Fmax" if lo < given.fmax_hz
                 else "above Fmax")
        nyquist = "under" if hi <= given.nyquist_hz else "above"
        rows.append({"what": f"envelope band {lo:.0f}-{hi:.0f} Hz",
                     "value": f"{where} ({given.fmax_hz:g} Hz), {nyquist} half the sample rate "
                              f"({given.nyquist_hz:g} Hz)"})
        rows.append({"what": "one bearing impact",
                     "value": f"{given.sample_rate_hz * ring_down_s(policy, hi):.1f} samples ringing at {hi:.0f} Hz, "
                              f"{given.sample_rate_hz * ring_down_s(policy, lo):.1f} at {lo:.0f} Hz"})
    return rows


def proof_point(machine: Machine, target: Target, points: list[Point]) -> Point:
    """Where to simulate a target: a radial point on its component, else on its shaft, else any."""
    def rank(p: Point):
        return (p.at != target.component, p.shaft != target.shaft, p.direction == "axial")
    return min(points, key=rank)


def _targets(machine: Machine, points: list[Point]) -> dict[Target, Point]:
    """Each target of every purpose at ``points`` once, with the point to prove it at."""
    seen: dict[Target, list[Point]] = {}
    for p in points:
        for purpose in purposes_at(machine, p):
            for t in targets_at(machine, p, purpose):
                seen.setdefault(t, []).append(p)
    return {t: proof_point(machine, t, candidates) for t, candidates in seen.items()}


def _trial_dict(trial) -> dict:
    return {"found": trial.found, "measure": trial.measure, "settings": trial.settings.as_dict(),
            "certainty": trial.certainty, "rules": list(trial.rules)}


def _in_units(doc: dict, units: ShownUnits, speeds: dict, driver: str) -> None:
    """The plan's words in ``units`` (its numbers keep Hz): each proposal's settings and reasons in orders of
    the shaft of its (first) point, the check's of the driving shaft; the sample rate stays Hz."""
    shafts = {p["id"]: p["shaft"] for p in doc["points"]}

    def worded(value, shaft_hz):
        if isinstance(value, str):
            return units.reword_hz(value, shaft_hz)
        if isinstance(value, list):
            return [worded(v, shaft_hz) for v in value]
        if isinstance(value, dict):
            return {k: v if k.endswith("_hz") else worded(v, shaft_hz) for k, v in value.items()}
        return value
    for group in doc["proposals"]:
        shaft_hz = speeds.get(shafts.get(group["points"][0]) or driver) or speeds[driver]
        group["rows"] = [row if row["setting"] == "sample rate" else worded(row, shaft_hz) for row in group["rows"]]
        group["notes"] = worded(group["notes"], shaft_hz)
    if doc["check"] is not None:
        doc["check"] = worded(doc["check"], speeds[driver])
    doc["units"] = {"frequency": units.frequency, "frequency_label": units.frequency_label(),
                    "orders_of": driver if units.frequency == "orders" else None,
                    "orders_of_hz": speeds[driver] if units.frequency == "orders" else None,
                    "note": "fields named _hz keep Hz; the words show these units (orders of each proposal's point's "
                            "shaft, of orders_of elsewhere); the sample rate stays Hz"}


def build_plan(machine: Machine, policy: Policy, points=None, given: Settings | None = None,
               speed_rpm: float | None = None, with_proof: bool = True, with_figures: bool = False,
               rulebook: Rulebook | None = None, units: ShownUnits | None = None) -> dict:
    """The whole plan for ``machine`` (at ``points``, default all), checking ``given`` settings if any.

    ``rulebook`` is the diagnosis's (default: the shipped rulebooks; with a site overlay, the overlay's
    rules and parameters): the needs read its thresholds and the proof reasons with one Reasoner on it.
    ``units``: the frequency unit its words show (``ShownUnits``; None or Hz: as the planner words them).
    """
    chosen = [p for p in machine.points if points is None or p.id in points]
    speeds = machine.speeds_at(speed_rpm)
    proposals = {(p.id, u): propose(machine, p, u, policy, speed_rpm, rulebook)
                 for p in chosen for u in purposes_at(machine, p)}
    doc: dict[str, Any] = {
        "kind": "acquisition plan", "schema_version": SCHEMA_VERSION,
        "machine": {"name": machine.name, "plant": machine.plant or "", "source": str(machine.source),
                    "speeds_rpm": {s: hz * 60 for s, hz in speeds.items()}},
        "rulebooks": list(rules_of(rulebook).files),      # the diagnosis's rulebooks the plan reads, overlays last
        "policy": {"source": policy.source, "sample_rate_per_fmax": policy.sample_rate_per_fmax,
                   "lines_between_carrier_and_sideband": policy.lines_between_carrier_and_sideband,
                   "min_revolutions": policy.min_revolutions, "min_samples_per_impact": policy.min_samples_per_impact},
        "points": [{"id": p.id, "at": p.at, "direction": p.direction, "shaft": p.shaft,
                    "purposes": purposes_at(machine, p)} for p in chosen],
        "proposals": _grouped(proposals),
        "given": given.as_dict() if given else None,
        "check": None, "proof": None, "figures": [],
    }
    targets = _targets(machine, chosen)
    if given is not None:
        limitations = check(machine, given, policy, points=[p.id for p in chosen], speed_rpm=speed_rpm,
                            rulebook=rulebook)
        found = verdicts(list(targets), limitations)
        doc["check"] = {
            "limitations": [lim.as_dict() for lim in limitations],
            "verdicts": [v.as_dict() for v in found],
            "cannot_show": [v.as_dict() for v in found if v.state == CANNOT],
            "above_fmax": [f.as_dict() for f in frequencies_above(machine, given, speed_rpm)],
            "counts": _counts(machine, given, policy, speeds),
            "forcing_count": len(forcing_frequencies(machine, speed_rpm)),
        }
    if with_proof:
        reasoner = reasoner_for(rulebook)      # compiled once for the whole plan
        items: list[dict[str, Any]] = []
        for t, p in targets.items():
            proposed = proposals[(p.id, t.purpose)].settings()
            sets = {"proposed": proposed}
            expected = {"proposed": verdicts([t], check(machine, proposed, policy, [p.id], [t.purpose], speed_rpm,
                                                        rulebook))[0].state}
            if given is not None:
                sets["given"] = given
                expected["given"] = verdicts([t], check(machine, given, policy, [p.id], [t.purpose], speed_rpm,
                                                        rulebook))[0].state
            item = prove(machine, t, p, sets, policy, expected, speed_rpm, reasoner=reasoner)
            items.append({"purpose": t.purpose, "fault": t.signature, "component": t.component, "shaft": t.shaft,
                          "label": t.label, "point": p.id, "expected": expected,
                          "trials": {k: _trial_dict(v) for k, v in item.trials.items()},
                          "agrees": {k: item.agrees(k) for k in item.trials}})
        verdicts_ = [a for i in items for a in i["agrees"].values()]
        doc["proof"] = {"stage": STAGE, "seed": SEED, "resonance_hz": resonance_hz(policy), "items": items,
                        "compared": sum(1 for a in verdicts_ if a is not None),
                        "agreements": sum(1 for a in verdicts_ if a is True),
                        "disagreements": sum(1 for a in verdicts_ if a is False)}
    if units is not None and units.frequency != "hz":
        _in_units(doc, units, speeds, machine.driver_shaft)
    if with_figures:
        from .figures import impact_figure

        for signature, caption in (("gear-tooth", "a tooth impact"), ("outer-race", "a bearing impact")):
            pick = next(((t, p) for t, p in targets.items() if t.signature == signature), None)
            if pick is None:
                continue
            t, p = pick
            sets = {"proposed": proposals[(p.id, t.purpose)].settings()}
            if given is not None:
                sets["given"] = given
            figure, legend = impact_figure(machine, t, p, sets, policy, speed_rpm,
                                           f"{caption.capitalize()}: {t.label} at {p.id}")
            doc["figures"].append({"title": caption, "svg": figure,
                                   "legend": [{"color": c, "text": text} for c, text in legend]})
    return doc



def render_plan(doc: dict, fmt: str) -> str:
    """The plan in ``fmt``: text, md, html or json, every value escaped for its format."""
    from ..report import render

    return render(doc, fmt, "plan")
