"""Rulebook files -> checked, plain rule values, with site overlays applied.

A rulebook is YAML (see rulebooks/README.md). Loading it does three checks,
each reported as one line naming the file, the line and the rule:

1. the file against ``engine/common/schemas/rulebook.schema.json``;
2. every fact kind, field, reference, parameter, placeholder and comparison
   against the evidence vocabulary (``engine.evidence.vocabulary``), the
   derived kinds and the named parameters the rulebooks declare, so a rule
   cannot silently never fire, and every number against what the rule
   engine can represent;
3. the overlay: a site file may add rules, replace a loaded rule of the same
   id (``overrides: true``), switch one off (``disable:``) or change a named
   parameter in one line (``parameters: {name: value}``); anything else that
   reuses an id is an error. A learned overlay (``tellwave learn``) carries only
   ``learned:`` entries: a rule's weight and site record, laid onto the rule as it
   is loaded now (and ``kept:`` entries: the record of a rule whose weight it
   kept); an entry learned against a rule that has changed since (its
   conditions, conclusion or grading: ``learned_against``) is not applied, and
   the rulebook's ``notes`` say so, naming the file and the rule.

A ``because`` sentence names values as ``{alias.field}`` without a format:
the report formats each by its unit (``engine.common.units.format_quantity``).
"""

from __future__ import annotations

import difflib
import hashlib
import math
import re
import string
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any, NoReturn

from ..common.errors import RulebookError
from ..common.paths import RULEBOOKS
from ..common.units import ShownUnits, shown_units
from ..common.yamlfile import YamlDocument, first_problem, read_yaml
from ..evidence.vocabulary import FACTS, MUST_CHOOSE, F, fields_of, known_values

SMALLEST_NUMBER = 1e-4   # the rule engine rejects exponent notation: see engine.reasoning.engine
LARGEST_NUMBER = 1e15
PARAMETER_ALIAS = "param"
RESERVED_ALIASES = {"s", "m", "host", "tw_phase", PARAMETER_ALIAS}
TALLY_KIND = "tally"
COMPARISONS = {"above", "at_least", "below", "at_most"}
NUMERIC = {"number", "integer"}
_OPERAND = re.compile(r"^\s*(?:(?P<k>[-+]?\d+(?:\.\d*)?)\s*\*\s*)?(?:(?P<alias>[a-z][a-z0-9_]*)\.)?"
                      r"(?P<field>[a-z0-9_]+)\s*$")


@dataclass(frozen=True)
class Ref:
    """A value taken from a fact matched earlier in the rule (``alias.field``) or from the
    fact being matched itself (a bare ``field``, alias None), times ``factor``."""

    alias: str | None
    field: str
    factor: float = 1.0

    def __str__(self) -> str:
        name = f"{self.alias}.{self.field}" if self.alias else self.field
        return f"{self.factor:g} * {name}" if self.factor != 1 else name


@dataclass(frozen=True)
class Parameter:
    """A named number rules refer to as ``param.NAME``, which a site overlay can change in one line."""

    name: str
    value: float
    unit: str
    about: str
    source: str
    path: str               # the file that declared it, as labelled (see ``rulebook_labels``)
    changed_by: tuple[str, ...] = ()    # overlays that changed its value, in order, as labelled
    declared_value: float | None = None  # its value where it was declared, when an overlay changed it
    file: str = ""          # the declaring file's path, for messages
    line: int | None = None


@dataclass(frozen=True)
class Condition:
    """One condition of a pattern: a field, an operator and a value (a constant or a reference)."""
    field: str
    op: str          # is, is_not, above, at_least, below, at_most, between, one_of, not_one_of, same_as, differs_from
    value: Any       # scalar, list, (lo, hi), or Ref
    params: tuple[str, ...] = ()   # parameters the value came from, for explanations


@dataclass(frozen=True)
class Pattern:
    """A fact a rule needs (or, in none_of, must not find): its kind, alias and conditions, or for a
    count pattern how many facts of the kind, per group, it needs."""
    kind: str
    alias: str
    conditions: tuple[Condition, ...]
    counted: bool = False          # a count pattern: matches a tally of facts of ``kind``
    per: str | None = None
    at_least: int | None = None
    at_most: int | None = None


@dataclass(frozen=True)
class FaultChoice:
    """A conclusion whose fault depends on a matched value (defect BPFO -> outer-race)."""

    value: Ref
    faults: tuple[tuple[str, str], ...]    # (value, fault id)

    def pick(self, value) -> str | None:
        """The fault a matched value names, or None when it names none."""
        return dict(self.faults).get(value)


@dataclass(frozen=True)
class Ramp:
    """A grade_by ramp: the rule's weight grows from nothing at ``start`` to full at ``full`` of a value."""
    value: Ref
    start: float
    full: float
    params: tuple[str, ...] = ()


@dataclass(frozen=True)
class Placeholder:
    """One ``{alias.field}`` of a because sentence, with what it needs to be worded."""

    alias: str
    field: str
    type: str
    unit: str


@dataclass(frozen=True)
class Rule:
    """One checked rule: what it needs and must not find, what it concludes (a fault on a component
    with a weight, or a derived fact), its source and its file and line."""
    id: str
    title: str
    source: str
    needs: tuple[Pattern, ...]
    none_of: tuple[Pattern, ...]
    weight: float
    ramps: tuple[Ramp, ...]
    because: str
    path: str
    line: int | None
    placeholders: tuple[Placeholder, ...] = ()
    fault: str | FaultChoice | None = None
    component: Ref | str | None = None
    stage: int | None = None
    derives: str | None = None
    derived_fields: tuple[tuple[str, Ref | Any], ...] = ()
    replaced: tuple[str, ...] = ()   # files whose rule of this id this one overrides (as labelled)
    label: str = ""                  # the file as reports name it (see ``rulebook_labels``)
    explains: tuple[str, ...] = ()   # aliases of the needed facts whose signs the conclusion explains
    site_record: tuple[int, int] | None = None   # (confirmed, judged) at repair at the site (tellwave learn)
    learned_by: str | None = None    # the learned overlay (as labelled) whose weight this rule carries
    weight_kept: str | None = None   # why the learned overlay kept its weight (its site record shown all the same)
    counts_with: str | None = None   # a rule reading the same signs: for a hypothesis the two count once
    ceiling: float | None = None     # ``certainty: {at_most: X}``: holds its hypothesis at X at most (weight 0)
    rival: str | FaultChoice | None = None   # ``concludes: {indistinct_from: F}``: names F beside its fault (weight 0)
    measure_again: str = ""          # a reading problem's remedy: the setting to change when measuring again
    again_placeholders: tuple[Placeholder, ...] = ()

    @property
    def fingerprint(self) -> str:
        """What a learned weight was learned against: everything that decides when the rule fires and what
        it concludes (needs, none_of, conclusion, grading, parameters' values), not its weight or words."""
        what: tuple = (self.needs, self.none_of, self.fault, self.component, self.stage, self.derives,
                       self.derived_fields, self.ramps, self.explains, self.weight > 0, self.ceiling)
        if self.rival is not None:      # only then: the other rules' fingerprints stay as they were learned
            what += (self.rival,)
        return hashlib.sha256(repr(what).encode("utf-8")).hexdigest()[:12]

    @property
    def evidence_key(self) -> str:
        """The piece of evidence the rule's firings are: its own id, or the id of the rule it counts with."""
        return self.counts_with or self.id

    @property
    def origin(self) -> str:
        """``file:line`` as reports show it: ``bearings.yaml:87``, ``site/pumps.yaml:12``."""
        name = self.label or str(self.path)
        return f"{name}:{self.line}" if self.line else name


