"""Explaining away: hypotheses share the signs they explain.

Certainty factors add up the support of every rule that fits a hypothesis;
on their own they cannot say "this sign is already explained". A tooth
impact makes a waveform impulsive just as a spall does; a damaged ball puts
the cage rate into the envelope; two bearings on one shaft can claim the
same envelope line. Here every observed sign (a spectral or envelope line,
a waveform's impulsiveness, an impact train, a once-per-turn event) is
shared among the hypotheses that explain it, and each firing keeps only the
share of its signs that its hypothesis holds.

A hypothesis ``h`` explains a sign ``s`` with a fit ``q_h(s)`` in (0, 1] (how
closely its rate matches the line, for instance; the evidence stage gives
it) and stands at certainty ``w_h``. Each sign goes to its claimants in
proportion to ``q_h(s) w_h``::

    r_h(s) = q_h(s) w_h / sum_g q_g(s) w_g

A firing keeps the fit-weighted mean of ``r_h`` over its signs, the
hypothesis's certainty is combined again from the firings as they now stand,
and the shares are worked out again, until nothing moves. The iteration is
a fixed point with positive feedback: a hypothesis that explains a sign
better, or explains more of the signs around it, takes more of each shared
sign, which raises it further. So the smallest set of hypotheses that
explains the strong signs ends up holding them (parsimonious covering, Peng &
Reggia 1990, *Abductive Inference Models for Diagnostic Problem-Solving*),
a sign explained by a stronger cause no longer supports a weaker one
(explaining away, Pearl 1988, *Probabilistic Reasoning in Intelligent
Systems*, section 2.2), and a second fault survives with the signs that are
its own. Two hypotheses that explain the same signs equally well share
them equally: neither is confident, which is the honest answer.

Opposing firings are not shared (a sign against a hypothesis counts against
it whoever else it supports), and firings that name no sign keep all of their
certainty. Shares never add certainty: a firing keeps at most what it had.
"""

from __future__ import annotations

from collections import defaultdict
from dataclasses import dataclass, field
from typing import Hashable, Mapping

from . import certainty as cf

TOLERANCE = 1e-9
MAX_ROUNDS = 500
FLOOR = 1e-6        # a hypothesis's weight in the shares never falls to exactly 0 (ties stay split by fit)


@dataclass(frozen=True)
class Claim:
    """One supporting firing: its hypothesis, the rule that fired, its certainty and the signs it explains."""

    hypothesis: Hashable
    rule: str
    certainty: float                   # > 0, before sharing
    signs: Mapping[str, float]         # sign -> fit in (0, 1]


@dataclass(frozen=True)
class Sharing:
    """What explaining away settled."""

    kept: tuple[float, ...]                          # per claim, the share of its signs it keeps (0..1)
    certainty: dict                                  # hypothesis -> combined certainty after sharing
    shares: dict = field(default_factory=dict)       # sign -> {hypothesis: share}, signs with several claimants
    rounds: int = 0


def _combine(claims, kept, against: Mapping) -> dict:
    """Each hypothesis's certainty: per rule its strongest firing as kept, then MYCIN."""
    best: dict = defaultdict(dict)
    for c, k in zip(claims, kept):
        rules = best[c.hypothesis]
        rules[c.rule] = max(rules.get(c.rule, 0.0), c.certainty * k)
    out = {}
    for h in set(best) | set(against):
        out[h] = cf.combine_all(list(best.get(h, {}).values()) + list(against.get(h, ())))
    return out


def share(claims: list[Claim], against: Mapping | None = None) -> Sharing:
    """Share every sign among the hypotheses whose firings explain it (see the module docstring).

    ``against`` maps a hypothesis to the certainties of its opposing firings
    (negative numbers), which are combined in but never shared. The result
    does not depend on the order of ``claims``.
    """
    against = against or {}
    claims = list(claims)
    fits: dict[str, dict] = defaultdict(dict)          # sign -> hypothesis -> best fit
    for c in claims:
        for s, q in c.signs.items():
            if q > 0:
                fits[s][c.hypothesis] = max(fits[s].get(c.hypothesis, 0.0), min(1.0, float(q)))
    contested = {s: by_h for s, by_h in fits.items() if len(by_h) > 1}
    kept = [1.0] * len(claims)
    certainty = _combine(claims, kept, against)
    if not contested:
        return Sharing(tuple(kept), certainty)
    shares: dict[str, dict] = {}
    rounds = 0
    for rounds in range(1, MAX_ROUNDS + 1):
        for s in sorted(contested):
            by_h = contested[s]
            score = {h: q * max(certainty.get(h, 0.0), FLOOR) for h, q in by_h.items()}
            total = sum(score[h] for h in sorted(score, key=repr))
            shares[s] = {h: score[h] / total for h in by_h}
        new_kept = []
        for c in claims:
            mass = sum(q for q in c.signs.values() if q > 0)
            if mass == 0:
                new_kept.append(1.0)
                continue
            held = sum(q * (shares[s][c.hypothesis] if s in shares else 1.0)
                       for s, q in sorted(c.signs.items()) if q > 0)
            new_kept.append(min(1.0, held / mass))
        new_certainty = _combine(claims, new_kept, against)
        moved = max(abs(new_certainty[h] - certainty.get(h, 0.0)) for h in new_certainty)
        kept, certainty = new_kept, new_certainty
        if moved < TOLERANCE:
            break
    return Sharing(tuple(kept), certainty, shares, rounds)
