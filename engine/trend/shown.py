"""A trend document in the units a user chose (``engine.common.units.ShownUnits``): the velocity
indicators' numbers and labels, the ISO 20816-3 boundaries and the velocity change. The store and
the fields named ``_mm_s`` keep mm/s RMS; ``units`` in the document says what is shown.

A line (1X, 2X) in peak is sqrt(2) x its RMS (a sine); the overall velocity is broadband and stays
RMS, changing only its length unit (mm/s or in/s).
"""

from __future__ import annotations

import re

from ..common.units import ShownUnits

LINES = {"x1_mm_s", "x2_mm_s"}               # one spectral line each: peak = sqrt(2) x RMS applies
BROADBAND = {"velocity_rms_mm_s"}            # the ISO 20816-3 overall: stays RMS (as a site band's level does)


def _site_band(name: str) -> str | None:
    """A site alarm band's velocity indicator (``band[1X]_mm_s``: the band's level, broadband, mm/s RMS)
    -> its band as the alarm states it; None for any other indicator."""
    return name[:-len("_mm_s")] if name.startswith("band[") and name.endswith("]_mm_s") else None


_MM_S = re.compile(r"(\d+(?:\.\d*)?(?:e[-+]?\d+)?) mm/s RMS")


def velocity_words(text: str, units: ShownUnits) -> str:
    """``text`` with every broadband velocity in mm/s RMS ("= 4.5 mm/s RMS", "velocity, mm/s RMS") in ``units``
    (an alarm's level, a band's name); as it is in the default units."""
    if units.default:
        return text
    text = _MM_S.sub(lambda m: units.velocity_text(float(m.group(1)), line=False), text)
    return text.replace("mm/s RMS", units.velocity_label(False))


def boundary_label(label: str, limit_mm_s: float, units: ShownUnits, line: bool = False) -> str:
    """A projection's target worded in ``units``: "zone boundary A/B (1.4 mm/s)" becomes
    "zone boundary A/B (0.0551 in/s RMS)"; other targets (a limit the user set on a named indicator) as they are."""
    if units.default or not label.startswith("zone boundary"):
        return label
    return label.replace(f"({limit_mm_s:g} mm/s)", f"({units.velocity_text(limit_mm_s, line=line)})")


def trend_in_units(doc: dict, units: ShownUnits) -> dict:
    """``doc`` (``trend_document``) with ``units`` added, and, when they are not Hz and mm/s RMS, its
    velocity numbers shown in them (changed in place; returned)."""
    if doc.get("units", {}).get("frequency", "hz") != "hz" or doc.get("units", {}).get("velocity",
                                                                                       "mm/s-rms") != "mm/s-rms":
        raise ValueError("the trend document is already shown in other units")
    scale = doc["zone_scale"]
    bounds = (scale["ab_mm_s"], scale["bc_mm_s"], scale["cd_mm_s"])
    length = units.velocity_label(False).split(" ")[0]
    doc["units"] = units.as_dict() | {"zone_boundaries": units.zone_boundaries(*bounds),
                                      "zone_boundaries_text": units.zone_boundaries_text(*bounds)}
    for p in doc["points"]:
        iso = p.get("iso_change")
        if iso is not None:
            def text(v, sign=""):
                return units.velocity_text(v, line=False).split(" ")[0] if not sign else \
                    ("+" if v >= 0 else "-") + units.velocity_text(abs(v), line=False).split(" ")[0]
            iso["shown"] = ({"baseline": f"{iso['baseline_mm_s']}", "latest": f"{iso['latest_mm_s']}",
                             "change": f"{iso['change_mm_s']:+.2f}", "criterion": f"{iso['criterion_mm_s']}"}
                            if length == "mm/s" else
                            {"baseline": text(iso["baseline_mm_s"]), "latest": text(iso["latest_mm_s"]),
                             "change": text(iso["change_mm_s"], "+"), "criterion": text(iso["criterion_mm_s"])})
        if units.default:
            continue
        for i in p["indicators"]:
            band = _site_band(i["name"])
            if i["name"] not in LINES | BROADBAND and not band:
                continue
            line = i["name"] in LINES
            factor = units.velocity_value(1.0, line=line)      # linear: every value and difference scales alike
            for key in ("baseline", "latest", "change", "rate_per_month", "last_before_repair"):
                if i.get(key) is not None:
                    i[key] = i[key] * factor
            i["label"] = (velocity_words(i["label"], units) if band
                          else i["label"].replace("mm/s RMS", units.velocity_label(line)))
            i["unit"] = units.velocity_label(line)
        for x in p["projections"]:
            if x["indicator"] not in LINES | BROADBAND and not _site_band(x["indicator"]):
                continue
            line = x["indicator"] in LINES
            x["label"] = x["label"].replace("mm/s RMS", units.velocity_label(line))
            x["limit_label"] = velocity_words(boundary_label(x["limit_label"], x["limit"], units, line), units)
        if p.get("governs"):                # the projection it names, in the shown units
            x = p["projections"][p["governs"]["projection"]]
            p["governs"]["label"], p["governs"]["limit_label"] = x["label"], x["limit_label"]
        for a in p.get("alarms", []):       # a velocity alarm's levels and values (stored in mm/s RMS)
            if a["unit"] != "mm/s RMS":
                continue
            k = units.velocity_value(1.0, line=False)
            for key in ("alert", "danger", "latest"):
                a[key] = a[key] * k
            for r in a["passed"]:
                r["value"] = r["value"] * k
            a["unit"], a["label"] = units.velocity_label(False), velocity_words(a["label"], units)
    return doc
