"""The route summary: one plain dict for every format, worst machines first.

Machines are ranked by urgency (most urgent first), then by ISO 20816-3
zone (D first), then by the certainty of their top finding. Each carries its
top finding, the change of its overall velocity and acceleration RMS since
the last survey before this route (from the history store) at the point that
sees the top finding's component, or else at the point that changed most, and links to
its readings' reports and to its trend page. The summary reads the store, so skipped readings (already stored
by an earlier run) appear exactly as freshly diagnosed ones.
"""

from __future__ import annotations

import os
from datetime import UTC, datetime
from pathlib import Path

import numpy as np

from .. import __version__
from ..common.units import ShownUnits
from ..history.store import Store
from .runner import RouteOutcome, trend_paths

ZONE_ORDER = {"D": 0, "C": 1, "B": 2, "A": 3, None: 4}


def _urgencies() -> dict[str, tuple[int, str]]:
    from ..advice import load_advice

    return {u["id"]: (i, u["label"]) for i, u in enumerate(load_advice()["urgency"])}


def _levels_by_point(rows: list[dict]) -> dict[str, tuple[str, float, int, float | None]]:
    """point -> (time, velocity RMS mm/s, reading id, acceleration RMS g or None) of the latest row of each point."""
    out = {}
    for r in rows:
        v = r["indicators"].get("velocity_rms_mm_s")
        if v is not None:
            out[r["point"] or r["channel"]] = (r["taken_at"], v, r["id"], r["indicators"].get("accel_rms_g"))
    return out


def _pct_change(then: float, now: float) -> float | None:
    """The change from ``then`` to ``now`` in percent of ``then``, one decimal (None from zero)."""
    return round(100.0 * (now - then) / then, 1) if then > 0 else None


def _repairs_between(store: Store, machine: str, since: str, until: str) -> list[dict]:
    """The repairs of ``machine`` (``trend.repairs.repairs_of``: findings with a fault found) between the reading
    of ``since`` and the one of ``until`` (ISO times), once per day, component and fault: found_on, component,
    fault, fault_name. The reading of ``since`` is before the repair and the one of ``until`` after it
    (``Repair.is_after``: a reading taken on the day found is the as-found condition)."""
    from ..trend.repairs import repairs_of
    from ..trend.report import fault_names

    found = store.findings(machine)
    out: dict[tuple, dict] = {}
    for r in repairs_of(found, {}, fault_names() if found else {}):
        if r.resets and not r.is_after(since) and r.is_after(until):
            out.setdefault((r.found_on, r.component, r.fault), {"found_on": r.found_on, "component": r.component,
                                                               "fault": r.fault, "fault_name": r.fault_name})
    return list(out.values())


def _points_of_top(machine_file: str | None, component: str | None) -> tuple[str, ...] | None:
    """The points that see the top finding's component, from the machine file (None: not known)."""
    from ..common.errors import TellwaveError
    from ..machine import load_machine
    from ..trend.repairs import points_seeing

    if not machine_file or not component:
        return None
    try:
        return points_seeing(load_machine(machine_file), component)
    except TellwaveError:
        return None


def _change(store: Store, machine: str, reading_ids: set[int], top_points: tuple[str, ...] | None = None
            ) -> dict | None:
    """The change of overall velocity and acceleration RMS since the last survey before this route, at the point
    that sees the top finding's component (``top_points``; the one of them that changed most), else at the point
    whose velocity or acceleration changed most in relative terms (a faulty point's rise, not a large point's
    scatter)."""
    rows = store.history(machine)
    now_rows = [r for r in rows if r["id"] in reading_ids]
    if not now_rows:
        return None
    first_now = min(r["taken_at"] for r in now_rows)
    before = [r for r in rows if r["id"] not in reading_ids and r["taken_at"] < first_now]
    if not before:
        return None
    then, now = _levels_by_point(before), _levels_by_point(now_rows)
    items: list[dict] = []
    for point, (_t_now, v_now, _id_now, a_now) in now.items():
        if point in then:
            t_then, v_then, _id_then, a_then = then[point]
            item = {"point": point, "since": t_then, "then_mm_s": round(v_then, 3), "now_mm_s": round(v_now, 3),
                    "change_pct": _pct_change(v_then, v_now), "accel_then_g": None, "accel_now_g": None,
                    "accel_change_pct": None}
            if a_then is not None and a_now is not None:
                item.update(accel_then_g=round(a_then, 4), accel_now_g=round(a_now, 4),
                            accel_change_pct=_pct_change(a_then, a_now))
            items.append(item)
    if not items:
        return None
    seeing = [x for x in items if top_points and x["point"] in top_points]

    def size(x):          # a relative change (the ratio's log), so a low-level faulty point is not outranked;
        # velocity or acceleration, whichever moved more: a bearing's damage raises acceleration long before velocity
        ratios = [(x["now_mm_s"], x["then_mm_s"])] + ([(x["accel_now_g"], x["accel_then_g"])]
                                                       if x["accel_now_g"] is not None else [])
        return max(abs(np.log(max(a, 1e-9) / max(b, 1e-9))) for a, b in ratios)
    best = max(seeing or items, key=size)
    best["chosen"] = ("the point at the top finding's component" if seeing
                      else "the point whose velocity or acceleration changed most")
    best["top_then"] = None
    top = store.top_hypothesis(int(then[best["point"]][2]))  # the point's own earlier reading, not the survey's last
    if top is not None:
        best["top_then"] = f"{top['fault_name']} on {top['component']} ({_pct(top['certainty'])} %)"
    best["repairs"] = _repairs_between(store, machine, str(best["since"]), first_now)
    return best


