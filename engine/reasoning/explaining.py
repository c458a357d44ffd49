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
it) and stands at certainty ``w_h``. Read as a noisy-OR of causes (Pearl
1988, *Probabilistic Reasoning in Intelligent Systems*, sections 2.2 and
4.3), a sign supports ``h`` only in so far as no other cause accounts for
it::

    r_h(s) = product over the other claimants g of (1 - q_g(s) w_g)

A firing keeps the fit-weighted mean of ``r_h`` over its signs, each
hypothesis's certainty is combined again from its firings as they now stand,
and the shares are worked out again until nothing moves. So a sign a strong
cause explains well no longer supports a weak one (explaining away), a
hypothesis whose signs are all another's keeps little, a second fault
survives with the signs that are its own, and of two causes that explain the
same signs equally well neither stays confident: the smallest set of faults
that explains the strong signs is preferred (parsimonious covering, Peng &
Reggia 1990, *Abductive Inference Models for Diagnostic Problem-Solving*).
Two causes of certainty 0.8 and 0.4 resting on the same signs settle near
0.71 and 0.12; two of 0.8 each at 0.44.

Opposing firings are not shared (a sign against a hypothesis counts against
it whoever else it supports), and firings that name no sign keep all of their
certainty. Shares never add certainty: a firing keeps at most what it had.
"""

from __future__ import annotations

import math
from collections import defaultdict
from collections.abc import Hashable, Mapping
from dataclasses import dataclass, field

from . import certainty as cf

TOLERANCE = 1e-9
MAX_ROUNDS = 500


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
    shares: dict = field(default_factory=dict)       # sign -> {hypothesis: share it keeps}, contested signs only
    rounds: int = 0
    fits: dict = field(default_factory=dict)         # sign -> {hypothesis: fit with companions}, contested only
    claimed: dict = field(default_factory=dict)      # sign -> {hypothesis: its own fit}, contested only
    mass: dict = field(default_factory=dict)         # hypothesis -> summed fit of every sign it claims

    def losses(self, hypothesis) -> dict:
        """Who took part of ``hypothesis``'s signs: {other hypothesis: share of its fit-weighted signs}."""
        total = self.mass.get(hypothesis, 0.0)
        out: dict = defaultdict(float)
        for sign, by_h in self.claimed.items():
            if hypothesis in by_h and total > 0:
                for other, part in self.taken(hypothesis, sign).items():
                    out[other] += by_h[hypothesis] * part / total
        return dict(out)

    def taken(self, hypothesis, sign: str) -> dict:
        """Who took the part of ``sign`` that ``hypothesis`` lost: {other hypothesis: fraction of the sign}."""
        if sign not in self.shares:
            return {}
        lost = 1.0 - self.shares[sign][hypothesis]
        others = {h: q * max(self.certainty.get(h, 0.0), 0.0) for h, q in self.fits[sign].items() if h != hypothesis}
        total = sum(others.values())
        return {h: lost * v / total for h, v in others.items() if v > 0} if total > 0 else {}


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


NEIGHBOURHOOD = 0.15     # companions of a line: the lines of its spectrum within +-15 % of its frequency


def _place(sign: str) -> tuple[str, int | None]:
    """(the spectrum or record a sign belongs to, its line index or None): ``P1H|envelope:wide|296``."""
    pattern, _, last = sign.rpartition("|")
    return (pattern, int(last)) if pattern and last.isdigit() else (sign, None)


def _with_companions(fits: dict, contested: dict) -> dict:
    """Each contested sign's fits scaled by how much of the sign's neighbourhood each claimant explains.

    A line sits among other lines; a hypothesis that explains it together
    with its companions (a comb of cage harmonics every 10 Hz) explains it
    better than one that explains it alone (a ball rate landing on one of
    them). The companions are the lines of the same spectrum within +-15 %
    of its frequency (line indices scale with frequency); the fit is
    multiplied by the claimant's fit-weighted count of them against that of
    the claimant that explains most.
    """
    lines: dict = defaultdict(list)          # (pattern, hypothesis) -> [(line, fit)]
    for s, by_h in fits.items():
        pattern, line = _place(s)
        if line is not None:
            for h, q in by_h.items():
                lines[(pattern, h)].append((line, q))
    out = dict(fits)
    for s, by_h in contested.items():
        pattern, line = _place(s)
        if line is None:
            continue
        reach = max(2, NEIGHBOURHOOD * line)
        cover = {h: sum(q for other, q in lines[(pattern, h)] if abs(other - line) <= reach) for h in by_h}
        most = max(cover.values())
        out[s] = {h: q * cover[h] / most for h, q in by_h.items()}
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
    raw, fits = fits, _with_companions(fits, contested)
    # each claim's sign weight, what of it no one else claims, and its contested signs
    mass = [sum(q for q in c.signs.values() if q > 0) for c in claims]
    own = [sum(q for s, q in c.signs.items() if q > 0 and s not in contested) for c in claims]
    disputed = [sorted((s, q) for s, q in c.signs.items() if q > 0 and s in contested) for c in claims]
    order = {s: sorted(contested[s], key=repr) for s in contested}
    shares: dict[str, dict] = {}
    rounds = 0
    for rounds in range(1, MAX_ROUNDS + 1):
        for s in sorted(contested):
            by_h = fits[s]
            explained = {h: q * max(certainty.get(h, 0.0), 0.0) for h, q in by_h.items()}
            shares[s] = {h: q / contested[s][h] * math.prod(1.0 - explained[g] for g in order[s] if g != h)
                         for h, q in by_h.items()}
        new_kept = [1.0 if m == 0 else min(1.0, (o + sum(q * shares[s][c.hypothesis] for s, q in d)) / m)
                    for c, m, o, d in zip(claims, mass, own, disputed)]
        new_certainty = _combine(claims, new_kept, against)
        moved = max(abs(new_certainty[h] - certainty.get(h, 0.0)) for h in new_certainty)
        kept = [0.5 * (a + b) for a, b in zip(kept, new_kept)] if rounds > 50 else new_kept
        certainty = _combine(claims, kept, against)
        if moved < TOLERANCE:
            break
    raw_mass: dict = defaultdict(float)
    for by_h in raw.values():
        for h, q in by_h.items():
            raw_mass[h] += q
    return Sharing(tuple(kept), certainty, shares, rounds, {s: fits[s] for s in contested}, contested, dict(raw_mass))
