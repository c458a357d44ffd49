"""What a site's findings at repair say about its rules: hit rates, reliability and a learned overlay.

Plain data in, plain data out: a list of judged diagnoses (the rule firings of a
stored diagnosis and what was found when the machine was opened) gives

- per rule, how often it fired on a judged reading (``n``), how often the fault it
  supports was found on the component it named (``k``), the hit rate ``k / n``
  with its Wilson score 95 % interval (Wilson 1927), and the mean certainty the
  diagnoses gave those hypotheses (what the rulebook promised when the rule fired);
- per certainty bin of the top hypotheses, the count, the mean certainty and the
  fraction confirmed (a reliability table), and the Brier score over every judged
  top hypothesis (Brier 1950);
- a proposed site overlay (YAML text in the rulebook overlay format of
  ``rulebooks/README.md``) that carries only what was learned: for each rule whose
  weight changes, the new weight, its ``site_record`` (confirmed k of n) and the
  fingerprint of the rule it was learned against (``learned_against``), and for each
  rule whose weight it keeps, its record and why (``kept:``, shown beside its firings); the loader
  lays that onto the rule as it is loaded then, and leaves it unapplied, with a
  note, when the rule has changed since. The shipped rulebooks are never edited.

The arithmetic. What a site's record estimates is the probability that a rule's
conclusion is right when the rule fires, ``k / n``. Before any finding that
probability is taken to be the loaded weight, worth ``prior_n`` findings (a beta
prior of mean ``w`` and strength ``prior_n``), so the estimate is the posterior
mean ``(prior_n * w + k) / (prior_n + n)``, moved at most ``cap`` from ``w``. A
weight is a certainty factor (Shortliffe & Buchanan 1975), not a hit rate: a rule
that corroborates others fires beside them, and its conclusion is confirmed as
often as the combined diagnosis was right. So the record is also read against
what the diagnoses promised when the rule fired (the mean certainty of those
hypotheses): a weight is raised only when its conclusions were confirmed at
least as often as their certainty promised, and lowered only when confirmed no
more often than promised. A move the record contradicts is not made ("held").
Rules with fewer than ``least_n`` judged firings keep their weight.

Counting: a rule counts once per judged diagnosis and hypothesis (fault on a
component) it supports, however many channels it fired on. A diagnosis is judged
when at least one finding is recorded against it; a hypothesis is confirmed when a
finding names the same fault on the same component. Everything is sorted and sums are
exactly rounded (``math.fsum``), so the same input in any order gives the same output.
"""

from __future__ import annotations

import math
from collections import defaultdict
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from functools import cache

import yaml

from ..common.errors import RulebookError
from .findings import Reasoning
from .rulebook import Rulebook

Z_95 = 1.959963984540054      # standard normal quantile at 0.975 (two-sided 95 %)
NOTHING_FOUND = "nothing-found"
OTHER = "other"
# the learning's constants are named parameters of rulebooks/parameters.yaml (a site may set them):
# parameter name -> attribute of ``Settings``
PARAMETERS = {"learning_prior_findings": "prior_n", "learning_move_cap": "cap",
              "learning_least_findings": "least_n", "learning_lowest_weight": "lowest_weight",
              "learning_bin_width": "bin_width"}


@dataclass(frozen=True)
class Settings:
    """How far findings may move a rule: read from the rulebook's ``learning_*`` parameters."""

    prior_n: float           # the loaded weight counts as this many findings
    cap: float               # a learned weight moves at most this far from the loaded one
    least_n: int             # fewer judged firings than this: too little evidence to judge
    lowest_weight: float     # a supporting rule keeps at least this weight; rules at it are not learned
    bin_width: float         # width of the reliability table's certainty bins

    @property
    def bin_edges(self) -> tuple[float, ...]:
        """The reliability table's bin edges, 0 to 1."""
        count = round(1 / self.bin_width)
        return tuple(i / count for i in range(count + 1))