@dataclass(frozen=True)
class FaultAdvice:
    """What to do about a fault a site overlay declares, given beside it (``advice:``): the shipped
    faults have theirs in rulebooks/advice/actions.yaml. Ids are checked against that file's urgency
    scale and oil tests when the advice is looked up (``engine.advice.check_fault_advice``)."""

    urgency: str
    actions: tuple[str, ...]
    spares: tuple[str, ...]
    confirm: tuple[str, ...]
    oil_tests: tuple[tuple[str, str], ...]    # (oil test id, what its result would mean)
    path: str
    line: int | None


@dataclass(frozen=True)
class Fault:
    """A fault the rulebooks know: its name and family, whether it withholds the diagnosis, and for a
    site's own fault what to do about it."""
    id: str
    name: str
    family: str
    withholds_diagnosis: bool
    path: str
    advice: FaultAdvice | None = None


@dataclass(frozen=True)
class Rulebook:
    """Every loaded rule (overlays applied), the fault catalogue and the derived fact kinds."""

    rules: tuple[Rule, ...]
    faults: dict[str, Fault]
    derived: dict[str, dict[str, F]]
    files: tuple[str, ...]           # every file loaded, as labelled (see ``rulebook_labels``)
    disabled: dict[str, tuple[str, str]] = field(default_factory=dict)   # id -> (reason, file as labelled)
    parameters: dict[str, Parameter] = field(default_factory=dict)
    units: ShownUnits = ShownUnits()   # the units reports show: the last overlay's ``units:`` wins
    notes: tuple[str, ...] = ()      # what loading left undone and the user should know (``file: rule X: ...``)

    def rule(self, rule_id: str) -> Rule:
        """The rule of this id (KeyError if none)."""
        for r in self.rules:
            if r.id == rule_id:
                return r
        raise KeyError(rule_id)

    def fields_of(self, kind: str) -> dict[str, F]:
        """The fields of a fact kind: the vocabulary's, or a derived kind's as its rules declare them."""
        return _kind_fields(kind, self.derived)


SHIPPED = RULEBOOKS


def _shown(path: Path) -> Path:
    """``path`` relative to the working folder when it lies inside it (shorter messages)."""
    try:
        return path.resolve().relative_to(Path.cwd())
    except ValueError:
        return path


def rulebook_files(*places) -> list[Path]:
    """YAML files of each folder (sorted by name) or file, in the order given."""
    files = []
    for place in places:
        p = Path(place)
        if p.is_dir():
            files.extend(sorted(x for x in p.iterdir() if x.suffix in (".yaml", ".yml") and x.is_file()))
        elif p.exists():
            files.append(p)
        else:
            raise RulebookError("no such rulebook file or folder", path=str(p))
    return [_shown(f) for f in files]


SITE_LABEL = "site"


def rulebook_labels(*places, shipped: bool = True) -> list[tuple[Path, str]]:
    """Each rulebook file to load, in order, with the name reports give it.

    Reports name a file relative to its rulebook folder, never by where it is
    installed: ``bearings.yaml`` for a shipped file, ``FOLDER/NAME.yaml`` for an
    overlay (FOLDER is the name of the folder given, or of the folder holding
    the file given: ``site/pumps.yaml``, ``learned/learned.yaml``). Two overlays
    that would share a label are told apart by the place's number:
    ``learned2/learned.yaml``.
    """
    out: list[tuple[Path, str]] = []
    if shipped:
        out += [(f, Path(f).name) for f in rulebook_files(SHIPPED)]    # a folder's files are its own children
    taken = {label for _, label in out}
    for n, place in enumerate(places, start=1):
        folder = Path(place) if Path(place).is_dir() else Path(place).parent
        name = folder.absolute().name or SITE_LABEL
        for f in rulebook_files(place):
            label = f"{name}/{Path(f).name}"
            if label in taken:
                label = f"{name}{n}/{Path(f).name}"
            taken.add(label)
            out.append((f, label))
    return out


