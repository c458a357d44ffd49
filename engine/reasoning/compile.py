"""Rules -> durable-rules ruleset definitions (the engine's plain-dict form).

Each rule becomes one durable-rules rule whose first pattern is the phase
fact, then its ``needs`` patterns in order, then its ``none_of`` patterns as
``$not`` patterns. durable-rules checks a negation once, when the patterns
before it have matched; the phase fact is asserted after every evidence fact,
so by then every fact a negation could name is present.
"""

from __future__ import annotations

from collections.abc import Collection
from typing import Any

from .rulebook import TALLY_KIND, Condition, Pattern, Ref, Rule, derivation_cycle, feeds

# durable-rules 2.0.28 keeps fixed-size tables in its C core, and a ruleset that outgrows one fails
# with a bare error code (tests/reasoning/test_large_rulebooks.py measures both):
# - error 108 when the ruleset is built: one node of its matching network links at most 256 rules
#   that start with the same test (BETA_LIST_LENGTH), and every rule here starts with the phase fact;
# - error 303 when a fact is asserted: matching one fact walks the tests of its kind with a stack of
#   fixed size (MAX_STACK_SIZE), about one entry per pattern of that kind the fact passes (measured:
#   64 one-test patterns of one kind that a fact all passes work, 65 fail).
# A rulebook within these budgets runs as one ruleset; a larger one is split (``plan_rulesets``). Rules per
# ruleset keep a quarter of the 256 in hand (the shipped rulebooks, about 130 rules, must stay one ruleset:
# their answers are the ones measured); patterns per kind half of the 64.
RULES_PER_RULESET = 192
PATTERNS_PER_KIND = 32

PHASE_ALIAS = "tw_phase"
PHASE_KIND = "phase"
CLOSING_RULE = "tw_closing"


def closing_group(kind: str) -> dict:
    """A test every fact of ``kind`` passes, as a group with its own end marker (see ``pattern_test``)."""
    return {"$or": [{"kind": kind}]}


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


def _joins(p: Pattern) -> bool:
    """Whether a condition of ``p`` compares with another matched fact (``differs_from: a.channel``)."""
    return any(isinstance(c.value, Ref) and c.value.alias not in (None, p.alias) for c in p.conditions)


def pattern_test(rule: Rule, p: Pattern, required: Collection[str] = frozenset()) -> dict:
    """The durable-rules test of one pattern: its kind (or its tally slot and bounds for a count
    pattern), the fields it requires, and its conditions."""
    tests: list[dict]
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
        if _joins(p):
            # when a join fails, durable-rules 2.0.28 skips the rest of the pattern's tests by
            # reading on to the end marker of the enclosing group, which the outermost "$and" lacks:
            # the read runs past the end of the array (valgrind: reduceExpressionSequence) and
            # crashed the interpreter now and then. An "$or" that always holds ends every such
            # pattern, so the read stops at that group's marker (tests/reasoning/test_engine_hazards.py)
            tests.append(closing_group(p.kind))
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


def _load(rule: Rule) -> dict[str, int]:
    """How much of each kind's matching budget ``rule`` takes: one per pattern, times the
    alternatives of each ``one_of`` (the engine tests each alternative on its own path)."""
    out: dict[str, int] = {PHASE_KIND: 1}
    for p in rule.needs + rule.none_of:
        kind = TALLY_KIND if p.counted else p.kind
        paths = 1
        for c in p.conditions:
            if c.op == "one_of" and len(c.value) > 1:
                paths *= len(c.value)
        out[kind] = out.get(kind, 0) + paths
    return out


class _Group:
    def __init__(self) -> None:
        self.rules: list[Rule] = []
        self.load: dict[str, int] = {}

    def takes(self, load: dict[str, int]) -> bool:
        if not self.rules:
            return True     # a rule too big for any ruleset still runs, alone
        return (len(self.rules) < RULES_PER_RULESET
                and all(self.load.get(k, 0) + n <= PATTERNS_PER_KIND for k, n in load.items() if k != PHASE_KIND))

    def add(self, rule: Rule, load: dict[str, int]) -> None:
        self.rules.append(rule)
        for k, n in load.items():
            self.load[k] = self.load.get(k, 0) + n


def plan_rulesets(rules) -> list[tuple[Rule, ...]]:
    """The rules split into rulesets the engine can hold, in the order they run.

    A rulebook within the budgets above is one ruleset (the usual case: the shipped rulebooks).
    A larger one is split by derivation depth first (a rule runs after every rule whose derived
    facts it can read: rulebook.feeds), then packed first-fit within each depth; the derived
    facts of earlier rulesets are asserted into later ones like evidence.
    """
    rules = list(rules)
    whole = _Group()
    loads = {r.id: _load(r) for r in rules}
    for r in rules:
        if not whole.takes(loads[r.id]):
            break
        whole.add(r, loads[r.id])
    else:
        return [tuple(rules)]
    if derivation_cycle(rules) is not None:
        raise ValueError("a rulebook whose rules feed each other in a ring cannot be split")
    depth = {r.id: 0 for r in rules}
    graph = feeds(rules)
    changed = True
    while changed:          # longest path in an acyclic graph: at most len(rules) rounds
        changed = False
        for giver, takers in graph.items():
            for t in takers:
                if depth[t] < depth[giver] + 1:
                    depth[t] = depth[giver] + 1
                    changed = True
    groups: list[tuple[int, _Group]] = []
    for r in sorted(rules, key=lambda r: depth[r.id]):   # stable: the rulebook's order within a depth
        load = loads[r.id]
        home = next((g for d, g in groups if d == depth[r.id] and g.takes(load)), None)
        if home is None:
            home = _Group()
            groups.append((depth[r.id], home))
        home.add(r, load)
    return [tuple(g.rules) for _, g in groups]
