"""What reasoning returns: firings, ranked hypotheses and their trail (plain frozen values)."""

from __future__ import annotations

from dataclasses import dataclass, field

from .certainty import CONFIDENT, word_for


@dataclass(frozen=True)
class Firing:
    """One rule satisfied by one set of facts, with the certainty it lends."""

    rule_id: str
    title: str
    source: str
    origin: str                       # file:line of the rule, relative to its rulebook folder
    overrides: tuple[str, ...]        # files whose rule of this id it replaced (named alike)
    certainty: float                  # signed: negative counts against
    because: str                      # the rule's sentence with measured values filled in
    facts: tuple[tuple[str, dict], ...]   # (alias, fact) that satisfied it
    derived: dict | None = None       # the fact it asserted, for a chaining rule
    signs: tuple[tuple[str, float], ...] = ()   # the signs it explains, with the fit of each (explaining.py)
    kept: float = 1.0                 # share of those signs its hypothesis holds after explaining away
    raw_certainty: float | None = None   # before explaining away (None: nothing was shared)
    site_record: tuple[int, int] | None = None   # the rule's (confirmed, judged) at repair at the site
    weight_kept: str | None = None    # why learning kept the rule's weight (None: learned, or no site record)
    counted_with: str | None = None   # in a hypothesis's same_evidence: the rule whose firing counted for both
    because_parts: tuple = ()         # the because sentence as (text, value or None) parts, for other units
    rival: str | None = None          # a rule with ``indistinct_from``: the fault it names beside the hypothesis's
    rival_name: str | None = None
    measure_again: str = ""           # a reading problem's remedy: the setting to change when measuring again
    measure_again_parts: tuple = ()   # that sentence in parts, as because_parts


@dataclass(frozen=True)
class SignLoss:
    """Part of a hypothesis's signs that another hypothesis explains better."""

    fault: str
    fault_name: str
    component: str
    share: float          # fraction of the hypothesis's sign weight it took (0..1)


@dataclass(frozen=True)
class Hypothesis:
    """A fault on a component with its combined certainty and damage stage, the rule firings for
    and against it, and its certainty before explaining away with who took part of its signs."""
    fault: str
    fault_name: str
    family: str
    component: str
    certainty: float
    stage: int | None
    support: tuple[Firing, ...]       # strongest firing of each rule for it
    against: tuple[Firing, ...]       # strongest firing of each rule against it
    other_matches: int = 0            # weaker firings of the same rules, not counted again
    withholds: bool = False           # a reading problem that, when confident, withholds the diagnosis
    raw_certainty: float | None = None    # before explaining away (None: no sign of it was shared)
    explained_by: tuple[SignLoss, ...] = ()   # hypotheses that took part of its signs, most first
    same_evidence: tuple[Firing, ...] = ()   # firings of rules that count with a supporting one: not counted again
    indistinct: tuple[Firing, ...] = ()   # rules naming a rival fault the evidence cannot tell this one from

    @property
    def rivals(self) -> tuple[str, ...]:
        """The faults named beside this one, which the evidence cannot tell from it (``indistinct``)."""
        return tuple(dict.fromkeys(f.rival for f in self.indistinct if f.rival))

    @property
    def faults(self) -> tuple[str, ...]:
        """Every fault the hypothesis names: its own, then its rivals."""
        return (self.fault, *self.rivals)

    @property
    def named(self) -> str:
        """The fault's name, with its rivals' ("outer-race defect or rolling-element defect")."""
        names = [self.fault_name, *dict.fromkeys(f.rival_name for f in self.indistinct if f.rival_name)]
        return " or ".join(names)

    @property
    def strength(self) -> str:
        """The certainty in words (engine.reasoning.certainty.word_for)."""
        return word_for(self.certainty)

    @property
    def confident(self) -> bool:
        """Whether the certainty reaches CONFIDENT, the bar of a call."""
        return self.certainty >= CONFIDENT

    @property
    def channels(self) -> tuple[str, ...]:
        """The channels its supporting facts were measured on, in the trail's order, those whose
        fact sits at its own component (bearing or shaft) first."""
        seen = [(f["channel"], self.component in (f.get("location"), f.get("location_shaft")))
                for firing in self.support for _, f in firing.facts if f.get("channel") is not None]
        return tuple(c for c, at in seen if at) + tuple(c for c, at in seen if not at)


@dataclass(frozen=True)
class Reasoning:
    """Ranked hypotheses and the chain of derived facts behind them."""

    hypotheses: tuple[Hypothesis, ...]
    withheld: bool                       # a reading problem means no fault conclusion stands
    reading_problems: tuple[Hypothesis, ...]   # family "reading": ones that withhold, ones that limit
    chain: tuple[Firing, ...]            # rules that derived intermediate facts
    facts_considered: int
    rules_loaded: int
    rulebook_files: tuple[str, ...] = field(default=())
    differential: tuple = ()             # reasoning.differential.Differential of the leading hypotheses
    fault_advice: dict = field(default_factory=dict)   # fault id -> rulebook.FaultAdvice a site overlay gave it

    @property
    def top(self) -> Hypothesis | None:
        """The leading hypothesis, or None when no rule fired for any."""
        return self.hypotheses[0] if self.hypotheses else None

    def derived(self, kind: str) -> tuple[Firing, ...]:
        """The firings of the chain that derived a fact of ``kind`` (a derived kind another stage reads, such
        as ``time_to_act``), in the order they fired."""
        return tuple(f for f in self.chain if f.derived is not None and f.derived["kind"] == kind)

    def confident(self) -> tuple[Hypothesis, ...]:
        """The hypotheses at CONFIDENT or more, leading first."""
        return tuple(h for h in self.hypotheses if h.confident)