def load_rulebook(*places, shipped: bool = True) -> Rulebook:
    """Load the shipped rulebooks (unless ``shipped=False``) and then each overlay place in order."""
    placed = rulebook_labels(*places, shipped=shipped)
    if not placed:
        raise RulebookError("no rulebook files found", path=str(places[0]) if places else str(SHIPPED))
    problems: list[RulebookError] = []
    docs = []
    label_of: dict[int, str] = {}
    for f, label in placed:
        try:
            doc = read_yaml(f, RulebookError)
            _check_schema(doc)
        except RulebookError as exc:   # a file that is not a valid rulebook adds nothing; the others are checked
            problems.append(exc)
        else:
            docs.append(doc)
            label_of[id(doc)] = label
    faults: dict[str, Fault] = {}
    derived: dict[str, dict[str, F]] = {}
    parameters: dict[str, Parameter] = {}
    for doc in docs:
        _collect_catalogue(doc, faults, derived, problems)
        _collect_parameters(doc, parameters, label_of[id(doc)], problems)
    rules: dict[str, Rule] = {}
    built: list[Rule] = []            # every rule built, overridden and disabled ones too: what reads a parameter
    notes: list[str] = []
    shipped_count = len(rulebook_files(SHIPPED)) if shipped else 0
    broken: set[str] = set()          # ids of rules refused above: no second error for overriding them
    disabled: dict[str, tuple[str, str]] = {}
    for doc in docs:
        for i, raw in enumerate(doc.data.get("rules") or []):
            try:
                rule = replace(_build_rule(doc, i, raw, faults, derived, parameters), label=label_of[id(doc)])
                if rule.id in rules and not raw.get("overrides"):
                    raise RulebookError(f"id already used in {rules[rule.id].path}; add 'overrides: true' to "
                                        "replace it", path=doc.path, line=rule.line, rule_id=rule.id)
                if raw.get("overrides"):
                    if rule.id not in rules:
                        if rule.id in broken:
                            continue
                        raise RulebookError("'overrides: true' but no earlier rulebook has this id",
                                            path=doc.path, line=rule.line, rule_id=rule.id)
                    previous = rules[rule.id]
                    rule = replace(rule, replaced=previous.replaced + (previous.label,))
                    if rule.site_record is not None:     # written whole by an earlier tellwave learn
                        notes.append(f"{rule.origin}: rule {rule.id}: a learned copy of the whole rule replaces "
                                     f"{previous.origin}, so later edits there are masked; learn again for an overlay "
                                     "that carries the weight only")
            except RulebookError as exc:
                problems.append(exc)
                broken.add(raw["id"])
                continue
            rules[rule.id] = rule
            built.append(rule)
        for j, entry in enumerate(doc.data.get("disable") or []):
            rid = entry["rule"]
            if rid not in rules:
                if rid not in broken:
                    problems.append(RulebookError(f"disable: no loaded rule has id {rid!r}{_near(rid, rules)}",
                                                  path=doc.path, line=doc.line_of(["disable", j])))
                continue
            disabled[rid] = (entry["reason"], label_of[id(doc)])
            del rules[rid]
        notes += _apply_learned(doc, label_of[id(doc)], rules, disabled)
    ordered = tuple(sorted(rules.values(), key=lambda r: r.id))
    problems += _check_derived_values(ordered)
    problems += _check_parameters_read(parameters, built, {label for _, label in placed[:shipped_count]})
    problems += _check_counts_with(ordered, disabled)
    if problems:
        raise problems[0] if len(problems) == 1 else RulebookProblems(problems)
    _check_no_derivation_cycle(ordered)
    units = ShownUnits()
    for doc in docs:      # checked by the schema: names from engine/common/units.py
        said = doc.data.get("units") or {}
        units = shown_units(said.get("frequency"), said.get("velocity"), base=units)
    return Rulebook(ordered, faults, derived, tuple(label for _, label in placed), disabled, parameters, units,
                    tuple(notes))


def _near(name: str, known) -> str:
    """``; did you mean NAME?`` for the closest of ``known`` to a mistyped ``name``, or nothing."""
    near = difflib.get_close_matches(str(name), sorted(known), n=1, cutoff=0.75)
    return f"; did you mean {near[0]!r}?" if near else ""


def _apply_learned(doc, label: str, rules: dict[str, Rule], disabled) -> list[str]:
    """Lay a learned overlay's ``learned:`` entries onto the rules as loaded now: the weight and the
    site record only. An entry whose rule is gone, or has changed since it was learned (its
    ``learned_against`` differs from the rule's fingerprint), is left unapplied and noted."""
    notes = []
    # ``kept:`` entries carry a record whose weight learning kept: the record is shown, the weight stays
    entries = [("learned", j, e) for j, e in enumerate(doc.data.get("learned") or [])] + [
        ("kept", j, e) for j, e in enumerate(doc.data.get("kept") or [])]
    unapplied = {"learned": "learned weight not applied", "kept": "site record not shown"}
    for key, j, entry in entries:
        rid = entry["rule"]
        line = doc.line_of([key, j])
        where = f"{label}:{line}" if line else label
        rule = rules.get(rid)
        if rule is None:
            why = (f"it is switched off by {disabled[rid][1]}" if rid in disabled
                   else f"no loaded rule has this id{_near(rid, rules)} (pass the site folders it was learned with "
                        "before it)")
            notes.append(f"{where}: rule {rid}: {unapplied[key]}: {why}")
            continue
        if entry["learned_against"] != rule.fingerprint:
            notes.append(f"{where}: rule {rid}: {unapplied[key]}: the rule ({rule.origin}) has changed "
                         "since it was learned; learn again with the rulebooks the diagnoses are now made with")
            continue
        k, n = entry["site_record"]["confirmed"], entry["site_record"]["judged"]
        if k > n:
            raise RulebookError(f"rule {rid}: site_record: confirmed {k} of {n} judged; a rule cannot be confirmed "
                                "more often than it was judged", path=doc.path, line=line)
        if key == "kept":
            rules[rid] = replace(rule, site_record=(k, n), learned_by=label, weight_kept=entry["why"])
            continue
        if rule.ceiling is not None:
            raise RulebookError(f"rule {rid}: holds its hypothesis at most {rule.ceiling:g} and has no weight to "
                                "learn", path=doc.path, line=line)
        if rule.rival is not None:
            raise RulebookError(f"rule {rid}: names a rival its fault cannot be told from and has no weight to "
                                "learn", path=doc.path, line=line)
        if (entry["weight"] > 0) != (rule.weight > 0):
            raise RulebookError(f"rule {rid}: learned weight {entry['weight']:g} has the other sign from the rule's "
                                f"{rule.weight:g}", path=doc.path, line=line)
        rules[rid] = replace(rule, weight=float(entry["weight"]), site_record=(k, n), learned_by=label,
                             source=f"{entry['source']}; {rule.source}")
    return notes


def _check_parameters_read(parameters: dict[str, Parameter], rules, shipped_labels) -> list[RulebookError]:
    """A parameter a site file declares that no rule reads changes nothing: most often a mistyped name
    of a shipped one. (The shipped files' parameters that Python reads, learning_* and the like, are
    declared in the shipped files.)"""
    read = {name for r in rules for p in r.needs + r.none_of for c in p.conditions for name in c.params}
    read |= {name for r in rules for ramp in r.ramps for name in ramp.params}
    problems = []
    for name, p in sorted(parameters.items()):
        if p.path in shipped_labels or name in read:
            continue
        shipped = [q for q, x in parameters.items() if x.path in shipped_labels]
        problems.append(RulebookError(f"parameters.{name}: no rule reads it, so it changes nothing"
                                      f"{_near(name, shipped)}", path=p.file or p.path, line=p.line))
    return problems