def settings(rulebook: Rulebook | None = None) -> Settings:
    """The learning settings of ``rulebook`` (default: the shipped rulebooks), each checked: a site's
    ``parameters:`` that make no sense is a RulebookError naming the parameter and the file."""
    book = rulebook if rulebook is not None else _shipped()
    values: dict = {}
    for name, attr in PARAMETERS.items():
        p = book.parameters.get(name)
        if p is None:
            raise RulebookError(f"parameters.{name}: not declared (rulebooks/parameters.yaml declares it); "
                                "the learning needs it")
        where = p.changed_by[-1] if p.changed_by else p.path
        v = p.value
        if attr in ("prior_n", "least_n") and not (v >= 1 and v == int(v)):
            raise RulebookError(f"parameters.{name}: {v:g} findings; it must be a whole number, 1 or more",
                                path=where)
        if attr in ("cap", "lowest_weight") and not 0 < v < 1:
            raise RulebookError(f"parameters.{name}: {v:g}; it must lie between 0 and 1", path=where)
        if attr == "bin_width" and not (0 < v <= 0.5 and abs(round(1 / v) * v - 1) < 1e-9):
            raise RulebookError(f"parameters.{name}: {v:g}; it must divide 1 into 2 or more bins (0.1, 0.2, 0.25...)",
                                path=where)
        values[attr] = int(v) if attr == "least_n" else v
    return Settings(**values)


@cache
def _shipped() -> Rulebook:
    from .rulebook import load_rulebook

    return load_rulebook()


def __getattr__(name: str):
    """``PRIOR_N``, ``MOVE_CAP``, ``LEAST_N``, ``LOWEST_WEIGHT`` and ``BIN_EDGES``: the shipped settings,
    read from rulebooks/parameters.yaml when asked (no copy is kept here)."""
    attr = {"PRIOR_N": "prior_n", "MOVE_CAP": "cap", "LEAST_N": "least_n", "LOWEST_WEIGHT": "lowest_weight",
            "BIN_EDGES": "bin_edges"}.get(name)
    if attr is None:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    return getattr(settings(), attr)


@dataclass(frozen=True)
class RuleFiring:
    """One rule's firing in a stored diagnosis: the hypothesis it supports (or opposes, when its
    certainty is negative), the certainty it lent and the hypothesis's final certainty."""

    rule_id: str
    fault: str
    component: str
    certainty: float
    hypothesis_certainty: float


@dataclass(frozen=True)
class Finding:
    """What was found at repair: a fault id on a component, ``NOTHING_FOUND`` or ``OTHER``."""

    component: str
    fault: str


@dataclass(frozen=True)
class JudgedDiagnosis:
    """A stored diagnosis with the findings recorded against it (none: not judged)."""

    reading_id: str
    firings: tuple[RuleFiring, ...]
    findings: tuple[Finding, ...]

    def confirms(self, fault: str, component: str) -> bool:
        """Whether a finding names this fault on this component."""
        return any(f.fault == fault and f.component == component for f in self.findings)


@dataclass(frozen=True)
class RuleRecord:
    """A rule's record at the site: judged firings, confirmed ones, hit rate and Wilson 95 % interval, and
    the mean certainty of the hypotheses it supported there (what the diagnoses promised; None: not known)."""

    rule_id: str
    n: int
    k: int
    rate: float
    low: float
    high: float
    promised: float | None = None


@dataclass(frozen=True)
class ReliabilityBin:
    """Top hypotheses whose certainty falls in [low, high) (the last bin includes 1)."""

    low: float
    high: float
    count: int
    mean_certainty: float | None
    fraction_confirmed: float | None


@dataclass(frozen=True)
class Reliability:
    """The reliability table of the judged top hypotheses and their Brier score."""

    bins: tuple[ReliabilityBin, ...]
    brier: float | None          # None when no judged diagnosis had a hypothesis
    judged: int                  # judged top hypotheses in the table
    without_hypothesis: int      # judged diagnoses where no rule supported any fault
    missed: int                  # of those, how many had a fault found
    missed_readings: tuple[str, ...] = ()   # their reading ids, sorted


@dataclass(frozen=True)
class WeightChange:
    """A proposed weight for one rule, with the record behind it."""

    rule_id: str
    record: RuleRecord
    loaded_weight: float
    learned_weight: float
    capped: bool


@dataclass(frozen=True)
class Proposal:
    """The learned overlay: weight changes, rules left alone and why, and the overlay's YAML text."""

    changes: tuple[WeightChange, ...]
    too_little: tuple[RuleRecord, ...]           # fewer than least_n judged firings
    unchanged: tuple[RuleRecord, ...]            # the learned weight rounds to the loaded one
    not_learned: tuple[tuple[str, str], ...]     # (rule id, reason): opposing or reading rules
    text: str
    held: tuple[RuleRecord, ...] = ()            # the estimate would move the weight the way the record contradicts


