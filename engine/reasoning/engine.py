"""Forward chaining on durable-rules, made safe for one diagnosis after another.

durable-rules 2.0.28 has hazards this layer handles (each measured on the
library by a test in tests/reasoning/test_engine_hazards.py or test_reasoning.py):

- ``Host()`` starts timer threads that may run actions on another thread:
  ``QuietHost`` does not start them, so every assert returns only after all
  chained consequences have run, on the caller's thread.
- a negation is checked once: every rule starts with the phase fact, asserted
  after all evidence (see ``compile``).
- exceptions inside actions are swallowed: each action catches its own,
  records it, and ``reason`` raises it after the diagnosis; the state's
  ``exception`` field is checked too.
- numbers in exponent notation are rejected: the engine's copy of a fact
  has tiny magnitudes set to 0 and huge ones capped (``engine_value``); the
  trail keeps the measured values.
- ``any`` merges activations: the compiler never emits it (a rule is ``all``).
- a comparison with an earlier fact's field that follows an ``$or`` in the
  same ``$and`` is skipped (the match succeeds whatever it says): the
  compiler puts every ``$or`` last.
- arithmetic with a field a fact does not carry stops the engine (error
  311): the compiler makes a pattern require every field that a later
  condition compares with.
- when a comparison with another fact fails, the engine skips the rest of the
  pattern by reading on to an end marker the outermost ``$and`` does not
  have, past the end of its table: a crash now and then (exit 139). The
  compiler ends every pattern that compares with another fact with a
  group that always holds, whose end marker stops the read.
- actions must take exactly one parameter: each is a closure of one argument.
- at most 1024 live states per ruleset: each diagnosis uses a fresh sid and
  deletes its state, even when it fails.
- fixed-size tables in the C core (error 108 when more than 256 rules share
  a first test, as every rule here shares the phase pattern; error 303 when
  a fact passes the tests of more than 64 patterns of its kind, at assert
  time): ``compile.plan_rulesets`` splits a rulebook that
  outgrows the budgets into rulesets run one after another, each with its
  own state, derived facts of earlier ones asserted into later ones.
- nothing bounds forward chaining: rules that feed each other would run
  until memory runs out. ``load_rulebook`` refuses such a ring, and each
  reading stops with a ReasoningError after ``MAX_FIRINGS`` firings or
  ``MAX_SECONDS`` of chaining, naming the rules that fired most.
- deleting a state on which no action ever ran frees two pointers the C core
  never initialised (``createStateNode`` leaves ``context.messages`` and
  ``context.stateFact`` unset; only the first action sets them, and the end of
  each action frees and clears them), which aborts the interpreter
  ("free(): invalid pointer"). Every ruleset therefore holds a closing rule
  that matches the phase fact alone, so every diagnosis runs at least one
  action; a state whose closing action did not run is left in place (a small
  leak) rather than deleted.
"""

from __future__ import annotations

import itertools
import math
import string
import threading
import time
from collections import Counter, defaultdict
from dataclasses import replace

import durable_rules_engine
from durable.engine import Host, MessageNotHandledException, MessageObservedException

from ..common.errors import ReasoningError
from ..common.units import format_quantity
from ..evidence.signs import SIGNS, merged
from . import certainty as cf
from .compile import PHASE_KIND, compile_ruleset, plan_rulesets, tally_slot
from .differential import differential
from .explaining import Claim, share
from .findings import Firing, Hypothesis, Reasoning, SignLoss
from .rulebook import LARGEST_NUMBER, SMALLEST_NUMBER, TALLY_KIND, FaultChoice, Ref, Rule, Rulebook

RULESET = "tellwave"
# Bounds on one reading's forward chaining. The shipped rulebooks with the demo site overlay fire at
# most 261 times on a demo case, 369 over bench.confusion --quick and 63 on the real records of
# bench.real_data (measured 2026-12; tests/reasoning/test_chaining_bounds.py keeps them under a
# twentieth of the bound); a thousand site rules that each fire once per channel stay well within.
# A ring of rules that feed each other takes about 0.35 ms and 8 kB a firing, so the bound stops one
# after about 7 s and 160 MB. A rulebook that reaches either bound is feeding itself (or joins far
# too widely), and no certainty it gave would mean anything.
MAX_FIRINGS = 20_000
MAX_SECONDS = 30.0


