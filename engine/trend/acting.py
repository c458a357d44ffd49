"""How soon to act, as the rulebooks say it from a trend: the ``time_to_act`` facts the rules of
rulebooks/time-to-act.yaml (and a site's rules on ``trend`` facts) derive, as plain rows per point.

A diagnosis stored with its history already reasoned over its trend facts (``raises_of`` reads its
``Reasoning``); ``tellwave trend`` and a route's summary come after every diagnosis and run the same
rules on the trend document's own facts (``trend_raises``): the rules that read nothing but ``trend``
facts, so no evidence is needed and the store is never read by the reasoning. The step a time in days
asks for is the advice's (``engine.advice.urgency_raises``: ``window_opens_days``); nothing here
judges a trend.
"""

from __future__ import annotations

from dataclasses import replace
from functools import cache

from .facts import trend_facts

TREND_KIND = "trend"


def _reads_trend_only(rule) -> bool:
    """Whether every fact ``rule`` needs or must not find is a trend fact (a rule a trend alone can fire)."""
    return bool(rule.needs) and all(p.kind == TREND_KIND for p in (*rule.needs, *rule.none_of))


@cache
def _reasoner(places: tuple[str, ...]):
    """The compiled rules on trend facts of the shipped rulebooks with the ``places`` overlays (None: none)."""
    from ..reasoning import Reasoner, load_rulebook

    book = load_rulebook(*places)
    rules = tuple(r for r in book.rules if _reads_trend_only(r))
    return Reasoner(replace(book, rules=rules)) if rules else None


def _rows(raises, opens: dict[str, float]) -> dict[str, list[dict]]:
    """point -> its raises (``engine.advice.UrgencyRaise``) as plain rows: the step asked for, when its window
    opens (days; None for a step without one, such as watch), the rule and its sentence."""
    out: dict[str, list[dict]] = {}
    for r in raises:
        out.setdefault(r.point, []).append({
            "urgency": {"id": r.urgency.id, "label": r.urgency.label, "within": r.urgency.within},
            "opens_days": opens.get(r.urgency.id), "rule": r.rule_id, "because": r.because})
    return out


def raises_of(reasoning, data: dict | None = None) -> dict[str, list[dict]]:
    """point -> what the rules of a finished diagnosis (``reasoning``) said about how soon to act there."""
    from ..advice import load_advice, urgency_raises, urgency_steps

    data = data or load_advice()
    return _rows(urgency_raises(reasoning, data, urgency_steps(data)), data.get("window_opens_days") or {})


def trend_raises(points: list[dict], places: tuple[str, ...] = ()) -> dict[str, list[dict]]:
    """point -> what the rules on trend facts say about how soon to act there, for the points of a trend
    document (``report.trend_from_rows``); ``places``: the site overlays, as ``diagnose --site`` takes them."""
    reasoner = _reasoner(tuple(str(p) for p in places))
    facts = trend_facts({"points": points})
    if reasoner is None or not facts:
        return {}
    return raises_of(reasoner.reason(facts))