def firings_of(reasoning: Reasoning) -> tuple[RuleFiring, ...]:
    """The firings of a diagnosis as the learning counts them: every rule for or against each machine
    fault hypothesis, with the hypothesis's final certainty. Reading problems are left out (what is
    found at repair does not judge a reading), and a withheld diagnosis gives none: it made no call.
    Sorted, so a stored diagnosis gives one tuple."""
    if reasoning.withheld:
        return ()
    out = [RuleFiring(f.rule_id, h.fault, h.component, f.certainty, h.certainty)
           for h in reasoning.hypotheses if h.family != "reading" and not h.withholds
           for f in h.support + h.against]
    return tuple(sorted(out, key=lambda f: (f.rule_id, f.fault, f.component, f.certainty)))


def wilson_interval(k: int, n: int, z: float = Z_95) -> tuple[float, float]:
    """Wilson score interval of a binomial proportion ``k / n`` (Wilson 1927, JASA 22, 209-212).

    ``(0.0, 1.0)`` when ``n`` is 0: no findings, no knowledge.
    """
    if n < 0 or not 0 <= k <= n:
        raise ValueError(f"need 0 <= k <= n, got k={k}, n={n}")
    if n == 0:
        return 0.0, 1.0
    p = k / n
    z2 = z * z
    centre = (p + z2 / (2 * n)) / (1 + z2 / n)
    half = z / (1 + z2 / n) * math.sqrt(p * (1 - p) / n + z2 / (4 * n * n))
    return max(0.0, centre - half), min(1.0, centre + half)


def _supported(d: JudgedDiagnosis) -> dict[tuple[str, str, str], float]:
    """(rule, fault, component) -> strongest supporting certainty, each counted once per diagnosis."""
    out: dict[tuple[str, str, str], float] = {}
    for f in d.firings:
        if f.certainty > 0:
            key = (f.rule_id, f.fault, f.component)
            out[key] = max(out.get(key, 0.0), f.certainty)
    return out


def rule_records(diagnoses: Iterable[JudgedDiagnosis]) -> tuple[RuleRecord, ...]:
    """Per supporting rule, judged firings ``n``, confirmed ``k``, hit rate and Wilson 95 %, by rule id."""
    n: dict[str, int] = defaultdict(int)
    k: dict[str, int] = defaultdict(int)
    promised: dict[str, list[float]] = defaultdict(list)
    for d in diagnoses:
        if not d.findings:
            continue
        final = _final_certainties(d)
        for rule_id, fault, component in _supported(d):
            n[rule_id] += 1
            k[rule_id] += d.confirms(fault, component)
            promised[rule_id].append(min(1.0, max(0.0, final[(fault, component)])))
    records = []
    for rule_id in sorted(n):
        low, high = wilson_interval(k[rule_id], n[rule_id])
        records.append(RuleRecord(rule_id, n[rule_id], k[rule_id], k[rule_id] / n[rule_id], low, high,
                                  math.fsum(promised[rule_id]) / n[rule_id]))
    return tuple(records)


def _final_certainties(d: JudgedDiagnosis) -> dict[tuple[str, str], float]:
    """(fault, component) -> the hypothesis's final certainty in this diagnosis (one value per hypothesis;
    the largest stored, so the order of firings does not matter)."""
    out: dict[tuple[str, str], float] = {}
    for f in d.firings:
        key = (f.fault, f.component)
        out[key] = max(out.get(key, -1.0), f.hypothesis_certainty)
    return out


def top_hypothesis(d: JudgedDiagnosis) -> tuple[str, str, float] | None:
    """(fault, component, certainty) of the leading hypothesis some rule supports: the highest final
    certainty, ties broken by fault then component; None when no rule supports any."""
    best: dict[tuple[str, str], float] = {}
    for f in d.firings:
        if f.certainty > 0:
            key = (f.fault, f.component)
            best[key] = max(best.get(key, -1.0), f.hypothesis_certainty)   # one value per hypothesis; max: any order
    if not best:
        return None
    (fault, component), c = min(best.items(), key=lambda item: (-item[1], item[0]))
    return fault, component, c