def _machine_alarms(machine_file: str | None, alarm_files) -> list[dict]:
    """The site alarms of the machine of ``machine_file`` with ``alarm_files`` laid over, as the store keeps
    them (none if it cannot load): for readings stored before their alarms were kept with them."""
    from ..common.errors import TellwaveError
    from ..machine import load_machine
    from ..machine.alarms import with_site_alarms

    if not machine_file:
        return []
    try:
        alarms = with_site_alarms(load_machine(machine_file), alarm_files).alarms
    except TellwaveError:
        return []
    return [{"point": a.point, "band": a.band, "unit": a.unit, "indicator": a.indicator, "alert": a.alert,
             "danger": a.danger} for a in alarms]


def _crossed(alarms: list[dict], rows: list[dict]) -> list[dict]:
    """The alarms a stored reading crossed, from its stored indicators (``rows``: its ``Store.history``
    rows, one per channel), danger first."""
    from ..alarms import state_of

    out = []
    for r in rows:
        for a in alarms:
            value = r["indicators"].get(a["indicator"])
            state = state_of(value, a["alert"], a["danger"]) if a["point"] == r["point"] else None
            if state in ("alert", "danger"):
                out.append({"point": a["point"], "band": a["band"], "unit": a["unit"], "value": round(value, 4),
                            "alert": a["alert"], "danger": a["danger"], "state": state})
    return sorted(out, key=lambda x: (x["state"] != "danger", x["point"], x["band"]))


def machine_governs(trend: dict | None) -> dict | None:
    """Which time governs a machine in the route summary: the soonest of its points' ``governs`` (the trend's own
    answer, ``trend.report.governing``: the diagnosis or a rule on the trend opening a window before a velocity
    projection's crossing; the diagnosis first at a tie), with its point; None when no point has one."""
    found = [{**p["governs"], "point": p["point"]} for p in (trend or {}).get("points", []) if p.get("governs")]
    return min(found, key=lambda g: (g["opens_days"], g["by"] != "diagnosis", g["days"]), default=None)


