"""Rules in plain words, and a summary of a loaded rulebook, for the authoring commands."""

from __future__ import annotations

from collections import defaultdict

from ..common.units import format_quantity
from .rulebook import Condition, FaultChoice, Pattern, Ref, Rule, Rulebook

_OPS = {"is": "is", "is_not": "is not", "above": "is above", "at_least": "is at least", "below": "is below",
        "at_most": "is at most", "same_as": "is the same as", "differs_from": "differs from"}


# a field's unit suffix, said as its unit: amplitude_mm_s -> "amplitude (mm/s)", not "amplitude mm s"
_UNIT_SUFFIXES = (("_mm_s", "mm/s"), ("_hz", "Hz"), ("_db", "dB"), ("_rpm", "r/min"), ("_pct", "%"), ("_g", "g"))


def _words(name: str) -> str:
    for suffix, unit in _UNIT_SUFFIXES:
        if name.endswith(suffix) and len(name) > len(suffix):
            return f"{name[: -len(suffix)].replace('_', ' ')} ({unit})"
    return name.replace("_", " ")


def _value(v, unit: str = "") -> str:
    if isinstance(v, Ref):
        whose = "its own" if v.alias is None else f"the {v.alias} fact's"
        name = f"{whose} {_words(v.field)}"
        return name if v.factor == 1 else f"{v.factor:g} times {name}"
    if isinstance(v, bool):
        return "yes" if v else "no"
    if isinstance(v, (int, float)):
        return format_quantity(float(v), unit) if unit else f"{v:g}"
    return str(v)


def condition_words(c: Condition, unit: str = "") -> str:
    """One condition in plain words, thresholds with their unit and the parameter they come from."""
    field = _words(c.field)
    named = f" (param.{', param.'.join(c.params)})" if c.params else ""
    if c.op == "between":
        return f"{field} is between {_value(c.value[0], unit)} and {_value(c.value[1], unit)}{named}"
    if c.op == "one_of":
        return f"{field} is one of {', '.join(map(str, c.value))}"
    if c.op == "not_one_of":
        return f"{field} is none of {', '.join(map(str, c.value))}"
    return f"{field} {_OPS[c.op]} {_value(c.value, unit)}{named}"


def _a(word: str) -> str:
    return ("an " if word[:1] in "aeiou" else "a ") + word


def pattern_words(p: Pattern, rulebook: Rulebook | None = None) -> str:
    """A pattern in plain words: what fact it needs, where, how many (a count pattern) and its alias."""
    what = _words(p.kind)
    fields = rulebook.fields_of(p.kind) if rulebook is not None else {}
    where = "; ".join(condition_words(c, fields[c.field].unit if c.field in fields else "") for c in p.conditions)
    if p.counted:
        bounds = []
        if p.at_least is not None:
            bounds.append(f"at least {p.at_least}")
        if p.at_most is not None:
            bounds.append(f"at most {p.at_most}")
        per = f" for one {_words(p.per)}" if p.per else ""
        return (f"{' and '.join(bounds)} {what} facts{per}" + (f" where {where}" if where else "")
                + f" (called {p.alias})")
    return f"{_a(what)} fact" + (f" where {where}" if where else "") + f" (called {p.alias})"