def _check_counts_with(rules: tuple[Rule, ...], disabled: dict) -> list[RulebookError]:
    """Each ``counts_with`` names a loaded rule (or one a site switched off) that concludes a fault and
    counts with no other: one piece of evidence is one rule and the rules that name it."""
    by_id = {r.id: r for r in rules}
    problems = []
    for r in rules:
        target = r.counts_with
        if target is None or target in disabled:
            continue
        other = by_id.get(target)
        if other is None:
            problems.append(RulebookError(f"counts_with: no loaded rule has id {target!r}", path=r.path,
                                          line=r.line, rule_id=r.id))
        elif other.counts_with is not None or other.derives is not None or target == r.id:
            problems.append(RulebookError(f"counts_with: {target!r} must conclude a fault and count with no "
                                          "other rule itself", path=r.path, line=r.line, rule_id=r.id))
    return problems


class RulebookProblems(RulebookError):
    """Every problem the rulebooks have, found in one load: ``problems`` holds each as its own error.
    As one line it names the first and how many more; ``tellwave rulebook check`` prints them all."""

    def __init__(self, problems: list[RulebookError]):
        first = problems[0]
        super().__init__(f"{first.problem} (and {len(problems) - 1} more problems in the rulebooks; "
                         "'tellwave rulebook check' lists them all)", path=first.path, line=first.line)
        self.problems = tuple(problems)


def _may_feed(giver: Rule, pattern: Pattern) -> bool:
    """Whether a fact ``giver`` derives could match ``pattern``: the same kind, and no condition
    on a field the giver sets to a fixed value rules it out (references are assumed to match)."""
    if pattern.counted or pattern.kind != giver.derives:
        return False
    fixed = {name: v for name, v in giver.derived_fields if not isinstance(v, Ref)}
    for c in pattern.conditions:
        if c.field not in fixed or isinstance(c.value, Ref):
            continue
        v = fixed[c.field]
        # the lambdas are called below, in this iteration, so they read this iteration's v and c
        ok = {"is": lambda: v == c.value, "is_not": lambda: v != c.value,  # noqa: B023
              "one_of": lambda: v in c.value, "not_one_of": lambda: v not in c.value,  # noqa: B023
              "between": lambda: c.value[0] <= v <= c.value[1], "above": lambda: v > c.value,  # noqa: B023
              "at_least": lambda: v >= c.value, "below": lambda: v < c.value,  # noqa: B023
              "at_most": lambda: v <= c.value}.get(c.op, lambda: True)  # noqa: B023
        try:
            if not ok():
                return False
        except TypeError:    # a string against a number: the engine would not match it either
            return False
    return True


def feeds(rules) -> dict[str, list[str]]:
    """Rule id -> ids of the rules that need a fact it derives (a fact it asserts could match)."""
    readers: dict[str, list[Rule]] = {}
    for r in rules:
        for p in r.needs:
            readers.setdefault(p.kind, []).append(r)
    out: dict[str, list[str]] = {}
    for r in rules:
        if r.derives is None:
            continue
        out[r.id] = sorted({s.id for s in readers.get(r.derives, ()) if any(_may_feed(r, p) for p in s.needs)})
    return out


def derivation_cycle(rules) -> list[str] | None:
    """Ids of rules that feed each other in a ring (the first one again at the end), or None.

    Every firing asserts a new derived fact, so a ring would chain for ever:
    the engine has no way to tell a fact it derived again from a new one.
    """
    graph = feeds(rules)
    state: dict[str, int] = {}      # 1 on the path being walked, 2 done
    for start in sorted(graph):
        if state.get(start):
            continue
        path, stack = [start], [iter(graph[start])]
        state[start] = 1
        while stack:
            nxt = next(stack[-1], None)
            if nxt is None:
                state[path.pop()] = 2
                stack.pop()
            elif state.get(nxt) == 1:
                return path[path.index(nxt):] + [nxt]
            elif not state.get(nxt):
                state[nxt] = 1
                path.append(nxt)
                stack.append(iter(graph.get(nxt, ())))
    return None


def _check_no_derivation_cycle(rules) -> None:
    ring = derivation_cycle(rules)
    if ring is None:
        return
    by_id = {r.id: r for r in rules}
    first = by_id[ring[0]]
    kinds = sorted({by_id[i].derives for i in ring[:-1]})
    feeders = sorted(r.id for r in rules if r.derives in kinds and r.id not in ring)
    if len(ring) == 2:
        what = f"derivation ring: it needs a {kinds[0]} fact and derives one"
    else:
        what = (f"derivation ring {' -> '.join(ring)}: each derives a fact "
                f"({', '.join(kinds)}) the next one needs")
    fed = f" (started by {', '.join(feeders)})" if feeders else ""
    raise RulebookError(f"{what}{fed}, so forward chaining would never end; break the ring with a "
                        f"condition its derived facts cannot meet, or disable a rule in it",
                        path=first.path, line=first.line, rule_id=ring[0] if len(ring) == 2 else None)


def _check_schema(doc: YamlDocument) -> None:
    if not isinstance(doc.data, dict):
        raise RulebookError("a rulebook is a mapping with 'rulebook:' and 'rules:'", path=doc.path, line=1)
    found = first_problem(doc, "rulebook.schema.json")
    if found is None:
        return
    path, problem = found
    rule_id = None
    if len(path) >= 2 and path[0] == "rules" and isinstance(path[1], int):
        raw = doc.data["rules"][path[1]]
        rule_id = raw.get("id") if isinstance(raw, dict) else None
        shown = path[2:] if rule_id else path
    else:
        shown = path
    where = ".".join(str(p) for p in shown) or "(top level)"
    raise RulebookError(f"{where}: {problem}", path=doc.path, line=doc.line_of(path), rule_id=rule_id)


def _collect_catalogue(doc, faults, derived, problems: list[RulebookError]) -> None:
    for fid, raw in (doc.data.get("faults") or {}).items():
        if fid in faults:
            problems.append(RulebookError(f"fault {fid!r} already declared in {faults[fid].path}",
                                          path=doc.path, line=doc.line_of(["faults", fid])))
            continue
        todo = raw.get("advice")
        advice = None if todo is None else FaultAdvice(
            todo["urgency"], tuple(todo["actions"]), tuple(todo.get("spares") or ()), tuple(todo.get("confirm") or ()),
            tuple((t["test"], t["means"]) for t in todo.get("oil_tests") or ()), doc.path,
            doc.line_of(["faults", fid, "advice"]))
        faults[fid] = Fault(fid, raw["name"], raw["family"], bool(raw.get("withholds_diagnosis")), doc.path, advice)
    for kind, raw in (doc.data.get("derived") or {}).items():
        try:
            _collect_derived(doc, kind, raw, derived)
        except RulebookError as exc:
            problems.append(exc)


