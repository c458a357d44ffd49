"""``tellwave learn``: what a store's findings at repair say about the rules, as one plain document.

``learning_document(store_path, site, machines)`` reads the judged readings of a history store (those
with a finding) and the rule firings stored with each (store schema 6), loads the rulebooks the way
``diagnose --site`` does (shipped plus the site overlays, in order) so that the overlay is proposed
against what the diagnoses were made with, and returns one plain dict: the per-rule table (judged
firings n, confirmed k, hit rate, Wilson 95 %), the reliability table and Brier score of the judged top
hypotheses, the proposal (changes, too little evidence, unchanged, not learned) and the overlay's YAML
text. The statistics are ``engine.reasoning.learning``'s; the settings are the rulebook's ``learning_*``
parameters. Nothing is written: the caller decides where the overlay goes.

``engine/common/schemas/learning.schema.json`` documents the document.
"""

from __future__ import annotations

from collections.abc import Iterable
from pathlib import Path


def learning_document(store_path, site: Iterable = (), machines: Iterable[str] | None = None, *,
                      diagram: bool = False, made_at: str | None = None) -> dict:
    """The learning report of the store at ``store_path`` (which must exist) for ``machines`` (names;
    None or empty: every machine), with the rulebooks laid over by ``site`` (folders or files, as
    ``--site``; an overlay learned before, whose rules carry ``site_record``, is refused: its weights
already count the findings). ``diagram``: add the reliability diagram as SVG (for HTML). ``made_at``: the report's
    time (ISO 8601), None for now. A machine the store does not hold is a UsageError (exit 2)."""
    from .. import __version__
    from ..common.errors import UsageError
    from ..history.store import Store
    from ..reasoning import load_rulebook
    from ..reasoning.learning import (
        Finding,
        JudgedDiagnosis,
        RuleFiring,
        propose_overlay,
        reliability,
        rule_records,
        settings,
    )

    site = tuple(site or ())
    wanted = sorted(set(machines or ()))
    rulebook = load_rulebook(*site)
    learned = next((r for r in rulebook.rules if r.site_record is not None), None)
    if learned is not None:
        raise UsageError(f"holds an overlay learned before (rule {learned.id} carries site_record): learn against "
                         "the rulebooks without it, since its weights already count these findings (which rules fire "
                         "hardly depends on the weights); the new overlay replaces it",
                         path=str(learned.learned_by or learned.path))
    given = settings(rulebook)
    with Store(store_path, create=False) as store:
        known = store.machines()
        unknown = [m for m in wanted if m not in known]
        if unknown:
            raise UsageError(f"no stored reading of {unknown[0]!r}; machines stored: {', '.join(known) or 'none'}",
                             path=str(store.path))
        findings = [f for f in store.findings() if not wanted or f["machine"] in wanted]
        rows = store.judged(wanted or None)
        path = str(store.path)
    before = [r for r in rows if not r["firings_kept"]]
    diagnoses = [JudgedDiagnosis(str(r["id"]), tuple(RuleFiring(**f) for f in r["firings"]),
                                 tuple(Finding(**f) for f in r["findings"])) for r in rows if r["firings_kept"]]
    records = rule_records(diagnoses)
    by_id = {str(r["id"]): r for r in rows}
    table = reliability(diagnoses, given.bin_edges)
    proposal = propose_overlay(diagnoses, rulebook)
    loaded = {r.id: r for r in rulebook.rules}
    outcome: dict[str, dict] = {}
    for c in proposal.changes:
        outcome[c.rule_id] = {"outcome": "changed", "learned_weight": c.learned_weight, "capped": c.capped}
    for r in proposal.too_little:
        outcome[r.rule_id] = {"outcome": "too little evidence"}
    for r in proposal.unchanged:
        outcome[r.rule_id] = {"outcome": "unchanged"}
    for r in proposal.held:
        outcome[r.rule_id] = {"outcome": "held", "why": (
            f"confirmed {r.k} of {r.n} while its diagnoses promised {100 * (r.promised or 0):.0f} %: the record "
            "contradicts the move the estimate would make")}
    for rule_id, why in proposal.not_learned:
        outcome[rule_id] = {"outcome": "not learned", "why": why}
    rules = []
    for r in records:
        rule = loaded.get(r.rule_id)
        row = {"rule": r.rule_id, "n": r.n, "k": r.k, "rate": round(r.rate, 4), "low": round(r.low, 4),
               "high": round(r.high, 4), "promised": None if r.promised is None else round(r.promised, 4),
               "weight": None if rule is None else round(rule.weight, 4),
               "learned_weight": None, "capped": False, "why": None}
        row.update(outcome.get(r.rule_id, {"outcome": "not learned", "why": "no judgement made"}))
        rules.append(row)
    bins = [{"low": round(b.low, 4), "high": round(b.high, 4), "count": b.count,
             "mean_certainty": None if b.mean_certainty is None else round(b.mean_certainty, 4),
             "fraction_confirmed": None if b.fraction_confirmed is None else round(b.fraction_confirmed, 4)}
            for b in table.bins]
    doc = {
        "tellwave": __version__,
        "made_at": made_at or _now(),
        "store": path,
        "site": [str(Path(p)) for p in site],
        "rulebooks": list(rulebook.files),
        "machines": wanted or sorted({f["machine"] for f in findings}),
        "findings": len(findings),
        "judged_readings": len(rows),
        "counted_readings": len(diagnoses),
        "stored_before_firings": len(before),
        "settings": {"prior_findings": given.prior_n, "move_cap": given.cap, "least_findings": given.least_n,
                     "lowest_weight": given.lowest_weight, "bin_width": given.bin_width},
        "rules": rules,
        "reliability": {"bins": bins, "brier": None if table.brier is None else round(table.brier, 4),
                        "judged": table.judged, "without_hypothesis": table.without_hypothesis,
                        "missed": table.missed,
                        "missed_readings": [_reading_words(by_id[i]) for i in table.missed_readings]},
        "not_in_rulebook": sorted(rule_id for rule_id, why in proposal.not_learned
                                  if why == "not in the rulebook loaded"),
        "proposal": {
            "changes": [{"rule": c.rule_id, "n": c.record.n, "k": c.record.k, "loaded_weight": c.loaded_weight,
                         "learned_weight": c.learned_weight, "capped": c.capped} for c in proposal.changes],
            "too_little": [r.rule_id for r in proposal.too_little],
            "unchanged": [r.rule_id for r in proposal.unchanged],
            "held": [r.rule_id for r in proposal.held],
            "not_learned": [{"rule": rule_id, "why": why} for rule_id, why in proposal.not_learned]},
        "overlay": proposal.text,
    }
    if diagram:
        from ..report.reliability import reliability_diagram

        doc["diagram_svg"] = reliability_diagram(table)
    return doc


def _reading_words(row: dict) -> str:
    """``reading 12 of RW-2 taken 2026-05-01T08:00``: a stored reading as ``tellwave findings`` names it."""
    taken = f" taken {row['taken_at']}" if row.get("taken_at") else ""
    return f"reading {row['id']} of {row['machine']}{taken}"


def _now() -> str:
    from datetime import datetime

    return datetime.now().astimezone().isoformat(timespec="minutes")