def explain(rule: Rule, rulebook: Rulebook) -> list[str]:
    """The rule as a few lines of plain English."""
    where = f"site overlay {rule.path}" if "/" in rule.label else "shipped rulebook"
    lines = [f"{rule.id}: {rule.title}", f"  from {rule.origin} ({where}" + (
        f"; overrides the rule in {', '.join(rule.replaced)})" if rule.replaced else ")"), f"  source: {rule.source}"]
    if rule.site_record is not None:
        lines.append(f"  at this site this rule was confirmed {rule.site_record[0]} of {rule.site_record[1]} times"
                     + (f" (weight learned by {rule.learned_by})" if rule.learned_by else ""))
    lines.append("  it needs:")
    lines += [f"    - {pattern_words(p, rulebook)}" for p in rule.needs]
    if rule.none_of:
        lines.append("  and none of:")
        lines += [f"    - {pattern_words(p, rulebook)}" for p in rule.none_of]
    if rule.fault is not None:
        if isinstance(rule.fault, FaultChoice):
            names = ", ".join(f"{k} -> {rulebook.faults[v].name}" for k, v in rule.fault.faults)
            fault = f"the fault named by {_value(rule.fault.value)} ({names})"
        else:
            fault = rulebook.faults[rule.fault].name
        sign = ("holds at most" if rule.ceiling is not None else "names a rival beside" if rule.rival is not None else
                "counts against" if rule.weight < 0 else "supports")
        lines.append(f"  it {sign} {fault} on {_value(rule.component)}" +
                     (f", damage stage {rule.stage}" if rule.stage else ""))
        if isinstance(rule.rival, FaultChoice):
            names = ", ".join(f"{k} -> {rulebook.faults[v].name}" for k, v in rule.rival.faults)
            lines.append(f"  the rival the evidence cannot tell it from: the fault named by {_value(rule.rival.value)} "
                         f"({names}); the finding names both")
        elif rule.rival is not None:
            lines.append(f"  the rival the evidence cannot tell it from: {rulebook.faults[rule.rival].name}; "
                         "the finding names both")
    else:
        fields = ", ".join(f"{k} = {_value(v)}" for k, v in rule.derived_fields)
        lines.append(f"  it derives a {_words(rule.derives or '')} fact ({fields}) for other rules")
    weight = (f"certainty held at {100 * rule.ceiling:.0f} % at most: the evidence cannot tell this fault from a rival"
              if rule.ceiling is not None else
              "certainty unchanged: it lends and takes nothing" if rule.rival is not None else
              f"certainty {100 * rule.weight:+.0f} %")
    aliases = {p.alias: p.kind for p in rule.needs}
    for r in rule.ramps:
        kind = aliases.get(r.value.alias or "")
        kind_fields = rulebook.fields_of(kind) if kind and not kind == "tally" else {}
        unit = kind_fields[r.value.field].unit if r.value.field in kind_fields else ""
        named = f" (param.{', param.'.join(r.params)})" if r.params else ""
        weight += (f", graded by {_value(r.value)} from 0 at {_value(r.start, unit)} "
                   f"to full at {_value(r.full, unit)}{named}")
    lines.append(f"  {weight}")
    if rule.weight > 0:
        told = ", ".join(rule.explains) if rule.explains else "nothing (it shares no sign with other hypotheses)"
        lines.append(f"  it explains the signs of: {told}")
    if rule.counts_with:
        lines.append(f"  it counts with {rule.counts_with} as one piece of evidence: for a hypothesis the "
                     "stronger firing of the two counts, not both")
    lines.append(f"  the report says: {rule.because}")
    if rule.measure_again:
        lines.append(f"  and lists under 'measure again with': {rule.measure_again}")
    return lines


def summary(rulebook: Rulebook) -> list[str]:
    """Rules per fault (for and against), derived kinds, overrides and switched-off rules."""
    per_fault: defaultdict[str | None, list[int]] = defaultdict(lambda: [0, 0])
    chaining: defaultdict[str, int] = defaultdict(int)
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
            lines.append(f"  overridden: {rule.id} by {rule.label}")
        if rule.learned_by:
            lines.append(f"  learned weight: {rule.id} {100 * rule.weight:+.0f} % by {rule.learned_by} "
                         f"(confirmed {rule.site_record[0]} of {rule.site_record[1]} at repair)"
                         if rule.site_record else f"  learned weight: {rule.id} by {rule.learned_by}")
    for note in rulebook.notes:
        lines.append(f"  note: {note}")
    for rid, (reason, path) in sorted(rulebook.disabled.items()):
        lines.append(f"  switched off: {rid} by {path}: {reason}")
    for p in sorted(rulebook.parameters.values(), key=lambda p: p.name):
        if p.changed_by:
            was = _value(p.declared_value if p.declared_value is not None else p.value, p.unit)
            lines.append(f"  parameter changed: param.{p.name} {was} in {p.path} -> {_value(p.value, p.unit)} "
                         f"by {', '.join(p.changed_by)}")
    return lines


def vocabulary(rulebook: Rulebook) -> list[str]:
    """Every fact kind a rule may match, each field with its type, unit and meaning."""
    from ..evidence.vocabulary import FACTS, known_values

    lines = []
    for kind in list(FACTS) + sorted(rulebook.derived):
        origin = "evidence" if kind in FACTS else "derived by rules"
        lines.append(f"{kind} ({origin})")
        for name, field in rulebook.fields_of(kind).items():
            if name in ("kind", "id"):
                continue
            unit = f" [{field.unit}]" if field.unit else ""
            allowed = known_values(kind, name)
            one_of = f" (one of: {', '.join(allowed)})" if allowed else ""
            lines.append(f"    {name:<24} {field.type:<8}{unit} {field.about}{one_of}")
    return lines


def parameters(rulebook: Rulebook) -> list[str]:
    """The named parameters, their values and units, where they were set and why."""
    lines = []
    for p in sorted(rulebook.parameters.values(), key=lambda p: p.name):
        value = format_quantity(p.value, p.unit) if p.unit else f"{p.value:g}"
        changed = f" (changed by {', '.join(p.changed_by)})" if p.changed_by else ""
        lines.append(f"param.{p.name} = {value}{changed}")
        lines.append(f"    {p.about}; source: {p.source}; declared in {p.path}")
    return lines


def rule_list(rulebook: Rulebook) -> list[str]:
    """One line per loaded rule: id, what it concludes or derives, its title."""
    lines = []
    for r in rulebook.rules:
        if r.derives:
            what = f"derives {r.derives}"
        elif isinstance(r.fault, FaultChoice):
            what = "/".join(dict.fromkeys(v for _, v in r.fault.faults))
        else:
            what = r.fault or ""
        lines.append(f"{r.id:<44} {100 * r.weight:+4.0f} % {what:<40} {r.title}")
    return lines