def _collect_derived(doc, kind, raw, derived) -> None:
    line = doc.line_of(["derived", kind])
    if kind in FACTS or kind in (TALLY_KIND, "phase"):
        raise RulebookError(f"derived kind {kind!r} is already an evidence kind", path=doc.path, line=line)
    if kind in derived:
        raise RulebookError(f"derived kind {kind!r} declared twice", path=doc.path, line=line)
    fields = {name: F(spec["type"], spec["about"], spec.get("unit", "")) for name, spec in raw["fields"].items()}
    clash = {"kind", "id", "sid", "certainty"} & set(fields)
    if clash:
        raise RulebookError(f"derived kind {kind!r}: field {sorted(clash)[0]!r} is reserved",
                            path=doc.path, line=line)
    derived[kind] = fields


def _collect_parameters(doc, parameters: dict[str, Parameter], label: str, problems: list[RulebookError]) -> None:
    """Declare named parameters, or change the value of one declared by an earlier file
    (``label``: the file as reports name it); each problem is added to ``problems``."""
    for name, raw in (doc.data.get("parameters") or {}).items():
        try:
            _collect_parameter(doc, parameters, label, name, raw)
        except RulebookError as exc:
            problems.append(exc)


def _collect_parameter(doc, parameters: dict[str, Parameter], label: str, name: str, raw) -> None:
    line = doc.line_of(["parameters", name])
    spec = raw if isinstance(raw, dict) else {"value": raw}
    value = spec["value"]
    known = parameters.get(name)
    problem = unit_written(value, known.unit if known else spec.get("unit", ""), f"parameters.{name}")
    if problem:
        raise RulebookError(problem.replace(f"{value!r}: ", f"parameters.{name}: {value!r}: ", 1).replace(
            f"; parameters.{name} is in", "; it is in", 1), path=doc.path, line=line)
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise RulebookError(f"parameters.{name}: {value!r} is not a finite number", path=doc.path, line=line)
    if value != 0 and not SMALLEST_NUMBER <= abs(value) < LARGEST_NUMBER:
        raise RulebookError(f"parameters.{name}: {value!r} cannot be represented by the rule engine "
                            f"(keep it between {SMALLEST_NUMBER:g} and {LARGEST_NUMBER:g}; change its unit)",
                            path=doc.path, line=line)
    if name in parameters:
        before = parameters[name]
        if "unit" in spec and spec["unit"] != before.unit:
            shown = unit_written(f"{value} {spec['unit']}", before.unit, "it") or ""
            converted = shown[shown.find(" (") :] if " (" in shown else ""
            raise RulebookError(f"parameters.{name}: unit {spec['unit']!r} differs from {before.unit!r} "
                                f"declared in {before.path}; write the value in {before.unit or 'its unit'}{converted}",
                                path=doc.path, line=line)
        parameters[name] = replace(before, value=float(value), source=spec.get("source", before.source),
                                   changed_by=before.changed_by + (label,),
                                   declared_value=(before.value if before.declared_value is None
                                                   else before.declared_value))
        return
    missing = [k for k in ("unit", "about", "source") if k not in spec]
    if missing:
        raise RulebookError(f"parameters.{name}: no earlier rulebook declares it, so it needs "
                            f"{', '.join(missing)} as well as its value{_near(name, parameters)}",
                            path=doc.path, line=line)
    parameters[name] = Parameter(name, float(value), spec["unit"], spec["about"], spec["source"], label,
                                 file=str(doc.path), line=line)


def _kind_fields(kind: str, derived) -> dict[str, F]:
    if kind in FACTS:
        return fields_of(kind)
    if kind in derived:
        return {"kind": F("string", "fact kind"), "id": F("string", "fact identity"),
                "certainty": F("number", "certainty of the derivation")} | derived[kind]
    raise KeyError(kind)


def _never(kind, name: str, v, allowed) -> str:
    """The problem of a value ``v`` that field ``name`` of ``kind`` facts never holds, with the nearest it can."""
    near = difflib.get_close_matches(str(v), allowed, n=1, cutoff=0.6) or difflib.get_close_matches(
        str(v).lower(), [a.lower() for a in allowed], n=1, cutoff=0.6)
    if near and near[0] not in allowed:
        near = [a for a in allowed if a.lower() == near[0]]
    hint = f"; did you mean {near[0]!r}?" if near else ""
    return f"{name} is never {v!r} in {kind} facts (it is one of: {', '.join(allowed)}){hint}"


def _derived_values(rules) -> dict[tuple[str, str], tuple[str, ...] | None]:
    """(derived kind, field) -> every value the rules that derive it can give that field, or None when
    one of them gives it a value from an open set (an id, or a field without a known set)."""
    out: dict[tuple[str, str], tuple[str, ...] | None] = {}
    for r in rules:
        if r.derives is None:
            continue
        kinds = {p.alias: p.kind for p in r.needs if not p.counted}
        for name, v in r.derived_fields:
            key = (r.derives, name)
            if key in out and out[key] is None:
                continue
            if isinstance(v, Ref):
                given = known_values(kinds[v.alias], v.field) if v.alias in kinds else None
            else:
                given = (v,) if isinstance(v, str) else None
            out[key] = None if given is None else tuple(set(out.get(key) or ()) | set(given))
    return {k: (tuple(sorted(v)) if v is not None else None) for k, v in out.items()}


def _check_derived_values(rules) -> list[RulebookError]:
    """A rule that needs a derived fact with a field equal to a value (or one of values) no rule derives it
    with never fires. The set comes from the rules loaded, so a value beside others that can occur is let
    be (a later overlay may derive it), as is ``is_not``."""
    values = _derived_values(rules)
    problems = []
    for r in rules:
        kinds = {p.alias: p.kind for p in r.needs if not p.counted}
        checks = [(p.kind, c.field, c.value if c.op in ("one_of", "not_one_of") else (c.value,))
                  for p in r.needs for c in p.conditions if c.op in ("is", "one_of")]
        if isinstance(r.fault, FaultChoice) and r.fault.value.alias in kinds:
            checks.append((kinds[r.fault.value.alias], r.fault.value.field, tuple(k for k, _ in r.fault.faults)))
        for kind, name, given in checks:
            allowed = values.get((kind, name))
            wrong = [v for v in given if isinstance(v, str) and v not in allowed] if allowed else []
            if wrong and len(wrong) == len(given):
                problems.append(RulebookError(f"{_never(kind, name, wrong[0], allowed)} (as the rules that "
                                              f"derive {kind} give it)", path=r.path, line=r.line, rule_id=r.id))
    return problems


