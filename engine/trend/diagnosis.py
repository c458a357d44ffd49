"""A single diagnosis with its machine's history: trend facts for reasoning, a trend section for
the report, and the reading stored afterwards (``tellwave diagnose --store``).

The history before this reading plus this reading's own indicators make the
trend; its ``trend`` facts go to reasoning with the evidence facts, and its
document (with the plot of each point when asked) goes into the report under
``trend``, which the templates show only when present. Findings recorded before this
reading's day show there too, and a repair resets the baseline of the points that see
its component (``repairs``).
"""

from __future__ import annotations

import copy
from collections import defaultdict

from ..history.record import indicators_of, is_level
from .facts import trend_facts
from .repairs import repairs_of
from .report import fault_calls, fault_names, governing, trend_from_rows
from .shown import trend_in_units


class HistoryLink:
    """Called by ``pipeline.diagnose`` with the evidence facts (its ``more_facts``). ``units``: the units the
    report shows (``ShownUnits``; None: Hz and mm/s RMS): the plots are drawn in them, the numbers of ``doc``
    stay in Hz and mm/s RMS for the reasoning, and ``shown_in`` converts a copy."""

    def __init__(self, store, machine, scale, *, content_hash: str, taken_at: str, plots: bool,
                 exclude_route: int | None = None, recording_hash: str | None = None, units=None):
        self.store, self.machine, self.scale, self.units = store, machine, scale, units
        self.content_hash, self.taken_at, self.plots = content_hash, taken_at, plots
        self.recording_hash = recording_hash or content_hash     # the same files diagnosed before are not history
        self.exclude_route = exclude_route      # a route trends against earlier surveys only
        self.doc: dict | None = None

    def __call__(self, facts: list[dict], alarms=()) -> list[dict]:
        same = {r["id"] for r in self.store.readings(self.machine.name)
                if self.content_hash in (r["content_hash"], r.get("recording_hash"))
                or self.recording_hash == r.get("recording_hash")}
        rows = [r for r in self.store.history(self.machine.name)
                if r["id"] not in same and (self.exclude_route is None or r["route_id"] != self.exclude_route)]
        channels, values = indicators_of(facts)
        here = {c["point"] or c["channel"] for c in channels}
        earlier = [r for r in rows if (r["point"] or r["channel"]) in here and r["taken_at"] < self.taken_at]
        if not earlier:
            return []
        # a point whose scale is not trusted in this reading has no level now: its level trends would end
        # at an older reading and read as this one's, so only its scale-free indicators are trended
        doubted = {c["point"] or c["channel"] for c in channels if not c["scale_trusted"]}
        earlier = [r if (r["point"] or r["channel"]) not in doubted else
                   {**r, "indicators": {k: v for k, v in r["indicators"].items() if not is_level(k)}}
                   for r in earlier]
        now = [{"id": -1, "taken_at": self.taken_at, "speed_rpm": None, "channel": c["channel"], "point": c["point"],
                "direction": c["direction"], "location": c["location"], "zone": None,
                "indicators": {v["name"]: v["value"] for v in values if v["channel"] == c["channel"]}}
               for c in channels]
        # the site's band values of this reading (stored beside it too, engine.history.record), and each
        # alarm's danger level as a limit its indicator is projected to at its point (trend_from_rows)
        for r in now:
            for a in alarms:
                if a["channel"] == r["channel"] and a["value"] is not None:
                    r["indicators"].setdefault(a["indicator"], float(a["value"]))
        alarm_rows = list({(a["point"], a["band"], a["quantity"]): {
            **{k: a[k] for k in ("point", "band", "unit", "indicator", "alert", "danger", "source", "set_at")},
            "judged": "as judged on this reading"} for a in alarms}.values())
        # a trend ends at this reading: an indicator it does not have (a site band, judged after the
        # reasoning; a tone not found this time) would end at an older reading and read as this one's
        have: defaultdict[str, set] = defaultdict(set)
        for r in now:
            have[r["point"] or r["channel"]] |= set(r["indicators"])
        earlier = [{**r, "indicators": {k: v for k, v in r["indicators"].items()
                                        if k in have[r["point"] or r["channel"]]}} for r in earlier]
        found = [f for f in self.store.findings(self.machine.name) if f["found_on"] < self.taken_at[:10]]
        repairs = repairs_of(found, {}, fault_names() if found else {}, machine=self.machine)
        # the earlier readings diagnosed faulty at a confident certainty are not healthy baseline
        calls = fault_calls(self.store, self.machine.name, self.machine)
        doc = trend_from_rows(self.machine.name, earlier + now, self.scale, plots=self.plots, repairs=repairs,
                              plot_units=self.units, alarms=alarm_rows, calls=calls, pool=False, govern=False)
        doc["points"] = [p for p in doc["points"] if p["point"] in here]
        self.doc = doc
        return trend_facts(doc)

    def govern(self, urgency: dict | None, raises: dict[str, list[dict]] | None = None) -> None:
        """Say at each point whether this diagnosis's urgency (``verdict.urgency``: id, label, within), or what the
        rules on the trend said about how soon to act there in this diagnosis (``raises``: ``acting.raises_of``
        its reasoning; None: none said), governs over a velocity projection (``report.governing``); the trend was
        made before the diagnosis had an urgency."""
        for p in (self.doc or {}).get("points", []):
            p["governs"] = governing(p, urgency, raises=(raises or {}).get(p["point"], []))

    def shown_in(self, units) -> dict | None:
        """The trend section in ``units`` (``ShownUnits``, those the link was made with) for the report: a
        copy of the one trend (``doc``, in Hz and mm/s RMS, the reasoning's facts came from) converted, its
        plots already drawn in them."""
        if self.doc is None or units is None or units.default:
            return self.doc
        if units != self.units:
            raise ValueError(f"the trend's plots are drawn in {self.units}, not {units}")
        return trend_in_units(copy.deepcopy(self.doc), units)
