"""Trend facts for the rulebooks: the trend document of a point turned into ``trend`` facts.

The caller passes them to reasoning with the evidence facts, so a rule may
use a change since baseline, a rate per month or a projected time.
"""

from __future__ import annotations

NO_PROJECTION_DAYS = -1.0


def trend_facts(doc: dict) -> list[dict]:
    """One ``trend`` fact per point and indicator of a trend document (vocabulary kind ``trend``)."""
    facts: list[dict] = []
    for p in doc["points"]:
        iso = p.get("iso_change") or {}
        projected = {x["indicator"]: x for x in p["projections"]}
        for ind in p["indicators"]:
            proj = projected.get(ind["name"])
            facts.append({
                "kind": "trend", "id": f"trend-{len(facts) + 1}",
                "point": p["point"], "direction": p["direction"] or "", "indicator": ind["name"],
                "readings": ind["readings"], "baseline": ind["baseline"] or 0.0, "latest": ind["latest"] or 0.0,
                "change_pct": ind["change_pct"] if ind["change_pct"] is not None else 0.0,
                "rate_per_month": ind["rate_per_month"] if ind["rate_per_month"] is not None else 0.0,
                "iso_change_significant": bool(iso.get("significant")) if ind["name"] == "velocity_rms_mm_s" else False,
                "projected_days": proj["days"] if proj and proj["projected"] else NO_PROJECTION_DAYS,
                "projection_to": proj["limit_label"] if proj else "",
            })
    return facts