_WITH_UNIT = re.compile(r"^\s*(?P<x>[-+]?(?:\d+(?:\.\d*)?|\.\d+))\s*(?P<unit>[^\d\s*.].*?)\s*$")


def unit_written(text, unit: str, what: str) -> str | None:
    """The problem of a number written with a unit (``'0.08 in/s'``) where a rule or parameter takes the
    number alone, in ``unit`` (the field's or parameter's own): None when ``text`` is not one. Says the
    value in ``unit`` when the conversion is exact (in/s to mm/s: 1 in = 25.4 mm; a line's peak is
    sqrt(2) x its RMS, engine/common/units.py)."""
    m = _WITH_UNIT.match(text) if isinstance(text, str) else None
    if m is None:
        return None
    x, said = float(m["x"]), m["unit"].lower()
    problem = (f"{text!r}: units are not written here; {what} is in {unit or 'its own unit (see tellwave rulebook '}"
               + ("" if unit else "vocabulary or parameters)") + ": write the number alone")
    if unit.startswith("mm/s") and said.startswith("mm/s") and ("peak" in said or "pk" in said):
        problem += f" ({x:g} mm/s peak of one line is {x / math.sqrt(2):.3g} mm/s RMS)"
    elif unit.startswith("mm/s") and "in/s" in said:
        mm_s = x * 25.4
        if "peak" in said or "pk" in said:
            problem += f" ({x:g} in/s peak of one line is {mm_s / math.sqrt(2):.3g} mm/s RMS)"
        elif "rms" in said:
            problem += f" ({x:g} in/s RMS is {mm_s:.3g} mm/s RMS)"
        else:
            problem += (f" ({x:g} in/s RMS is {mm_s:.3g} mm/s RMS; {x:g} in/s peak of one line is "
                        f"{mm_s / math.sqrt(2):.3g} mm/s RMS)")
    return problem


def _literal_hint(numeric: bool) -> str:
    """How to write a fixed value where a word was read as a field reference."""
    if numeric:
        return ("a word here names a field; to compare with a fixed number write the number itself, unquoted "
                "(such as 2.5), or name a parameter as param.NAME")
    return "a word here names a field; to compare with a fixed word use is: or is_not: (or one_of:)"