class QuietHost(Host):
    """A durable-rules host without its background dispatch threads."""

    def _run(self):
        pass


def engine_value(x):
    """A value the rule engine accepts: no exponent notation, no NaN or inf (None drops the field)."""
    if isinstance(x, bool) or not isinstance(x, float):
        return x
    if not math.isfinite(x):
        return None
    if abs(x) < SMALLEST_NUMBER:
        return 0.0
    if abs(x) >= LARGEST_NUMBER:
        return math.copysign(LARGEST_NUMBER, x)
    return round(x, 6)


def engine_copy(fact: dict, sid: str) -> dict:
    """A fact as the rule engine may hold it: its signs left out, values made engine-safe, no None
    fields, tagged with the diagnosis's session id."""
    out = {}
    for k, v in fact.items():      # one pass: a few hundred facts a diagnosis, a dozen fields each
        if isinstance(v, float):
            v = engine_value(v)
        if v is not None and k != SIGNS:
            out[k] = v
    out["sid"] = sid
    return out


def _literal_match(fact: dict, c) -> bool:
    """One condition on one fact, as the engine would judge it (joins to other facts excepted).

    Used for count patterns (counts are made before chaining starts) and to
    leave out facts that no pattern could accept. Give it the engine's copy
    of the fact, so rounding is the same as the engine's.
    """
    v = fact.get(c.field)
    target = c.value
    if isinstance(target, Ref):   # a bare field of the same fact
        target = fact.get(target.field)
        if target is None:
            return False
        target = target * c.value.factor if c.value.factor != 1 else target
    if v is None:
        return False
    if c.op in ("is", "same_as"):
        return v == target
    if c.op in ("is_not", "differs_from"):
        return v != target
    if c.op == "one_of":
        return v in c.value
    if c.op == "not_one_of":
        return v not in c.value
    if c.op == "between":
        return c.value[0] <= v <= c.value[1]
    if c.op == "above":
        return v > target
    if c.op == "at_least":
        return v >= target
    if c.op == "below":
        return v < target
    if c.op == "at_most":
        return v <= target
    raise KeyError(c.op)


def tallies(rules, facts: list[dict]) -> list[dict]:
    """Counts that the rules' count patterns read, one fact per (pattern, group)."""
    out: list[dict] = []
    for rule in rules:
        for p in rule.needs:
            if not p.counted:
                continue
            groups: dict = defaultdict(int)
            if p.per is None:
                groups[""] = 0
            for f in facts:
                if f["kind"] == p.kind and all(_literal_match(f, c) for c in p.conditions):
                    groups["" if p.per is None else f.get(p.per)] += 1
            for group, n in sorted(groups.items(), key=lambda kv: str(kv[0])):
                out.append({"kind": TALLY_KIND, "id": f"tally-{len(out) + 1}", "slot": tally_slot(rule, p),
                            "group": group, "n": n})
    return out


class _Session:
    """Everything one diagnosis collects while its actions run."""

    def __init__(self, facts_by_id, deadline: float):
        self.facts_by_id = facts_by_id
        self.firings: list[tuple[Rule, Firing]] = []
        self.errors: list[str] = []
        self.derived_count = 0
        self.derived: list[dict] = []   # every derived fact so far, for the rulesets that run later
        self.closed = False   # the closing rule ran: the engine's action context is initialised
        self.fired: Counter = Counter()
        self.count = 0
        self.deadline = deadline
        self.stopped = False

    def admit(self, rule: Rule) -> bool:
        """Count one firing of ``rule``; False once chaining has passed its bounds (then every
        later firing is ignored and asserts nothing, so the engine drains and stops)."""
        if self.stopped:
            return False
        over = self.count >= MAX_FIRINGS
        if not over and time.monotonic() <= self.deadline:
            self.count += 1
            self.fired[rule.id] += 1
            return True
        self.stopped = True
        ranked = sorted(self.fired.items(), key=lambda kv: (-kv[1], kv[0]))[:3]
        most = ", ".join(f"{rid} {n:,} time{'s' if n > 1 else ''}" for rid, n in ranked)
        why = (f"after {MAX_FIRINGS:,} rule firings (the most one reading may take)" if over
               else f"after {MAX_SECONDS:g} s ({self.count:,} rule firings)")
        self.errors.append(f"forward chaining stopped {why}; most fired: {most}; "
                           "these rules may feed each other, or join far too many facts")
        return False