def reliability(diagnoses: Iterable[JudgedDiagnosis], edges: Sequence[float] | None = None) -> Reliability:
    """Reliability table and Brier score (Brier 1950, Mon. Weather Rev. 78, 1-3) of the judged top
    hypotheses. A certainty below 0 counts as 0, above 1 as 1. ``edges`` default: the shipped settings."""
    if edges is None:
        edges = settings().bin_edges
    pairs: list[tuple[float, bool]] = []
    without = 0
    missed: list[str] = []
    for d in diagnoses:
        if not d.findings:
            continue
        top = top_hypothesis(d)
        if top is None:
            without += 1
            if any(f.fault not in (NOTHING_FOUND,) for f in d.findings):
                missed.append(d.reading_id)
            continue
        fault, component, c = top
        pairs.append((min(1.0, max(0.0, c)), d.confirms(fault, component)))
    bins = []
    for i, (low, high) in enumerate(zip(edges[:-1], edges[1:])):
        last = i == len(edges) - 2
        inside = [(c, hit) for c, hit in pairs if low <= c < high or (last and c == high)]
        if inside:
            bins.append(ReliabilityBin(low, high, len(inside), math.fsum(c for c, _ in inside) / len(inside),
                                       sum(hit for _, hit in inside) / len(inside)))
        else:
            bins.append(ReliabilityBin(low, high, 0, None, None))
    brier = math.fsum((c - hit) ** 2 for c, hit in pairs) / len(pairs) if pairs else None   # fsum: any order, same sum
    return Reliability(tuple(bins), brier, len(pairs), without, len(missed), tuple(sorted(missed)))


def contradicts(loaded: float, learned: float, record: RuleRecord) -> bool:
    """Whether the record contradicts moving a weight from ``loaded`` to ``learned``: up while the rule's
    conclusions were confirmed less often than the diagnoses' certainty promised (over-confident), or
    down while they were confirmed more often (under-confident). Unknown promise: no contradiction."""
    if record.promised is None or learned == loaded:
        return False
    return record.rate < record.promised if learned > loaded else record.rate > record.promised


def learned_weight(loaded: float, record: RuleRecord, prior_n: float | None = None,
                   cap: float | None = None, lowest: float | None = None) -> tuple[float, bool]:
    """The posterior mean of the probability that the rule's conclusion is right when it fires, a beta
    prior of mean ``loaded`` worth ``prior_n`` findings updated by ``k`` of ``n``:
    ``(prior_n * loaded + k) / (prior_n + n)``, moved at most ``cap`` from ``loaded``, kept within
    [lowest, 1] and rounded to 0.01; with whether the cap held it back. Whether the record contradicts
    the move is ``contradicts``'s to say. Defaults: the shipped settings."""
    if prior_n is None or cap is None or lowest is None:
        shipped = settings()
        prior_n = shipped.prior_n if prior_n is None else prior_n
        cap = shipped.cap if cap is None else cap
        lowest = shipped.lowest_weight if lowest is None else lowest
    shrunk = (prior_n * loaded + record.n * record.rate) / (prior_n + record.n)
    capped = abs(shrunk - loaded) > cap
    moved = loaded + max(-cap, min(cap, shrunk - loaded))
    return round(min(1.0, max(lowest, moved)), 2), capped


def propose_overlay(diagnoses: Iterable[JudgedDiagnosis], rulebook: Rulebook, prior_n: float | None = None,
                    cap: float | None = None, least_n: int | None = None,
                    name: str = "learned from site findings") -> Proposal:
    """A site overlay of learned weights: each supporting rule's weight moved to the shrunk estimate of
    the probability its conclusion is right when it fires, unless the record contradicts the move.

    ``rulebook`` is what the diagnoses were made with (shipped plus any site overlays); the overlay
    is meant to be loaded after those (``load_rulebook(site, learned)``). A rule the rulebook no
    longer has, an opposing rule, a rule that derives a fact and a rule concluding a reading problem
    are not learned: findings at repair judge machine faults only.
    """
    given = settings(rulebook)          # the rulebook's learning_* parameters, unless stated here
    prior_n = given.prior_n if prior_n is None else prior_n
    cap = given.cap if cap is None else cap
    least_n = given.least_n if least_n is None else least_n
    if prior_n <= 0 or cap <= 0 or least_n < 1:
        raise ValueError("prior_n and cap must be positive and least_n at least 1")
    loaded = {r.id: r for r in rulebook.rules}
    changes, too_little, unchanged, not_learned, held = [], [], [], [], []
    for record in rule_records(diagnoses):
        rule = loaded.get(record.rule_id)
        if rule is None:
            not_learned.append((record.rule_id, "not in the rulebook loaded"))
            continue
        if rule.fault is None or rule.weight <= 0:
            not_learned.append((record.rule_id, "not a supporting rule"))
            continue
        faults = [f for _, f in rule.fault.faults] if not isinstance(rule.fault, str) else [rule.fault]
        if any(rulebook.faults[f].withholds_diagnosis or rulebook.faults[f].family == "reading" for f in faults):
            not_learned.append((record.rule_id, "concludes a reading problem, which repair does not judge"))
            continue
        if rule.weight <= given.lowest_weight:
            # the damage-stage rules and corroboration from another sensor: they grade or nudge a diagnosis
            # other rules make, so a repair's finding does not judge their weight
            not_learned.append((record.rule_id, "a nudge at the lowest weight, not a diagnosis of its own"))
            continue
        if record.n < least_n:
            too_little.append(record)
            continue
        weight, capped = learned_weight(rule.weight, record, prior_n, cap, given.lowest_weight)
        if weight == round(rule.weight, 2):
            unchanged.append(record)
        elif contradicts(round(rule.weight, 2), weight, record):
            held.append(record)
        else:
            changes.append(WeightChange(rule.id, record, rule.weight, weight, capped))
    text = _overlay_text(changes, too_little, unchanged, not_learned, loaded, prior_n, cap, least_n, name, held)
    return Proposal(tuple(changes), tuple(too_little), tuple(unchanged), tuple(not_learned), text, tuple(held))


