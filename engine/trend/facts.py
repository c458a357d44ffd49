"""Trend facts for the rulebooks: the trend document of a point turned into ``trend`` facts.

The caller passes them to reasoning with the evidence facts, so a rule may
use a change since baseline, a rate per month or a projected time.
"""

from __future__ import annotations

NO_PROJECTION_DAYS = -1.0
ZONE_BOUNDARY = "zone boundary "     # how engine.trend.report labels a projection to an ISO 20816-3 boundary


def _boundary(label: str) -> str:
    """What a projection runs to: an ISO 20816-3 boundary ("A/B", "B/C", "C/D") or "limit" (a user's or alarm's)."""
    return label[len(ZONE_BOUNDARY):].split(" ")[0] if label.startswith(ZONE_BOUNDARY) else "limit"


def _weight(x: dict) -> tuple:
    """Sort key of a projection: projected first (a limit already reached after them: the alarms say so), to a
    limit or C/D before A/B and B/C, then the soonest."""
    soon = x["low_days"] if x["low_days"] is not None else x["days"]
    return (not x["projected"] or x["method"] == "reached", _boundary(x["limit_label"]) in ("A/B", "B/C"),
            soon if soon is not None else 0.0)


def _velocity(indicator: str) -> bool:
    """Whether ``indicator`` is a velocity (its values in mm/s RMS: a report in other units shows them otherwise)."""
    return indicator.endswith("_mm_s")


def _broadband(indicator: str) -> bool:
    """Whether ``indicator`` is a broadband velocity: the overall, or a site's velocity band (not one line)."""
    return indicator == "velocity_rms_mm_s" or (indicator.startswith("band[") and indicator.endswith("]_mm_s"))


def _words(label: str, indicator: str) -> str:
    """An indicator's name for a sentence: a velocity's without its unit ("velocity", "band 1X"), whose values a
    report shows in the chosen units; any other's as reports name it ("acceleration RMS, g")."""
    return label.removesuffix(", mm/s RMS") if _velocity(indicator) else label


def _target_words(label: str, indicator: str) -> str:
    """What a projection runs to, for a sentence: a velocity's target without its level in mm/s ("zone boundary
    C/D", "alarm danger level overall", "limit velocity_rms_mm_s"; the trend section shows the level in the
    chosen units), any other's whole ("alarm danger level 2000-6000 Hz = 0.2 g RMS")."""
    if not _velocity(indicator) or not label:
        return label
    return label.split(" (")[0] if label.startswith(ZONE_BOUNDARY) else label.split(" = ")[0]


def _days(proj: dict | None, key: str) -> float:
    """A projection's ``key`` (days, low_days, high_days), or NO_PROJECTION_DAYS when it is not projected or open."""
    value = proj.get(key) if proj and proj["projected"] else None
    return NO_PROJECTION_DAYS if value is None else value


def trend_facts(doc: dict) -> list[dict]:
    """One ``trend`` fact per point and indicator of a trend document (vocabulary kind ``trend``)."""
    facts: list[dict] = []
    for p in doc["points"]:
        iso = p.get("iso_change") or {}
        # per indicator the projection that matters most: a projected one to a limit or to C/D, the soonest
        projected: dict[str, dict] = {}
        for x in sorted(p["projections"], key=_weight):
            projected.setdefault(x["indicator"], x)
        # per indicator the rise test's fold (``onset._risen``: its projection could not be fitted, or was)
        risen: dict[str, float] = {}
        for x in p["projections"]:
            if x.get("risen_fold") is not None:
                risen[x["indicator"]] = max(risen.get(x["indicator"], 0.0), float(x["risen_fold"]))
        for ind in p["indicators"]:
            proj = projected.get(ind["name"])
            fold = max(risen.get(ind["name"], 0.0), float(ind.get("risen_fold") or 0.0))
            facts.append({
                "kind": "trend", "id": f"trend-{len(facts) + 1}",
                "point": p["point"], "direction": p["direction"] or "", "indicator": ind["name"],
                "indicator_name": ind["label"],
                "readings": ind["readings"], "baseline": ind["baseline"] or 0.0, "latest": ind["latest"] or 0.0,
                "change_pct": ind["change_pct"] if ind["change_pct"] is not None else 0.0,
                "rate_per_month": ind["rate_per_month"] if ind["rate_per_month"] is not None else 0.0,
                "iso_change_significant": bool(iso.get("significant")) if ind["name"] == "velocity_rms_mm_s" else False,
                "projected_days": _days(proj, "days"),
                "projected_low_days": _days(proj, "low_days"),
                "projected_high_days": _days(proj, "high_days"),
                # a projection counts only from a start of degradation the trend found, on readings since it
                "degradation_began": bool(proj and proj["projected"] and proj.get("onset")),
                "readings_since_onset": (proj.get("readings_since_onset") or 0) if proj and proj["projected"] else 0,
                "projected_act_by_days": _days(proj, "act_by_days"),
                # the rise test of rulebooks/trend/onset.yaml, on the projection's health indicator or on the
                # level itself against its baseline (report._risen_fold): degradation under way
                "degradation_under_way": fold > 0,
                "risen_fold": fold,
                "change_db": ind["change_db"] if ind.get("change_db") is not None else 0.0,
                "projection_to": proj["limit_label"] if proj else "",
                "projection_boundary": _boundary(proj["limit_label"]) if proj else "",
                # a broadband velocity's values as numbers in mm/s RMS, which a report words in the chosen units
                # (0 for other indicators), and names without a velocity in them, for the sentences
                "baseline_mm_s": (ind["baseline"] or 0.0) if _broadband(ind["name"]) else 0.0,
                "latest_mm_s": (ind["latest"] or 0.0) if _broadband(ind["name"]) else 0.0,
                "indicator_words": _words(ind["label"], ind["name"]),
                "projection_words": _target_words(proj["limit_label"], ind["name"]) if proj else "",
            })
    return facts