class Reasoner:
    """A compiled rulebook that diagnoses evidence fact lists, one isolated session each."""

    def __init__(self, rulebook: Rulebook):
        self.rulebook = rulebook
        self._host = QuietHost()
        try:
            groups = plan_rulesets(rulebook.rules)
        except ValueError as exc:
            raise ReasoningError(f"{len(rulebook.rules)} rules: {exc}") from None
        self._rulesets = [(RULESET if i == 0 else f"{RULESET}-{i + 1}", group) for i, group in enumerate(groups)]
        try:
            self._host.set_rulesets({name: compile_ruleset(group, self._make_action, self._close)
                                     for name, group in self._rulesets})
        except durable_rules_engine.error as exc:
            raise ReasoningError(f"the rule engine cannot hold these {len(rulebook.rules)} rules "
                                 f"({exc}); please report it") from None
        self._sessions: dict[str, _Session] = {}
        self._sids = itertools.count(1)
        self._lock = threading.Lock()
        self._patterns = _patterns_by_kind(rulebook.rules)
        self._group_patterns = [_patterns_by_kind(group) for _, group in self._rulesets]
        self._group_slots = [{tally_slot(r, p) for r in group for p in r.needs if p.counted}
                             for _, group in self._rulesets]

    @property
    def ruleset_count(self) -> int:
        """How many rulesets the rulebook was split into (1 unless it outgrew the engine's tables)."""
        return len(self._rulesets)

    def _could_match(self, fact: dict, patterns=None) -> bool:
        """Whether some pattern's own conditions accept ``fact`` (joins are left to the engine).

        Facts no pattern can accept would only cost the engine time; the
        engine still decides every match, join and negation itself.
        """
        patterns = self._patterns if patterns is None else patterns
        return any(all(_literal_match(fact, c) for c in conditions) for conditions in patterns.get(fact["kind"], ()))

    def _make_action(self, rule: Rule):
        def fire(c):
            session = self._sessions.get(c.s.sid)
            if session is None or not session.admit(rule):
                return
            try:
                self._fire(rule, c, session)
            except Exception as exc:  # noqa: BLE001 - durable-rules would swallow it
                session.errors.append(f"rule {rule.id}: {exc.__class__.__name__}: {exc}")
        return fire

    def _close(self, c) -> None:
        session = self._sessions.get(c.s.sid)
        if session is not None:
            session.closed = True

    def _fire(self, rule: Rule, c, session: _Session) -> None:
        matched = []
        for p in rule.needs:
            engine_fact = getattr(c, p.alias)
            fid = engine_fact["id"]
            matched.append((p.alias, session.facts_by_id[fid]))
        values = dict(matched)
        grade = 1.0
        for r in rule.ramps:
            graded_by = _value(values, r.value)
            # a value the evidence left out (a level of a channel whose scale is not trusted) lends nothing
            grade *= 0.0 if graded_by is None else cf.ramp(graded_by, r.start, r.full)
        premises = [f.get("certainty", 1.0) for _, f in matched if f["kind"] not in (TALLY_KIND,)]
        strength = rule.weight * grade * cf.premise_certainty(premises)
        parts = sentence_parts(rule, values)
        because = "".join(literal + ("" if v is None else format_quantity(v["value"], v["unit"], v["type"]))
                          for literal, v in parts)
        again_parts = sentence_parts(rule, values, "measure_again") if rule.measure_again else ()
        again = "".join(literal + ("" if v is None else format_quantity(v["value"], v["unit"], v["type"]))
                        for literal, v in again_parts)
        signs = explained_signs(values[alias] for alias in rule.explains)
        derived = None
        if rule.derives is not None and strength > 0:
            session.derived_count += 1
            derived = {"kind": rule.derives, "id": f"{rule.derives}-{session.derived_count}",
                       "certainty": strength}
            for name, v in rule.derived_fields:
                derived[name] = _value(values, v) if isinstance(v, Ref) else v
            if signs:
                derived[SIGNS] = signs
            session.facts_by_id[derived["id"]] = derived
            session.derived.append(derived)
        firing = Firing(rule.id, rule.title, rule.source, rule.origin, rule.replaced, strength, because,
                        tuple(matched), derived, tuple(sorted(signs.items())), site_record=rule.site_record,
                        because_parts=parts, weight_kept=rule.weight_kept, measure_again=again,
                        measure_again_parts=again_parts)
        session.firings.append((rule, firing))
        if derived is not None:
            try:
                c.assert_fact(engine_copy(derived, c.s.sid))
            except MessageNotHandledException:
                pass  # no rule reads this derived kind under these conditions

    def reason(self, facts: list[dict]) -> Reasoning:
        """Forward-chain ``facts`` to quiescence and rank the hypotheses.

        Each ruleset runs in turn (one, unless the rulebook outgrew the engine's tables): the
        evidence its patterns could match, the counts its rules read, the facts derived by the
        rulesets before it, then the phase fact.
        """
        with self._lock:
            sid = f"d{next(self._sids)}"
            copies = {f["id"]: engine_copy(f, sid) for f in facts}
            considered = sorted((f for f in facts if self._could_match(copies[f["id"]])), key=lambda f: f["id"])
            tally = tallies(self.rulebook.rules, list(copies.values()))
            considered += tally
            copies.update({t["id"]: engine_copy(t, sid) for t in tally})
            session = _Session({f["id"]: f for f in considered}, time.monotonic() + MAX_SECONDS)
            self._sessions[sid] = session
            try:
                for (name, _), patterns, slots in zip(self._rulesets, self._group_patterns, self._group_slots):
                    if session.errors:
                        break
                    if len(self._rulesets) == 1:
                        mine = [copies[f["id"]] for f in considered]
                    else:
                        mine = [copies[f["id"]] for f in considered
                                if (f["slot"] in slots if f["kind"] == TALLY_KIND
                                    else self._could_match(copies[f["id"]], patterns))]
                        mine += [c for c in (engine_copy(d, sid) for d in session.derived)
                                 if self._could_match(c, patterns)]
                    self._run(name, sid, mine, session)
            finally:
                del self._sessions[sid]
            if session.errors:
                raise ReasoningError("; ".join(session.errors[:3]))
            return self._rank(session, len(considered))

    def _run(self, name: str, sid: str, facts: list[dict], session: _Session) -> None:
        """One ruleset's part of a diagnosis: its facts, then the phase fact; its state deleted after."""
        session.closed = False
        try:
            for fact in facts:
                self._assert(name, fact)
            self._assert(name, {"kind": PHASE_KIND, "id": "phase", "sid": sid})
            state = self._host.get_state(name, sid)
            if "exception" in state:
                session.errors.append(str(state["exception"]))
        except durable_rules_engine.error as exc:
            session.errors.append(f"the rule engine failed ({exc}); please report it with the rulebooks used")
        finally:
            if session.closed:
                self._host.delete_state(name, sid)
            else:
                session.errors.append("the rule engine did not finish this diagnosis")

    def _assert(self, name: str, fact: dict) -> None:
        try:
            self._host.assert_fact(name, fact)
        except MessageNotHandledException:
            pass  # no rule's conditions look at this fact
        except MessageObservedException:
            raise ReasoningError(f"fact {fact.get('id')} asserted twice") from None

    def _explain_away(self, by_hypothesis):
        """Share the signs of every supporting firing among the fault hypotheses (explaining.py);
        each firing's certainty becomes what its share of its signs leaves it."""
        claims, places, against = [], [], defaultdict(list)
        for key, per_rule in by_hypothesis.items():
            if self.rulebook.faults[key[0]].family == "reading":
                continue
            for rule_id in sorted(per_rule):
                entries = per_rule[rule_id]
                for i, (_, f) in enumerate(entries):
                    if f.certainty > 0:
                        claims.append(Claim(key, rule_id, f.certainty, dict(f.signs)))
                        places.append((key, rule_id, i))
                negative = [f.certainty for _, f in entries if f.certainty < 0]
                if negative:
                    against[key].append(min(negative))
        sharing = share(claims, against)
        for (key, rule_id, i), kept in zip(places, sharing.kept):
            if kept < 1 - 1e-9:
                rule, f = by_hypothesis[key][rule_id][i]
                by_hypothesis[key][rule_id][i] = (rule, replace(f, certainty=round(f.certainty * kept, 6),
                                                                kept=round(kept, 6), raw_certainty=f.certainty))
        return by_hypothesis, sharing

    def _losses(self, key, sharing) -> tuple[SignLoss, ...]:
        """Which other hypotheses took part of this one's signs, most first (1 % or more)."""
        out = [SignLoss(f, self.rulebook.faults[f].name, c, round(v, 4))
               for (f, c), v in sharing.losses(key).items() if v >= 0.01]
        return tuple(sorted(out, key=lambda x: (-x.share, x.fault, x.component)))

    def _rank(self, session: _Session, considered: int) -> Reasoning:
        by_hypothesis: dict[tuple[str, str], dict[str, list[tuple[Rule, Firing]]]] = defaultdict(
            lambda: defaultdict(list))
        chain = []
        indistinct: dict[tuple[str, str], list[Firing]] = defaultdict(list)
        for rule, firing in session.firings:
            if rule.derives is not None:
                chain.append(firing)
                continue
            values = dict(firing.facts)
            component = _value(values, rule.component)
            fault = (rule.fault.pick(_value(values, rule.fault.value)) if isinstance(rule.fault, FaultChoice)
                     else rule.fault)
            if fault is not None and rule.rival is not None:
                # names a rival beside the fault: it lends and takes nothing, and shares no sign
                rival = (rule.rival.pick(_value(values, rule.rival.value)) if isinstance(rule.rival, FaultChoice)
                         else rule.rival)
                if rival is not None and rival != fault:
                    indistinct[(fault, str(component))].append(replace(
                        firing, signs=(), rival=rival, rival_name=self.rulebook.faults[rival].name))
            elif fault is not None:
                # each piece of evidence counts once: a rule, with the rules that count with it
                by_hypothesis[(fault, str(component))][rule.evidence_key].append((rule, firing))
        by_hypothesis, sharing = self._explain_away(by_hypothesis)
        hypotheses = []
        for (fault_id, component), per_rule in by_hypothesis.items():
            support, against, extra, same = [], [], 0, []
            # a ceiling (certainty: at_most) lends nothing: it holds the hypothesis down, the lowest one counting
            ceilings = sorted(((r.ceiling, r.id, r, f) for rid in per_rule for r, f in per_rule[rid]
                               if r.ceiling is not None), key=lambda c: (c[0], c[1]))
            per_rule = {rid: kept for rid, e in per_rule.items() if (kept := [x for x in e if x[0].ceiling is None])}
            for rule_id in sorted(per_rule):
                entries = per_rule[rule_id]
                extra += len(entries) - 1
                rule, best = max(entries, key=lambda e: abs(e[1].certainty))  # first of equals
                # the strongest firing of each other rule of this piece of evidence: shown, not counted again
                same += [replace(max((f for r, f in entries if r.id == other), key=lambda f: abs(f.certainty)),
                                 counted_with=rule.id) for other in sorted({r.id for r, _ in entries} - {rule.id})]
                if best.certainty > 0:
                    support.append((rule, best))
                elif best.certainty < 0:
                    against.append((rule, best))
            total = cf.combine_all([f.certainty for _, f in support + against])
            raw = cf.combine_all(max((_raw(f) for _, f in entries), key=abs) for entries in per_rule.values())
            if ceilings and total > ceilings[0][0]:
                at_most, _, holder, held = ceilings[0]
                took = cf.held_at(at_most, [f.certainty for _, f in support], [f.certainty for _, f in against])
                against.append((holder, replace(held, certainty=round(took, 6))))
                total, raw = at_most, min(raw, at_most)
            elif ceilings:
                raw = min(raw, ceilings[0][0])
            if not support and not against:
                continue      # only a ceiling fired: nothing to hold down
            stages = [r.stage for r, f in support if r.stage is not None]
            known = self.rulebook.faults[fault_id]
            hypotheses.append(Hypothesis(
                fault_id, known.name, known.family, component, round(total, 6), max(stages) if stages else None,
                tuple(sorted((f for _, f in support), key=lambda f: -f.certainty)),
                tuple(sorted((f for _, f in against), key=lambda f: f.certainty)), extra, known.withholds_diagnosis,
                round(raw, 6) if abs(raw - total) > 1e-6 else None,
                self._losses((fault_id, component), sharing), tuple(f for f in same if f.certainty > 0),
                _one_per_rival(indistinct.get((fault_id, component), ()))))
        hypotheses.sort(key=lambda h: (-h.certainty, h.fault, h.component))
        faults_of = self.rulebook.faults
        problems = tuple(h for h in hypotheses if faults_of[h.fault].family == "reading")
        withheld = any(h.confident and faults_of[h.fault].withholds_diagnosis for h in problems)
        faults = tuple(h for h in hypotheses if faults_of[h.fault].family != "reading")
        result = Reasoning(faults, withheld, problems, tuple(chain), considered, len(self.rulebook.rules),
                           self.rulebook.files, fault_advice={fid: f.advice for fid, f in faults_of.items()
                                                              if f.advice is not None})
        kinds = {f["kind"] for f in (*session.facts_by_id.values(), *session.derived)}
        return replace(result, differential=differential(self.rulebook, result, kinds))