# why a rule's weight was kept, as a diagnosis says it beside the rule's site record
KEPT_WHY = {"too_little": "too few judged firings to learn from",
            "unchanged": "the learned weight rounds to the loaded one",
            "held": "the record contradicts the move"}


def record_words(record: RuleRecord) -> str:
    """``confirmed k of n (Wilson 95 % a-b)``, as the overlay's sources and comments say it."""
    return f"confirmed {record.k} of {record.n} (Wilson 95 % {record.low:.2f}-{record.high:.2f})"


def _one_line(text: str) -> str:
    """Text from stored diagnoses made safe for a YAML comment line."""
    return " ".join(str(text).split())


def _overlay_text(changes, too_little, unchanged, not_learned, loaded, prior_n, cap, least_n, name,
                  held=()) -> str:
    head = [f"# {_one_line(name)}: proposed, not applied. Review before passing it with --site, after the",
            "# site folders the diagnoses were made with. It carries only what was learned: each entry's weight",
            "# and site record are laid onto the rule as loaded then; an entry whose rule has changed since",
            "# (learned_against) is not applied, and tellwave says so. Each weight is the estimated probability",
            f"# that the rule's conclusion is right when it fires: the loaded weight worth {prior_n:g} findings,",
            f"# updated by the site's record, moved at most {cap:g}. The shipped rulebooks are unchanged.",
            ]
    for title, records in ((f"too little evidence (fewer than {least_n} judged firings)", too_little),
                           ("unchanged (the learned weight rounds to the loaded one)", unchanged),
                           ("held (the record contradicts the move: its conclusions were confirmed "
                            "less often than promised, or more)", held)):
        if records:
            head.append(f"# {title}:")
            head += [f"#   {_one_line(r.rule_id)}: {record_words(r)}" + _promised_words(r) for r in records]
    if not_learned:
        head.append("# not learned:")
        head += [f"#   {_one_line(rule_id)}: {why}" for rule_id, why in not_learned]
    entries = []
    for c in sorted(changes, key=lambda c: c.rule_id):
        rule = loaded[c.rule_id]
        capped = f", move capped at {cap:g}" if c.capped else ""
        source = (f"site findings: {record_words(c.record)}{_promised_words(c.record)}; weight {c.loaded_weight:g} -> "
                  f"{c.learned_weight:g} (prior worth {prior_n:g} findings{capped}), learned against {rule.origin}")
        entries.append({"rule": c.rule_id, "weight": c.learned_weight,
                        "site_record": {"confirmed": c.record.k, "judged": c.record.n},
                        "learned_against": rule.fingerprint, "source": source})
    # the rules whose weight was kept carry their record too, so a diagnosis shows it beside their firings
    kept = [{"rule": r.rule_id, "site_record": {"confirmed": r.k, "judged": r.n},
             "learned_against": loaded[r.rule_id].fingerprint, "why": why}
            for why, records in ((KEPT_WHY["too_little"], too_little), (KEPT_WHY["unchanged"], unchanged),
                                 (KEPT_WHY["held"], held))
            for r in sorted(records, key=lambda r: r.rule_id)]
    body: dict = {"rulebook": name,
                  "about": "Rule weights learned from what was found at repair at this site."}
    if entries:
        body["learned"] = entries
    if kept:
        body["kept"] = kept
    return "\n".join(head) + "\n" + yaml.safe_dump(body, sort_keys=False, allow_unicode=True, width=100)


def _promised_words(record: RuleRecord) -> str:
    """``, promised 70 %``: the mean certainty the diagnoses gave its conclusions, when known."""
    return "" if record.promised is None else f", promised {100 * record.promised:.0f} %"