def route_summary(outcome: RouteOutcome, store: Store, out_dir, alarms=(), units: ShownUnits | None = None,
                  trends: dict[str, dict] | None = None) -> dict:
    """The summary document of a finished (or resumed) route. A reading is flagged by the alarms its stored
    diagnosis judged it by (kept with it in the store); one stored before they were kept, by ``alarms``,
    the route's site alarm files laid over its machine file's alarms as they are now; ``units``: what the
    velocity change shows (a broadband level: RMS, in mm/s or in/s; the ``_mm_s`` fields keep mm/s).
    ``trends``: machine -> its trend document (``trend.trend_document``, the one its trend page shows, in
    ``units``): each machine says which time governs (``machine_governs``; None without one)."""
    units = units or ShownUnits()
    out_dir = Path(out_dir).resolve()
    pages = trend_paths(outcome.route, out_dir)
    urgencies = _urgencies()
    rows, listed = [], set()
    for t in outcome.route.tasks:
        got = store.reading_id_of(outcome.hashes[t.index])
        if got is not None and got not in listed:     # a reading listed twice the same way shows once
            listed.add(got)
            row = store.reading(got)
            assert row is not None      # its id was just read from the readings
            rows.append((t, row))
    machines: dict[str, dict] = {}
    limits: dict[str, list[dict]] = {}
    stored: dict[str, dict[int, list[dict]]] = {}
    for task, r in rows:
        tops = store.top_hypothesis(r["id"])
        kept = store.channels_of(r["id"])
        points = [c["point"] for c in kept]
        # points whose scale (unit, sensitivity, gain) was not trusted: no level, no zone, severity unknown
        unscaled = [c["point"] or c["channel"] for c in kept if c["scale_trusted"] == 0]
        judged = store.reading_alarms(r["id"])
        if judged is None and r["machine"] not in limits:
            limits[r["machine"]] = _machine_alarms(r["machine_file"], alarms)
        judged = limits[r["machine"]] if judged is None else judged
        if judged and r["machine"] not in stored:
            stored[r["machine"]] = {}
            for h in store.history(r["machine"]):
                stored[r["machine"]].setdefault(h["id"], []).append(h)
        crossed = _crossed(judged, stored.get(r["machine"], {}).get(r["id"], []))
        rank, label = urgencies.get(r["urgency"], (len(urgencies), r["urgency"]))
        report = r["report"]
        link = os.path.relpath(report, out_dir) if report else None
        item = {"file": Path(task.files[0]).name, "taken_at": r["taken_at"], "time_from": r["time_from"],
                "points": [p for p in points if p], "urgency": {"id": r["urgency"], "label": label, "rank": rank},
                "zone": r["worst_zone"], "summary": r["summary"], "withheld": bool(r["withheld"]),
                "certainty_pct": _pct(tops["certainty"]) if tops else 0, "report": link,
                "skipped": task.index in outcome.skipped, "_id": r["id"], "scale_not_trusted": unscaled,
                "alarms": crossed,
                "top": None if tops is None else {"fault": tops["fault"], "fault_name": tops["fault_name"],
                                                  "component": tops["component"],
                                                  "certainty_pct": _pct(tops["certainty"])}}
        machines.setdefault(r["machine"], {"machine": r["machine"], "readings": [],
                                           "_machine_file": r["machine_file"]})["readings"].append(item)
    ranked = []
    for m in machines.values():
        m["readings"].sort(key=lambda x: (x["urgency"]["rank"], ZONE_ORDER.get(x["zone"], 4), -x["certainty_pct"]))
        worst = m["readings"][0]
        m["urgency"] = worst["urgency"]
        m["zone"] = min((x["zone"] for x in m["readings"]), key=lambda z: ZONE_ORDER.get(z, 4))
        m["top"] = worst["top"]
        m["summary"] = worst["summary"]
        m["certainty_pct"] = worst["certainty_pct"]
        m["scale_not_trusted"] = sorted({p for x in m["readings"] for p in x["scale_not_trusted"]})
        m["alarms_crossed"] = sum(len(x["alarms"]) for x in m["readings"])
        m["alarm_state"] = ("danger" if any(a["state"] == "danger" for x in m["readings"] for a in x["alarms"])
                            else "alert" if m["alarms_crossed"] else None)
        top_points = _points_of_top(m.pop("_machine_file"), (m["top"] or {}).get("component"))
        m["change"] = _change(store, m["machine"], {x["_id"] for x in m["readings"]}, top_points)
        if m["change"] is not None:
            m["change"]["shown"] = {k: (f"{v}" if units.velocity.startswith("mm/s")
                                        else units.velocity_text(v, line=False).split(" ")[0])
                                    for k, v in (("then", m["change"]["then_mm_s"]), ("now", m["change"]["now_mm_s"]))}
        m["trend_page"] = (os.path.relpath(pages[m["machine"]], out_dir) if m["machine"] in pages else None)
        m["governs"] = machine_governs((trends or {}).get(m["machine"]))
        for x in m["readings"]:
            del x["_id"]
        ranked.append(m)
    ranked.sort(key=lambda m: (m["urgency"]["rank"], ZONE_ORDER.get(m["zone"], 4), -m["certainty_pct"], m["machine"]))
    n = len(outcome.route.tasks)
    return {
        "tellwave": __version__,
        "route": outcome.route.name,
        "file": outcome.route.file,
        "made_at": datetime.now(UTC).isoformat(timespec="seconds"),
        "store": str(store.path),
        "counts": {"readings": n, "diagnosed": len(outcome.diagnosed), "skipped": len(outcome.skipped),
                   "failed": len(outcome.failed), "machines": len(ranked)},
        "run": {"wall_s": round(outcome.wall_s, 2), "workers": outcome.workers, "where": outcome.where,
                "readings_per_s": round(len(outcome.diagnosed) / outcome.wall_s, 2) if outcome.wall_s else None},
        "machines": ranked,
        "failures": outcome.failed,
        "units": units.as_dict(),
    }


def _pct(certainty: float | None) -> int:
    """A stored certainty in percent; one the store could not give (None) counts as none."""
    return 0 if certainty is None else round(100 * max(certainty, 0))