def _one_per_rival(firings) -> tuple[Firing, ...]:
    """The rules naming rivals beside a hypothesis: one firing per rival and rule (one channel's sentence says
    what the others would; the first by its sentence, so the same reading always shows the same one)."""
    out: dict[tuple, Firing] = {}
    for f in sorted(firings, key=lambda f: f.because):
        out.setdefault((f.rival, f.rule_id), f)
    return tuple(sorted(out.values(), key=lambda f: (f.rival, f.rule_id)))


def _patterns_by_kind(rules) -> dict[str, list[tuple]]:
    """Each fact kind's patterns (counts left out) as the conditions a fact alone can be judged by
    (a join to another fact's field is the engine's), worked out once per rulebook."""
    out: dict[str, list[tuple]] = defaultdict(list)
    for r in rules:
        for p in r.needs + r.none_of:
            if not p.counted:
                out[p.kind].append(tuple(c for c in p.conditions
                                         if not (isinstance(c.value, Ref) and c.value.alias is not None)))
    return out


def _raw(f: Firing) -> float:
    return f.raw_certainty if f.raw_certainty is not None else f.certainty


def explained_signs(facts) -> dict[str, float]:
    """The signs of ``facts`` (evidence.signs) merged: each sign with the best fit any of them gives it."""
    return merged(*(fact.get(SIGNS) or {} for fact in facts))


