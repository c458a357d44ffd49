"""Would a diagnosis show the fault? The real Reasoner's answer on the evidence of one record.

The proof asks the diagnosis itself instead of a copy of its rules: the
evidence facts of a simulated record go to a ``Reasoner`` built from the
rulebooks the diagnosis loads (the shipped ones and any site overlay, with
its ``parameters:``, disabled and overriding rules), and the target is shown
when the reasoning names its fault on its component at ``POSSIBLE``
certainty or more (what a report lists) and no reading problem withholds
the diagnosis. Every rule that adds to or takes from the certainty, and
explaining away, count as they do in ``tellwave diagnose``.

A gear's tooth or eccentricity target is a fault of one gear of a mesh,
while a hypothesis names the mesh: it is shown only when a firing that
supports it rests on a fact of that gear's shaft (its turns or its
sidebands).

The overall level (``severity``) is not a rule's conclusion but a
measurement the advice grades on the ISO 20816-3 zones: it is shown when
the overall level of the record is the level of the simulated signal,
within the policy's tolerance.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

from ..reasoning import POSSIBLE, Reasoner, Reasoning, Rulebook
from .targets import Target


@dataclass(frozen=True)
class Outcome:
    """Whether a record shows a target, and the measured values or conclusion that decided it."""

    found: bool
    measure: str                        # one line
    certainty: float | None = None      # the hypothesis's certainty, when the reasoning names it
    rules: tuple[str, ...] = ()         # the rules that concluded it, strongest first


@dataclass(frozen=True)
class Reference:
    """What the overall level is compared with: the level of the simulated signal itself."""

    velocity_rms_mm_s: float
    tolerance_pct: float


@lru_cache(maxsize=1)
def shipped_reasoner() -> Reasoner:
    """One Reasoner on the shipped rulebooks, compiled once per process."""
    from ..reasoning import load_rulebook

    return Reasoner(load_rulebook())


def reasoner_for(rulebook: Rulebook | None) -> Reasoner:
    """The Reasoner a plan proves with: on ``rulebook`` (a diagnosis's, overlays included), else the shipped one."""
    return shipped_reasoner() if rulebook is None else Reasoner(rulebook)


def _names_shaft(firing, shaft: str) -> bool:
    return any(shaft in (fact.get("shaft"), fact.get("spacing_shaft")) for _, fact in firing.facts)


def shown(reasoning: Reasoning, target: Target) -> Outcome:
    """Whether ``reasoning`` shows ``target``'s fault on its component, as a report would."""
    # a hypothesis naming a rival it cannot be told from (a race and a ball whose rates coincide) names both
    mine = [h for h in reasoning.hypotheses if target.fault in h.faults and h.component == target.component]
    one_gear = target.purpose == "gear" and target.signature != "gear-wear"
    if one_gear:
        mine = [h for h in mine if any(_names_shaft(f, target.shaft) for f in h.support)]
    what = f"{target.fault} on {target.component}" + (f" ({target.shaft} gear)" if one_gear else "")
    if not mine:
        top = reasoning.top
        lead = f"; the leading hypothesis is {top.fault} on {top.component} at {top.certainty:.2f}" if top else ""
        return Outcome(False, f"no rule concludes {what}{lead}")
    h = max(mine, key=lambda x: x.certainty)
    rules = tuple(f.rule_id for f in h.support)
    text = f"{what} at certainty {h.certainty:.2f} ({', '.join(rules) or 'no supporting rule'})"
    if reasoning.withheld:
        why = ", ".join(p.fault for p in reasoning.reading_problems if p.confident and p.withholds)
        return Outcome(False, f"{text}, but the reading rules withhold the diagnosis ({why})", h.certainty, rules)
    if h.certainty < POSSIBLE:
        return Outcome(False, f"{text}, below the {POSSIBLE:g} a report shows", h.certainty, rules)
    return Outcome(True, text, h.certainty, rules)


def level_shown(facts: list[dict], target: Target, reference: Reference | None) -> Outcome:
    """Whether the record's overall level on ``target``'s shaft is the simulated signal's, within tolerance."""
    seen = [f["velocity_rms_mm_s"] for f in facts if f["kind"] == "overall"
            and f.get("location_shaft") == target.shaft and f.get("velocity_rms_mm_s") is not None]
    if not seen or reference is None:
        return Outcome(False, "no overall level")
    v = max(seen)
    error = 100 * (v / reference.velocity_rms_mm_s - 1)
    return Outcome(abs(error) <= reference.tolerance_pct,
                   f"{v:.2f} mm/s against {reference.velocity_rms_mm_s:.2f} mm/s in the signal ({error:+.0f} %)")
