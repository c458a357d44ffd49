"""The differential of a leading hypothesis: its rivals, what separates them, what is missing.

An analyst defends a call by naming the other faults that could explain the
same readings and the evidence that tells them apart. For each leading
hypothesis this module lists, from the rulebook and the firings alone:

- rivals: the other hypotheses on the same component or of the same family
  (two defects of one bearing, misalignment against unbalance), each with
  its certainty and the strongest sign against it;
- separating evidence: the firings that count against a rival or against
  the leader (the rules that compete for the evidence), and the share of
  each rival's signs that the leader explains better (explaining away);
- expected but not found: the rules that would add to the leader's
  certainty and did not fire, so the reader sees what the call still lacks.

What measurement would settle it is advice (``confirm`` in
rulebooks/advice/actions.yaml); the report joins the two.
"""

from __future__ import annotations

from collections.abc import Set as AbstractSet
from dataclasses import dataclass

from .certainty import POSSIBLE
from .findings import Hypothesis, Reasoning
from .rulebook import FaultChoice, Rulebook

LEADING = 3
RIVALS = 3


@dataclass(frozen=True)
class Rival:
    """A hypothesis that competes with the leader: its certainty, the strongest sign against it and
    the share of its signs the leader explains better."""
    fault: str
    fault_name: str
    component: str
    certainty: float
    against: str          # the strongest sign against it, one sentence ("" when none fired)
    explained_by_leader: float = 0.0   # share of its signs the leading hypothesis explains better (explaining.py)


@dataclass(frozen=True)
class Differential:
    """The differential of a leading hypothesis: its rivals, the signs that separate them and the
    corroborating signs that were expected and not found."""
    fault: str
    component: str
    rivals: tuple[Rival, ...]
    separating: tuple[str, ...]     # because sentences of the rules that compete for the evidence
    missing: tuple[str, ...]        # titles of the leader's corroborating rules that did not fire


def _concludes(rule, fault: str) -> bool:
    if isinstance(rule.fault, FaultChoice):
        return fault in dict(rule.fault.faults).values()
    return rule.fault == fault


def _missing(rulebook: Rulebook, h: Hypothesis, kinds: AbstractSet[str] | None) -> tuple[str, ...]:
    """The leader's corroborating rules that did not fire; with ``kinds`` (the fact kinds the
    diagnosis had), only those whose needed kinds were all there: a rule on 1X phase is not a
    missing sign when no phase was given, nor one on a coupling when the machine has none. A nudge at
    the lowest weight (``learning_lowest_weight``: it grades a diagnosis other rules make, as where a
    twin bearing's lines are heard) is not a missing sign either."""
    fired = {f.rule_id for f in (*h.support, *h.against, *h.same_evidence)}
    lowest = rulebook.parameters.get("learning_lowest_weight")
    nudge = lowest.value if lowest is not None else 0.0     # a rulebook that declares no nudge level has none
    return tuple(r.title for r in rulebook.rules
                 if r.derives is None and r.weight > nudge and r.stage is None and _concludes(r, h.fault)
                 and r.id not in fired
                 and (kinds is None or all(p.kind in kinds for p in r.needs if not p.counted)))


def _rivals(h: Hypothesis, others: tuple[Hypothesis, ...]) -> list[Hypothesis]:
    near = [o for o in others if o is not h and (o.component == h.component or o.family == h.family)
            and (o.support or o.against)]
    return sorted(near, key=lambda o: -o.certainty)[:RIVALS]


def differential(rulebook: Rulebook, reasoning: Reasoning, kinds: AbstractSet[str] | None = None,
                 leading: int = LEADING) -> tuple[Differential, ...]:
    """The differential of each of the first ``leading`` hypotheses at POSSIBLE certainty or more;
    ``kinds``: the fact kinds the diagnosis had (see ``_missing``)."""
    out = []
    for h in [h for h in reasoning.hypotheses if h.certainty >= POSSIBLE][:leading]:
        rivals = _rivals(h, reasoning.hypotheses)
        separating = [f.because for f in h.against]
        for r in rivals:    # the strongest sign against a rival is given with the rival: not again here
            separating += [f.because for f in r.against[1:]]
        out.append(Differential(
            h.fault, h.component,
            tuple(Rival(r.fault, r.fault_name, r.component, r.certainty, r.against[0].because if r.against else "",
                        next((x.share for x in r.explained_by if (x.fault, x.component) == (h.fault, h.component)),
                             0.0))
                  for r in rivals),
            tuple(dict.fromkeys(separating)),
            _missing(rulebook, h, kinds)))
    return tuple(out)