class _RuleChecker:
    """Builds one Rule from its YAML, checking names against the vocabulary as it goes."""

    def __init__(self, doc: YamlDocument, index: int, raw: dict, faults, derived, parameters):
        self.doc, self.index, self.raw = doc, index, raw
        self.faults, self.derived, self.parameters = faults, derived, parameters
        self.aliases: dict[str, dict[str, F]] = {}
        self.alias_kinds: dict[str, str] = {}   # alias -> the fact kind it names
        self.kind: str | None = None             # kind of the pattern being built
        self.used: list[str] = []          # parameters the condition being built refers to

    def fail(self, problem: str, *where) -> NoReturn:
        line = self.doc.line_of(["rules", self.index, *where])
        raise RulebookError(problem, path=self.doc.path, line=line, rule_id=self.raw["id"])

    def fields(self, kind: str, *where) -> dict[str, F]:
        try:
            return _kind_fields(kind, self.derived)
        except KeyError:
            known = ", ".join(sorted(FACTS) + sorted(self.derived))
            self.fail(f"unknown fact kind {kind!r} (known: {known})", *where)

    def parameter(self, name: str, *where) -> float:
        if name not in self.parameters:
            known = ", ".join(sorted(self.parameters)) or "none"
            self.fail(f"param.{name}: no rulebook declares this parameter (declared: {known})", *where)
        self.used.append(name)
        return self.parameters[name].value

    def ref(self, text: str, *where, numeric: bool = False, own=None):
        """``alias.field`` of an earlier fact, a bare field of this one (when ``own`` fields are
        given), or ``param.NAME``, a named parameter (its value, a number)."""
        m = _OPERAND.match(text) if isinstance(text, str) else None
        if m is None or (m["alias"] is None and own is None):
            self.fail(f"{text!r} is not a reference of the form alias.field; {_literal_hint(numeric)}", *where)
        alias, name = m["alias"], m["field"]
        if alias == PARAMETER_ALIAS:
            if not numeric:
                self.fail(f"{text!r}: a parameter is a number; compare with above, at_least, below or at_most",
                          *where)
            return self.number((float(m["k"]) if m["k"] else 1.0) * self.parameter(name, *where), *where)
        if alias is not None and alias not in self.aliases:
            self.fail(f"{text!r}: no earlier fact is called {alias!r}", *where)
        fields = own if alias is None else self.aliases[alias]
        if name not in fields:
            whose = f"{alias!r}" if alias else "this fact"
            self.fail(f"{text!r}: {whose} has no field {name!r} (fields: {', '.join(sorted(fields))}); "
                      f"{_literal_hint(numeric)}", *where)
        if numeric and fields[name][0] not in NUMERIC:
            self.fail(f"{text!r} is a {fields[name][0]}, not a number", *where)
        factor = float(m["k"]) if m["k"] else 1.0
        if m["k"] and not numeric:
            self.fail(f"{text!r}: a factor only makes sense in a comparison", *where)
        return Ref(alias, name, factor)

    def number(self, x, *where) -> float:
        if isinstance(x, str) and x.strip().startswith(PARAMETER_ALIAS + "."):
            return self.ref(x, *where, numeric=True)
        if isinstance(x, bool) or not isinstance(x, (int, float)) or not math.isfinite(x):
            self.fail(f"{x!r} is not a finite number", *where)
        if x != 0 and abs(x) < SMALLEST_NUMBER:
            self.fail(f"{x!r} is smaller than {SMALLEST_NUMBER:g}: state it in a larger unit", *where)
        if abs(x) >= LARGEST_NUMBER:
            self.fail(f"{x!r} cannot be represented by the rule engine (at most {LARGEST_NUMBER:g}): "
                      f"state it in a larger unit", *where)
        return float(x)

    def condition(self, fields, name, spec, *where) -> Condition:
        self.used = []
        if name not in fields:
            self.fail(f"field {name!r} is not in this fact kind (fields: {', '.join(sorted(fields))})"
                      f"{_near(name, fields)}", *where)
        ftype = fields[name][0]
        op, value = ("is", spec) if not isinstance(spec, dict) else next(iter(spec.items()))
        if op in ("between", *COMPARISONS):
            for v in (value if op == "between" and isinstance(value, list) else [value]):
                problem = unit_written(v, fields[name].unit, name)
                if problem:
                    self.fail(problem, *where)
        if op in COMPARISONS:
            if ftype not in NUMERIC:
                self.fail(f"{op}: {name} is a {ftype}, not a number", *where)
            value = (self.ref(value, *where, numeric=True, own=fields) if isinstance(value, str)
                     else self.number(value, *where))
            if isinstance(value, Ref) and value.factor != 1:
                self.number(value.factor, *where)
        elif op == "between":
            if ftype not in NUMERIC:
                self.fail(f"between: {name} is a {ftype}, not a number", *where)
            lo, hi = (self.number(v, *where) for v in value)
            if lo > hi:
                self.fail(f"between: {lo:g} is above {hi:g}", *where)
            value = (lo, hi)
        elif op in ("same_as", "differs_from"):
            value = self.ref(value, *where, own=fields)
            other = (fields if value.alias is None else self.aliases[value.alias])[value.field][0]
            if (other in NUMERIC) != (ftype in NUMERIC) or (ftype not in NUMERIC and other != ftype):
                self.fail(f"{op}: {name} is a {ftype} but {value} is a {other}", *where)
        else:
            values = value if op in ("one_of", "not_one_of") else [value]
            for v in values:
                self.check_type(ftype, v, name, *where)
                self.check_known(self.kind, name, v, *where)
            value = tuple(values) if op in ("one_of", "not_one_of") else value
        return Condition(name, op, value, tuple(self.used))

    def check_known(self, kind: str | None, name: str, v, *where) -> None:
        """Refuse a value the field can never hold ('vanepass'), suggesting the nearest it can."""
        allowed = known_values(kind, name) if kind else None
        if allowed is not None and v not in allowed:
            self.fail(_never(kind, name, v, allowed), *where)

    def check_type(self, ftype, v, name, *where) -> None:
        ok = {"string": isinstance(v, str), "boolean": isinstance(v, bool),
              "number": isinstance(v, (int, float)) and not isinstance(v, bool),
              "integer": isinstance(v, int) and not isinstance(v, bool)}[ftype]
        if not ok:
            self.fail(f"{name} is a {ftype}; {v!r} can never match", *where)
        if ftype in NUMERIC:
            self.number(v, *where)

    def pattern(self, raw: dict, section: str, j: int, negated: bool) -> Pattern:
        where = (section, j)
        counted = "count" in raw
        kind = raw["count"] if counted else raw["fact"]
        fields = self.fields(kind, *where)
        self.kind = kind
        if (counted or negated) and kind not in FACTS:
            what = "count" if counted else "none_of"
            self.fail(f"{what} can only look at evidence kinds, not the derived kind {kind!r} "
                      f"(derived facts arrive during reasoning, after counts and negations are settled)", *where)
        if not counted and ("per" in raw or "at_least" in raw or "at_most" in raw):
            self.fail("per, at_least and at_most belong to a count pattern", *where)
        if counted and negated:
            self.fail("a count cannot be inside none_of; use 'at_most: 0'", *where)
        if counted and "at_least" not in raw and "at_most" not in raw:
            self.fail("a count needs at_least or at_most", *where)
        if kind in MUST_CHOOSE and MUST_CHOOSE[kind][0] not in (raw.get("where") or {}):
            self.fail(f"{kind}: {MUST_CHOOSE[kind][1]}", *where)
        conditions = []
        for name, spec in (raw.get("where") or {}).items():
            cond = self.condition(fields, name, spec, *where, "where", name)
            if counted and isinstance(cond.value, Ref) and cond.value.alias is not None:
                self.fail("count conditions cannot refer to other facts; use 'per:' to count by a field",
                          *where, "where", name)
            conditions.append(cond)
        alias = raw.get("as") or f"{'n' if negated else 'f'}{j}_{section}"
        if alias in RESERVED_ALIASES:
            self.fail(f"alias {alias!r} is reserved by the rule engine", *where, "as")
        if alias in self.aliases:
            self.fail(f"alias {alias!r} used twice", *where, "as")
        per = raw.get("per")
        if per is not None and per not in fields:
            self.fail(f"per: {kind} has no field {per!r}", *where, "per")
        if counted:
            group_type = fields[per][0] if per else "string"
            self.aliases[alias] = {"kind": F("string", "tally"), "n": F("integer", f"facts of kind {kind} counted"),
                                   "group": F(group_type, f"value of {per} shared by the counted facts",
                                              fields[per].unit if per else "")}
        elif not negated:
            self.aliases[alias] = fields
            self.alias_kinds[alias] = kind
        return Pattern(kind, alias, tuple(conditions), counted, per, raw.get("at_least"), raw.get("at_most"))

    def certainty(self) -> tuple[float, tuple[Ramp, ...]]:
        spec = self.raw["certainty"]
        if not isinstance(spec, dict):
            return float(spec), ()
        if "at_most" in spec:
            return 0.0, ()     # a ceiling lends nothing; it holds its hypothesis down (Rule.ceiling)
        ramps = []
        for j, r in enumerate(spec.get("grade_by") or []):
            where = ("certainty", "grade_by", j)
            self.used = []
            value = self.ref(r["value"], *where, numeric=True)
            if not isinstance(value, Ref):
                self.fail("grade_by: 'value' must be a measured value (alias.field), not a parameter", *where)
            for end in ("from", "to"):
                unit = self.aliases[value.alias][value.field].unit if value.alias else ""
                problem = unit_written(r[end], unit, f"grade_by {end}")
                if problem:
                    self.fail(problem, *where, end)
            start, full = self.number(r["from"], *where), self.number(r["to"], *where)
            if start == full:
                self.fail("grade_by: 'from' and 'to' must differ", *where)
            ramps.append(Ramp(value, start, full, tuple(self.used)))
        return float(spec["weight"]), tuple(ramps)

    def sentence(self, key: str = "because") -> tuple[str, tuple[Placeholder, ...]]:
        """The because sentence (or another of the rule's sentences, ``measure_again``) and its placeholders:
        {alias.field} only, formatted by unit later."""
        text = self.raw[key]
        try:
            parsed = list(string.Formatter().parse(text))
        except ValueError as exc:
            self.fail(f"{key}: {exc}", key)
        places = []
        for _, name, spec, conversion in parsed:
            if name is None:
                continue
            if spec or conversion:
                self.fail(f"{key}: write {{{name}}} without a format ('{{{name}:{spec or ''}}}' given); "
                          "the report formats each value by its unit", key)
            ref = self.ref(name, key)
            if not isinstance(ref, Ref) or ref.alias is None or ref.factor != 1:
                self.fail(f"{key}: {{{name}}} must name a matched fact's field as alias.field", key)
            spec_ = self.aliases[ref.alias][ref.field]
            places.append(Placeholder(ref.alias, ref.field, spec_[0], spec_[2] if len(spec_) > 2 else ""))
        return text, tuple(places)

    def explains(self, needs: tuple[Pattern, ...]) -> tuple[str, ...]:
        """Aliases whose facts' signs the conclusion explains: those named, or every needed fact."""
        facts = [p.alias for p in needs if not p.counted]
        if "explains" not in self.raw:
            return tuple(facts)
        for j, alias in enumerate(self.raw["explains"]):
            if alias not in facts:
                self.fail(f"explains: {alias!r} is not a needed fact of this rule (needed: {', '.join(facts)})",
                          "explains", j)
        return tuple(self.raw["explains"])

    def fault_choice(self, fault, key: str) -> str | FaultChoice:
        """A conclusion's fault (``fault`` or ``indistinct_from``): a declared fault id, or {from, map}."""
        named = list(fault["map"].values()) if isinstance(fault, dict) else [fault]
        for f in named:
            if f not in self.faults:
                self.fail(f"concludes an undeclared fault {f!r} (declared: {', '.join(sorted(self.faults))})"
                          f"{_near(f, self.faults)}", "concludes", key)
        if not isinstance(fault, dict):
            return fault
        source = self.ref(fault["from"], "concludes", key, "from")
        if source.alias is not None:
            for value in fault["map"]:
                self.check_known(self.alias_kinds.get(source.alias), source.field, value,
                                 "concludes", key, "map", value)
        return FaultChoice(source, tuple(fault["map"].items()))

    def value_or_ref(self, v, *where):
        if isinstance(v, str) and _OPERAND.match(v) and v.split(".", 1)[0] in self.aliases:
            return self.ref(v, *where)
        return v

    def site_record(self) -> tuple[int, int] | None:
        """(confirmed, judged) of ``site_record:`` (the schema holds both to whole numbers)."""
        record = self.raw.get("site_record")
        if record is None:
            return None
        if record["confirmed"] > record["judged"]:
            self.fail(f"site_record: confirmed {record['confirmed']} of {record['judged']} judged; a rule cannot be "
                      "confirmed more often than it was judged", "site_record")
        return record["confirmed"], record["judged"]

    def build(self) -> Rule:
        needs = tuple(self.pattern(p, "needs", j, False) for j, p in enumerate(self.raw["needs"]))
        none_of = tuple(self.pattern(p, "none_of", j, True) for j, p in enumerate(self.raw.get("none_of") or []))
        weight, ramps = self.certainty()
        because, placeholders = self.sentence()
        again, again_placeholders = self.sentence("measure_again") if "measure_again" in self.raw else ("", ())
        if again and "concludes" not in self.raw:
            self.fail("measure_again: only a rule that concludes a reading problem says what to measure again with",
                      "measure_again")
        common = dict(id=self.raw["id"], title=self.raw["title"], source=self.raw["source"], needs=needs,
                      none_of=none_of, weight=weight, ramps=ramps, because=because, path=self.doc.path,
                      measure_again=again, again_placeholders=again_placeholders,
                      line=self.doc.line_of(["rules", self.index]), placeholders=placeholders,
                      explains=self.explains(needs), site_record=self.site_record(),
                      counts_with=self.raw.get("counts_with"))
        if "counts_with" in self.raw and "concludes" not in self.raw:
            self.fail("counts_with: only a rule that concludes a fault counts with another", "counts_with")
        spec = self.raw["certainty"]
        if isinstance(spec, dict) and "at_most" in spec:
            if "concludes" not in self.raw:
                self.fail("certainty: at_most holds a hypothesis down; only a rule that concludes a fault has one",
                          "certainty")
            if "counts_with" in self.raw:
                self.fail("counts_with: a rule with certainty at_most lends nothing to count with another",
                          "counts_with")
            common["ceiling"] = float(spec["at_most"])
        if "concludes" in self.raw:
            c = self.raw["concludes"]
            fault = self.fault_choice(c["fault"], "fault")
            component = self.value_or_ref(c["component"], "concludes", "component")
            if "indistinct_from" in c:
                if spec != 0 or isinstance(spec, bool):
                    self.fail("concludes: indistinct_from names a rival beside the fault and lends nothing: its "
                              "certainty is 0", "certainty")
                if "counts_with" in self.raw or "stage" in c:
                    self.fail("concludes: indistinct_from names a rival; it has no stage and counts with no rule",
                              "concludes", "indistinct_from")
                common["rival"] = self.fault_choice(c["indistinct_from"], "indistinct_from")
            return Rule(**common, fault=fault, component=component, stage=c.get("stage"))
        d = self.raw["derives"]
        if d["fact"] not in self.derived:
            self.fail(f"derives an undeclared kind {d['fact']!r}; declare it under 'derived:'", "derives", "fact")
        if weight <= 0:
            self.fail("a rule that derives a fact needs a positive certainty", "certainty")
        declared = self.derived[d["fact"]]
        missing = sorted(set(declared) - set(d["fields"]))
        extra = sorted(set(d["fields"]) - set(declared))
        if missing or extra:
            self.fail(f"derives {d['fact']}: "
                      + (f"missing fields {missing}" if missing else f"unknown fields {extra}"), "derives", "fields")
        values = []
        for name, v in d["fields"].items():
            v = self.value_or_ref(v, "derives", "fields", name)
            if not isinstance(v, Ref):
                self.check_type(declared[name][0], v, name, "derives", "fields", name)
            values.append((name, v))
        return Rule(**common, derives=d["fact"], derived_fields=tuple(values))


def _build_rule(doc, index, raw, faults, derived, parameters) -> Rule:
    return _RuleChecker(doc, index, raw, faults, derived, parameters).build()
