"""Rules in plain words, and a summary of a loaded rulebook, for the authoring commands."""

from __future__ import annotations

from collections import defaultdict

from .rulebook import Condition, FaultChoice, Pattern, Ref, Rule, Rulebook

_OPS = {"is": "is", "is_not": "is not", "above": "is above", "at_least": "is at least", "below": "is below",
        "at_most": "is at most", "same_as": "is the same as", "differs_from": "differs from"}


def _words(name: str) -> str:
    return name.replace("_", " ")


def _value(v) -> str:
    if isinstance(v, Ref):
        if v.alias is None:
            return f"its own {_words(v.field)}" if v.factor == 1 else f"{v.factor:g} x its own {_words(v.field)}"
        return f"{v.factor:g} x {v.alias}.{v.field}" if v.factor != 1 else f"{v.alias}.{v.field}"
    if isinstance(v, float):
        return f"{v:g}"
    return str(v)


def condition_words(c: Condition) -> str:
    field = _words(c.field)
    if c.op == "between":
        return f"{field} is between {c.value[0]:g} and {c.value[1]:g}"
    if c.op == "one_of":
        return f"{field} is one of {', '.join(map(str, c.value))}"
    if c.op == "not_one_of":
        return f"{field} is none of {', '.join(map(str, c.value))}"
    return f"{field} {_OPS[c.op]} {_value(c.value)}"


def _a(word: str) -> str:
    return ("an " if word[:1] in "aeiou" else "a ") + word


def pattern_words(p: Pattern) -> str:
    what = _words(p.kind)
    where = "; ".join(condition_words(c) for c in p.conditions)
    if p.counted:
        bounds = []
        if p.at_least is not None:
            bounds.append(f"at least {p.at_least}")
        if p.at_most is not None:
            bounds.append(f"at most {p.at_most}")
        per = f" for one {_words(p.per)}" if p.per else ""
        return f"{' and '.join(bounds)} {what} facts{per}" + (f" where {where}" if where else "") + f" (called {p.alias})"
    return f"{_a(what)} fact" + (f" where {where}" if where else "") + f" (called {p.alias})"


def explain(rule: Rule, rulebook: Rulebook) -> list[str]:
    """The rule as a few lines of plain English."""
    lines = [f"{rule.id}: {rule.title}", f"  from {rule.origin}" + (
        f" (overrides the rule in {', '.join(rule.replaced)})" if rule.replaced else ""), f"  source: {rule.source}"]
    lines.append("  it needs:")
    lines += [f"    - {pattern_words(p)}" for p in rule.needs]
    if rule.none_of:
        lines.append("  and none of:")
        lines += [f"    - {pattern_words(p)}" for p in rule.none_of]
    if rule.fault is not None:
        if isinstance(rule.fault, FaultChoice):
            names = ", ".join(f"{k} -> {rulebook.faults[v].name}" for k, v in rule.fault.faults)
            fault = f"the fault named by {_value(rule.fault.value)} ({names})"
        else:
            fault = rulebook.faults[rule.fault].name
        sign = "counts against" if rule.weight < 0 else "supports"
        lines.append(f"  it {sign} {fault} on {_value(rule.component)}" +
                     (f", damage stage {rule.stage}" if rule.stage else ""))
    else:
        fields = ", ".join(f"{k} = {_value(v)}" for k, v in rule.derived_fields)
        lines.append(f"  it derives a {_words(rule.derives)} fact ({fields}) for other rules")
    weight = f"certainty {rule.weight:+.2f}"
    for r in rule.ramps:
        weight += f", graded by {r.value} from 0 at {r.start:g} to full at {r.full:g}"
    lines.append(f"  {weight}")
    lines.append(f"  the report says: {rule.because}")
    return lines


def summary(rulebook: Rulebook) -> list[str]:
    """Rules per fault (for and against), derived kinds, overrides and switched-off rules."""
    per_fault = defaultdict(lambda: [0, 0])
    chaining = defaultdict(int)
    for rule in rulebook.rules:
        if rule.derives:
            chaining[rule.derives] += 1
            continue
        faults = [v for _, v in rule.fault.faults] if isinstance(rule.fault, FaultChoice) else [rule.fault]
        for f in dict.fromkeys(faults):
            per_fault[f][0 if rule.weight > 0 else 1] += 1
    lines = [f"{len(rulebook.rules)} rules from {len(rulebook.files)} files"]
    by_family = defaultdict(list)
    for fid, fault in rulebook.faults.items():
        by_family[fault.family].append(fid)
    for family in sorted(by_family):
        lines.append(f"  {family}:")
        for fid in sorted(by_family[family]):
            pos, neg = per_fault[fid]
            note = "" if pos else "   (no rule supports it)"
            lines.append(f"    {fid:<24} {pos} for, {neg} against{note}")
    for kind, n in sorted(chaining.items()):
        lines.append(f"  derived {kind}: {n} rule(s)")
    for rule in rulebook.rules:
        if rule.replaced:
            lines.append(f"  overridden: {rule.id} by {rule.path}")
    for rid, (reason, path) in sorted(rulebook.disabled.items()):
        lines.append(f"  switched off: {rid} by {path}: {reason}")
    return lines
