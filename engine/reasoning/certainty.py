"""Certainty factors: grading one rule's firing and combining several (MYCIN).

A certainty factor (CF) lies in [-1, 1]: 1 is proof for, -1 proof against,
0 no information. Shortliffe & Buchanan (1975), "A model of inexact
reasoning in medicine", Mathematical Biosciences 23, 351-379, combine two
CFs for the same hypothesis as

    both > 0:   x + y (1 - x)
    both < 0:   x + y (1 + x)
    otherwise:  (x + y) / (1 - min(|x|, |y|))

The mixed-sign formula is not associative, so the order matters. tellwave
uses one fixed order that does not depend on how rules are listed: every
supporting CF is combined first (the same-sign formula is associative and
commutative), then every opposing CF, and the two totals meet once through
the mixed formula.
"""

from __future__ import annotations

from collections.abc import Iterable
from functools import reduce

LIKELY = 0.7      # a hypothesis the report states as the likely answer
CONFIDENT = 0.5   # at or above this a hypothesis counts as a conclusion
POSSIBLE = 0.2    # below this a hypothesis is not worth reporting


def combine(x: float, y: float) -> float:
    """MYCIN combination of two certainty factors for the same hypothesis."""
    if x >= 0 and y >= 0:
        return x + y * (1 - x)
    if x <= 0 and y <= 0:
        return x + y * (1 + x)
    denominator = 1 - min(abs(x), abs(y))
    if denominator == 0:
        return 0.0  # proof for meets proof against: no information
    return (x + y) / denominator


def combine_all(cfs: Iterable[float]) -> float:
    """Combine many CFs: supporting ones, then opposing ones, then the two totals."""
    cfs = list(cfs)
    support = reduce(combine, (c for c in cfs if c > 0), 0.0)
    against = reduce(combine, (c for c in cfs if c < 0), 0.0)
    return combine(support, against)


def held_at(ceiling: float, support: Iterable[float], against: Iterable[float]) -> float:
    """The opposing CF that brings ``combine_all(support + against)`` down to ``ceiling`` exactly (a rule
    with ``certainty: {at_most: X}``): the trail shows the ceiling as what it took, and the certainty
    still combines from the firings listed. For a total above the ceiling (``0 <= ceiling < total``)."""
    s = reduce(combine, (c for c in support if c > 0), 0.0)
    a = reduce(combine, (c for c in against if c < 0), 0.0)
    if not 0 <= ceiling < combine(s, a):
        raise ValueError(f"a ceiling of {ceiling:g} does not hold down a total of {combine(s, a):g}")
    needed = -(s - ceiling) / (1 - ceiling)          # combine(s, needed) == ceiling, |needed| <= s
    return (needed - a) / (1 + a)                    # combine(a, result) == needed (both opposing)


def ramp(value: float, start: float, full: float) -> float:
    """Grade in [0, 1]: 0 at ``start``, 1 at ``full``, linear between (either direction)."""
    if start == full:
        raise ValueError("a ramp needs two different ends")
    return min(1.0, max(0.0, (value - start) / (full - start)))


def premise_certainty(premises: Iterable[float]) -> float:
    """CF of a conjunction of premises: the weakest of them (Shortliffe & Buchanan 1975)."""
    return min(premises, default=1.0)


def word_for(cf: float) -> str:
    """Plain-English strength of a combined certainty, for reports."""
    if cf >= LIKELY:
        return "likely"
    if cf >= CONFIDENT:
        return "probable"
    if cf >= POSSIBLE:
        return "possible"
    if cf > 0:
        return "weak"
    return "ruled out" if cf <= -CONFIDENT else "not supported"