def sentence_parts(rule: Rule, values: dict, which: str = "because") -> tuple[tuple[str, dict | None], ...]:
    """The rule's because sentence (or its ``measure_again`` sentence) in parts: each literal text with the value
    that follows it (None at the end): its field, value, unit, type and the shaft under the sensor of its fact
    (for a report that shows frequencies in orders; None for a fact of no channel)."""
    places = rule.placeholders if which == "because" else rule.again_placeholders
    by_name = {f"{p.alias}.{p.field}": p for p in places}
    parts: list[tuple[str, dict | None]] = []
    for literal, name, _, _ in string.Formatter().parse(getattr(rule, which)):
        value = None
        if name is not None:
            p = by_name[name.strip()]
            fact = values[p.alias]
            value = {"field": p.field, "value": fact.get(p.field), "unit": p.unit, "type": p.type,
                     "shaft": fact.get("location_shaft")}
        parts.append((literal, value))
    return tuple(parts)


def word_sentence(rule: Rule, values: dict) -> str:
    """The rule's because sentence with each {alias.field} worded by its unit."""
    return "".join(literal + ("" if v is None else format_quantity(v["value"], v["unit"], v["type"]))
                   for literal, v in sentence_parts(rule, values))


def _value(values: dict, ref):
    if not isinstance(ref, Ref):
        return ref
    v = values[ref.alias].get(ref.field)
    return v * ref.factor if ref.factor != 1 and v is not None else v
