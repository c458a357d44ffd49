"""Is the evidence of a fault found? The one table of predicates over evidence facts.

Each fault the planner proves has one or more routes: the ways the shipped
rulebooks reach it, each with the rule it mirrors and that rule's thresholds
(``THRESHOLDS`` names the bounds each route reads; their values come from the
loaded rulebooks, parameters resolved). A fault is
found when the facts satisfy any of its routes on the target's component and
shaft. This module is the only place in the planner that reads fact fields.

Simplifications: a route mirrors the rule that concludes the fault, not the
rules that only add to or take from its certainty; ``none_of`` clauses are
left out.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache
from typing import Callable

from .targets import Target

ENVELOPE_DEFECT = {"outer-race": "BPFO", "inner-race": "BPFI", "rolling-element": "BSF", "cage": "FTF"}

# rule id -> the (fact kind, field) lower bounds a route reads from that rule's `needs`
THRESHOLDS = {
    "bearing.tones.envelope": (("envelope_tone", "harmonics_owned"), ("envelope_tone", "first_snr_db")),
    "bearing.tones.envelope-cage": (("envelope_tone", "harmonics_owned"), ("envelope_tone", "first_snr_db")),
    "gear.tooth.once-per-rev": (("once_per_rev_event", "fm4"), ("once_per_rev_event", "repeat_fraction")),
    "gear.eccentricity.sidebands": (("sideband_family", "pairs"), ("sideband_family", "sideband_to_carrier_db")),
    "gear.wear.mesh-harmonics": (("harmonic_series", "second_to_first"), ("harmonic_series", "first_mm_s")),
    "gear.wear.both-shafts": (("sideband_family", "pairs"),),
    "shaft.looseness.harmonics": (("harmonic_series", "count"), ("harmonic_series", "sustained_count")),
    "shaft.looseness.half-orders": (("subharmonics", "count"), ("subharmonics", "max_ratio_to_1x"),
                                    ("harmonic_series", "count")),
    "electrical.stator.twice-line": (("tone", "amplitude_mm_s"),),
    "electrical.rotor-bar.pole-pass": (("sideband_family", "pairs"), ("sideband_family", "sideband_to_carrier_db")),
}


@lru_cache(maxsize=1)
def _shipped_rules():
    from ..reasoning import load_rulebook

    return load_rulebook()


def _bounds(rule: str, kind: str, field: str) -> tuple[float | None, float | None]:
    """The (lower, upper) bounds rule ``rule`` of the shipped rulebooks puts on ``field`` of a ``kind``
    fact, parameters resolved (None where it puts none)."""
    lower = upper = None
    for pattern in _shipped_rules().rule(rule).needs:
        for c in pattern.conditions if pattern.kind == kind else ():
            if c.field != field:
                continue
            if c.op == "between":
                lower, upper = float(c.value[0]), float(c.value[1])
            elif c.op in ("at_least", "above") and isinstance(c.value, (int, float)):
                lower = float(c.value)
            elif c.op in ("at_most", "below") and isinstance(c.value, (int, float)):
                upper = float(c.value)
    return lower, upper


def least(rule: str, kind: str, field: str) -> float:
    """The lower bound ``rule`` puts on ``field`` of a ``kind`` fact, so the planner judges evidence
    exactly as the rule does."""
    lower = _bounds(rule, kind, field)[0]
    if lower is None:
        raise KeyError(f"rule {rule} puts no lower bound on {kind}.{field}")
    return lower


def most(rule: str, kind: str, field: str) -> float:
    """The upper bound ``rule`` puts on ``field`` of a ``kind`` fact (+inf when it puts none)."""
    upper = _bounds(rule, kind, field)[1]
    return float("inf") if upper is None else upper


@dataclass(frozen=True)
class Reference:
    """What the severity route compares with: the level of the simulated signal itself."""

    velocity_rms_mm_s: float
    tolerance_pct: float


@dataclass(frozen=True)
class Outcome:
    found: bool
    measure: str       # the measured values that decided it, in one line


@dataclass(frozen=True)
class Route:
    name: str
    rule: str          # rulebook rule id, or the advice step it stands for
    test: Callable[[list[dict], Target, Reference | None], Outcome]


def _of(facts, kind, **equal):
    return [f for f in facts if f["kind"] == kind and all(f.get(k) == v for k, v in equal.items())]


def _envelope(rule):
    def test(facts, t, ref):
        defect = ENVELOPE_DEFECT[t.signature]
        seen = _of(facts, "envelope_tone", component=t.component, defect=defect)
        n = least(rule, "envelope_tone", "harmonics_owned")
        snr = least(rule, "envelope_tone", "first_snr_db")
        if not seen:
            return Outcome(False, f"no {defect} line in the squared envelope spectrum")
        best = max(seen, key=lambda f: (f["harmonics_owned"] >= n and f["first_snr_db"] >= snr,
                                        f["harmonics_owned"], f["first_snr_db"]))
        ok = best["harmonics_owned"] >= n and best["first_snr_db"] >= snr
        text = f"{defect} with {best['harmonics_owned']} harmonics, {best['first_snr_db']:.0f} dB"
        return Outcome(ok, text if ok else f"{text} (needs {n:g} and {snr:g} dB)")
    return test


def _tooth(facts, t, ref):
    rule = "gear.tooth.once-per-rev"
    fm4 = least(rule, "once_per_rev_event", "fm4")
    rep = least(rule, "once_per_rev_event", "repeat_fraction")
    events = _of(facts, "once_per_rev_event", shaft=t.shaft)
    if not events:
        return Outcome(False, f"no synchronous average of {t.shaft}")
    families = [f for f in _of(facts, "sideband_family", component=t.component, spacing_shaft=t.shaft)
                if f["carrier"] in ("GMF", "2xGMF")]
    best = max(events, key=lambda f: f["fm4"])
    ok = [e for e in events if e["fm4"] >= fm4 and e["repeat_fraction"] >= rep
          and any(s["channel"] == e["channel"] for s in families)]
    if ok:
        e = max(ok, key=lambda f: f["fm4"])
        return Outcome(True, f"FM4 {e['fm4']:.1f}, one event per turn in {e['repeat_fraction']:.0%} of "
                             f"{e['revolutions']} turns of {t.shaft}")
    if best["fm4"] >= fm4 and best["repeat_fraction"] >= rep:
        return Outcome(False, f"FM4 {best['fm4']:.1f}, but no GMF sidebands at 1X of {t.shaft}")
    return Outcome(False, f"FM4 {best['fm4']:.1f} in {best['repeat_fraction']:.0%} of turns "
                          f"(needs {fm4:g} in {rep:.0%})")


def _eccentricity(facts, t, ref):
    rule = "gear.eccentricity.sidebands"
    pairs = least(rule, "sideband_family", "pairs")
    level = least(rule, "sideband_family", "sideband_to_carrier_db")
    seen = _of(facts, "sideband_family", component=t.component, carrier="GMF", spacing="1X", spacing_shaft=t.shaft)
    if not seen:
        return Outcome(False, f"no sidebands at 1X of {t.shaft} beside GMF")
    best = max(seen, key=lambda f: (f["pairs"] >= pairs and f["sideband_to_carrier_db"] >= level, f["pairs"]))
    ok = best["pairs"] >= pairs and best["sideband_to_carrier_db"] >= level
    text = f"{best['pairs']} sideband pairs at 1X of {t.shaft}, {best['sideband_to_carrier_db']:.0f} dB"
    return Outcome(ok, text if ok else f"{text} (needs {pairs:g} pairs, {level:g} dB)")


def _wear_harmonics(facts, t, ref):
    rule = "gear.wear.mesh-harmonics"
    ratio = least(rule, "harmonic_series", "second_to_first")
    first = least(rule, "harmonic_series", "first_mm_s")
    seen = [f for f in _of(facts, "harmonic_series", source="GMF", component=t.component)
            if f["direction"] in ("horizontal", "vertical")]
    if not seen:
        return Outcome(False, "no GMF harmonic series")
    best = max(seen, key=lambda f: f["second_to_first"])
    ok = best["second_to_first"] >= ratio and best["first_mm_s"] >= first
    text = f"2 x GMF at {best['second_to_first']:.2f} of GMF"
    return Outcome(ok, text if ok else f"{text} (needs {ratio:g})")


def _wear_both_shafts(facts, t, ref):
    pairs = least("gear.wear.both-shafts", "sideband_family", "pairs")
    seen = [f for f in _of(facts, "sideband_family", component=t.component, carrier="GMF") if f["pairs"] >= pairs]
    for a in seen:
        for b in seen:
            if a["channel"] == b["channel"] and a["spacing_shaft"] != b["spacing_shaft"]:
                return Outcome(True, f"GMF sidebands of both shafts ({a['pairs']} and {b['pairs']} pairs)")
    return Outcome(False, f"no GMF sideband families of both shafts with {pairs:g} pairs")


def _looseness_harmonics(facts, t, ref):
    rule = "shaft.looseness.harmonics"
    count = least(rule, "harmonic_series", "count")
    sustained = least(rule, "harmonic_series", "sustained_count")
    seen = _of(facts, "harmonic_series", source="1X", component=t.shaft)
    if not seen:
        return Outcome(False, f"no 1X harmonic series of {t.shaft}")
    best = max(seen, key=lambda f: (f["count"], f["sustained_count"]))
    ok = best["count"] >= count and best["sustained_count"] >= sustained
    text = f"{best['count']} harmonics of 1X ({best['sustained_count']} sustained)"
    return Outcome(ok, text if ok else f"{text} (needs {count:g} and {sustained:g})")


def _looseness_half_orders(facts, t, ref):
    rule = "shaft.looseness.half-orders"
    count = least(rule, "subharmonics", "count")
    ratio = least(rule, "subharmonics", "max_ratio_to_1x")
    series = least(rule, "harmonic_series", "count")
    subs = _of(facts, "subharmonics", shaft=t.shaft)
    if not subs:
        return Outcome(False, f"no half orders of {t.shaft}")
    long_series = {f["channel"] for f in _of(facts, "harmonic_series", source="1X", component=t.shaft)
                   if f["count"] >= series}
    ok = [s for s in subs if s["count"] >= count and s["max_ratio_to_1x"] >= ratio and s["channel"] in long_series]
    best = max(ok or subs, key=lambda f: f["count"])
    text = f"{best['count']} half orders up to {best['max_ratio_to_1x']:.2f} of 1X"
    return Outcome(bool(ok), text if ok else f"{text} (needs {count:g} beside {series:g} harmonics)")


def _stator(facts, t, ref):
    level = least("electrical.stator.twice-line", "tone", "amplitude_mm_s")
    seen = _of(facts, "tone", name="2xLF", component=t.component)
    if not seen:
        return Outcome(False, "no line at twice line frequency")
    best = max(seen, key=lambda f: f["amplitude_mm_s"])
    text = f"2xLF at {best['amplitude_mm_s']:.2f} mm/s"
    return Outcome(best["amplitude_mm_s"] >= level, text if best["amplitude_mm_s"] >= level
                   else f"{text} (needs {level:g})")


def _pole_pass(facts, t, ref):
    rule = "electrical.rotor-bar.pole-pass"
    pairs = least(rule, "sideband_family", "pairs")
    level = least(rule, "sideband_family", "sideband_to_carrier_db")
    seen = _of(facts, "sideband_family", component=t.component, carrier="1X", spacing="pole pass")
    if not seen:
        return Outcome(False, "no pole-pass sidebands beside 1X")
    best = max(seen, key=lambda f: (f["pairs"], f["sideband_to_carrier_db"]))
    top = most(rule, "sideband_family", "sideband_to_carrier_db")
    ok = best["pairs"] >= pairs and level <= best["sideband_to_carrier_db"] <= top
    text = f"{best['pairs']} pole-pass sideband pairs, {best['sideband_to_carrier_db']:.0f} dB"
    return Outcome(ok, text if ok else f"{text} (needs {pairs:g} pair, {level:g} to {top:g} dB)")


def _severity(facts, t, ref):
    seen = [f for f in _of(facts, "overall") if f["location_shaft"] == t.shaft and f["velocity_rms_mm_s"] is not None]
    if not seen or ref is None:
        return Outcome(False, "no overall level")
    v = max(f["velocity_rms_mm_s"] for f in seen)
    error = 100 * (v / ref.velocity_rms_mm_s - 1)
    ok = abs(error) <= ref.tolerance_pct
    return Outcome(ok, f"{v:.2f} mm/s against {ref.velocity_rms_mm_s:.2f} mm/s in the signal ({error:+.0f} %)")


ROUTES: dict[str, tuple[Route, ...]] = {
    "severity": (Route("iso-band", "ISO 20816-3 zone of the overall level (advice)", _severity),),
    "outer-race": (Route("envelope", "bearing.tones.envelope", _envelope("bearing.tones.envelope")),),
    "inner-race": (Route("envelope", "bearing.tones.envelope", _envelope("bearing.tones.envelope")),),
    "rolling-element": (Route("envelope", "bearing.tones.envelope", _envelope("bearing.tones.envelope")),),
    "cage": (Route("envelope", "bearing.tones.envelope-cage", _envelope("bearing.tones.envelope-cage")),),
    "gear-tooth": (Route("synchronous-average", "gear.tooth.once-per-rev", _tooth),),
    "gear-eccentricity": (Route("sidebands", "gear.eccentricity.sidebands", _eccentricity),),
    "gear-wear": (Route("mesh-harmonics", "gear.wear.mesh-harmonics", _wear_harmonics),
                  Route("sidebands-both-shafts", "gear.wear.both-shafts", _wear_both_shafts)),
    "looseness": (Route("harmonics", "shaft.looseness.harmonics", _looseness_harmonics),
                  Route("half-orders", "shaft.looseness.half-orders", _looseness_half_orders)),
    "stator": (Route("twice-line", "electrical.stator.twice-line", _stator),),
    "rotor-bar": (Route("pole-pass", "electrical.rotor-bar.pole-pass", _pole_pass),),
}


def judge(facts: list[dict], target: Target, reference: Reference | None = None) -> tuple[bool, dict[str, Outcome]]:
    """Whether the evidence of ``target`` is found in ``facts``, and each route's outcome."""
    outcomes = {r.name: r.test(facts, target, reference) for r in ROUTES[target.signature]}
    return any(o.found for o in outcomes.values()), outcomes
