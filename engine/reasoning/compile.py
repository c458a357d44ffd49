"""Rules -> durable-rules ruleset definitions (the engine's plain-dict form).

Each rule becomes one durable-rules rule whose first pattern is the phase
fact, then its ``needs`` patterns in order, then its ``none_of`` patterns as
``$not`` patterns. durable-rules checks a negation once, when the patterns
before it have matched; the phase fact is asserted after every evidence fact,
so by then every fact a negation could name is present.
"""

from __future__ import annotations

from typing import Any

from .rulebook import Condition, Pattern, Ref, Rule, TALLY_KIND

PHASE_ALIAS = "tw_phase"
PHASE_KIND = "phase"
CLOSING_RULE = "tw_closing"


def _operand(value) -> Any:
    if isinstance(value, Ref):
        ref = {value.alias: value.field} if value.alias else {"$m": value.field}
        return ref if value.factor == 1 else {"$mul": {"$l": ref, "$r": value.factor}}
    return value


_COMPARE = {"above": "$gt", "at_least": "$gte", "below": "$lt", "at_most": "$lte"}


def _condition(c: Condition) -> list[dict]:
    if c.op == "is":
        return [{c.field: c.value}]
    if c.op == "is_not":
        return [{"$neq": {c.field: c.value}}]
    if c.op in _COMPARE:
        return [{_COMPARE[c.op]: {c.field: _operand(c.value)}}]
    if c.op == "between":
        return [{"$gte": {c.field: c.value[0]}}, {"$lte": {c.field: c.value[1]}}]
    if c.op == "one_of":
        return [{"$or": [{c.field: v} for v in c.value]}] if len(c.value) > 1 else [{c.field: c.value[0]}]
    if c.op == "not_one_of":
        return [{"$neq": {c.field: v}} for v in c.value]
    if c.op == "same_as":
        return [{c.field: _operand(c.value)}]
    if c.op == "differs_from":
        return [{"$neq": {c.field: _operand(c.value)}}]
    raise ValueError(f"unknown condition {c.op}")


def tally_slot(rule: Rule, pattern: Pattern) -> str:
    """Identity of the tally a count pattern reads: rule id and alias."""
    return f"{rule.id}/{pattern.alias}"


def referenced(rule: Rule) -> dict[str, set[str]]:
    """Fields of each alias that some condition compares with (``same_as: t.component``, ``2 * h.first_mm_s``).

    The engine fails on arithmetic with a field a fact does not carry (a
    level left out of a channel whose scale is not trusted): a pattern
    whose field is referenced must require it, so the match simply fails.
    """
    out: dict[str, set[str]] = {}
    for p in rule.needs + rule.none_of:
        for c in p.conditions:
            if isinstance(c.value, Ref):
                out.setdefault(c.value.alias or p.alias, set()).add(c.value.field)
    return out


def pattern_test(rule: Rule, p: Pattern, required: set[str] = frozenset()) -> dict:
    if p.counted:
        tests = [{"kind": TALLY_KIND}, {"slot": tally_slot(rule, p)}]
        if p.at_least is not None:
            tests.append({"$gte": {"n": p.at_least}})
        if p.at_most is not None:
            tests.append({"$lte": {"n": p.at_most}})
    else:
        tests = [{"kind": p.kind}] + [{"$ex": {field: 1}} for field in sorted(required)]
        for c in p.conditions:
            tests.extend(_condition(c))
        # durable-rules 2.0.28 skips a comparison with an earlier fact that follows an "$or" in one
        # "$and" (measured: tests/reasoning/test_engine_hazards.py), so every "$or" goes last
        tests.sort(key=lambda t: "$or" in t)
    return {"$and": tests}


def compile_rule(rule: Rule, action) -> dict:
    """One durable-rules rule: phase, then needs, then negations; ``action`` takes one argument."""
    needed = referenced(rule)
    patterns = [{PHASE_ALIAS: {"kind": PHASE_KIND}}]
    patterns += [{p.alias: pattern_test(rule, p, needed.get(p.alias, set()))} for p in rule.needs]
    patterns += [{f"{p.alias}$not": pattern_test(rule, p, needed.get(p.alias, set()))} for p in rule.none_of]
    return {"all": patterns, "run": action}


def compile_ruleset(rules, make_action, closing_action) -> dict:
    """A fresh ruleset definition (durable-rules pops ``run`` from the dict it is given).

    Besides the rulebook's rules it holds one closing rule that matches the
    phase fact alone, so that every diagnosis runs at least one action: see
    ``engine.Reasoner.reason`` for why a state must never be deleted before.
    """
    ruleset = {f"r{i:04d}": compile_rule(rule, make_action(rule)) for i, rule in enumerate(rules)}
    ruleset[CLOSING_RULE] = {"all": [{PHASE_ALIAS: {"kind": PHASE_KIND}}], "run": closing_action}
    return ruleset
