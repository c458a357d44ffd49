"""The report as one plain dict: what every format (text, Markdown, HTML, JSON) shows.

``report_document`` puts the answer first: the verdict and urgency (and,
when a channel's scale is not trusted, that severity is unknown until it is
checked, and what to check), the ranked hypotheses with certainty, severity,
actions and follow-ups, the oil tests for the machine (each once), the
cautions; then the reasoning trail, the acquisition notes and the zone
readings. ``engine/common/schemas/report.schema.json`` documents it.
"""

from __future__ import annotations

from datetime import datetime

from .. import __version__
from ..advice import Advice, Recommendation
from ..analysis.plotdata import PlotSet
from ..analysis.result import SPEED_SEARCH_FRACTION
from ..common.errors import MachineError
from ..common.units import ShownUnits, format_quantity
from ..evidence import Evidence
from ..evidence.vocabulary import BROADBAND_VELOCITY_FIELDS
from ..machine import Machine
from ..readings.quality import SCALE_ISSUES
from ..reasoning import CONFIDENT, POSSIBLE, Firing, Hypothesis, Reasoning


def _number(v):
    return round(v, 4) if isinstance(v, float) else v


def _fact(alias: str, fact: dict) -> dict:
    values = {k: _number(v) for k, v in fact.items() if k not in ("kind", "id", "sid")}
    return {"alias": alias, "kind": fact["kind"], "id": fact["id"], "values": values}


class _Shown:
    """The units a report shows (``ShownUnits``) with the shaft speeds orders are taken of."""

    def __init__(self, units: ShownUnits, shafts_hz: dict[str, float], reference: str | None,
                 firings: tuple[Firing, ...] = ()):
        self.units, self.shafts_hz, self.reference = units, shafts_hz, reference
        # the firings whose because sentences the advice and the differential quote as text: a quoted
        # sentence is worded again from its firing's measured values, never by editing its words
        self.firings = {f.because: f for f in firings if f.because_parts}
        self.remedies = {f.measure_again: f for f in firings if f.measure_again_parts}

    def shaft_hz(self, shaft: str | None) -> float | None:
        """The speed of ``shaft`` (the shaft under the sensor); the reference shaft's for a fact of none."""
        return self.shafts_hz.get(shaft or "") or self.shafts_hz.get(self.reference or "")

    def value(self, v: dict) -> str:
        """One value of a because sentence in the shown units (others as the engine words them)."""
        if v["value"] is not None and not isinstance(v["value"], bool) and v["type"] == "number":
            if v["unit"] == "Hz":
                return self.units.frequency_text(v["value"], self.shaft_hz(v["shaft"]))
            if v["unit"] == "mm/s RMS":
                return self.units.velocity_text(v["value"], line=v["field"] not in BROADBAND_VELOCITY_FIELDS)
        return format_quantity(v["value"], v["unit"], v["type"])

    def because(self, f: Firing) -> str:
        """The firing's because sentence in the shown units."""
        if self.units.default or not f.because_parts:
            return f.because
        return "".join(literal + ("" if v is None else self.value(v)) for literal, v in f.because_parts)

    def sentence(self, text: str) -> str:
        """A because sentence the advice or the differential quotes, in the shown units (as it is when
        no firing of this reasoning said it)."""
        f = None if self.units.default else self.firings.get(text)
        return text if f is None else self.because(f)

    def remedy(self, text: str) -> str:
        """A firing's measure_again sentence the advice quotes, in the shown units."""
        f = None if self.units.default else self.remedies.get(text)
        if f is None:
            return text
        return "".join(literal + ("" if v is None else self.value(v)) for literal, v in f.measure_again_parts)


def _firing(f: Firing, shown: _Shown | None = None) -> dict:
    because = f.because if shown is None else shown.because(f)
    out = {"rule": f.rule_id, "title": f.title, "source": f.source, "origin": f.origin,
           "overrides": list(f.overrides), "certainty": round(f.certainty, 3), "because": " ".join(because.split()),
           "facts": [_fact(a, x) for a, x in f.facts]}
    if f.raw_certainty is not None:      # explaining away took part of its signs
        out |= {"raw_certainty": round(f.raw_certainty, 3), "kept": round(f.kept, 3)}
    if f.site_record is not None:        # a learned overlay's rule: what repairs at the site found
        k, n = f.site_record
        kept = "" if f.weight_kept is None else f" (weight kept: {f.weight_kept})"
        out["site_record"] = {"confirmed": k, "judged": n, "weight_kept": f.weight_kept,
                              "words": f"at this site this rule was confirmed {k} of {n} times{kept}"}
    return out


def _site_records(hypotheses) -> tuple[dict[str, tuple[int, int]], dict[str, tuple[int, int]]]:
    """The site records (confirmed, judged) of the rules supporting ``hypotheses``, by rule: those whose
    weight a learned overlay changed, and those whose weight it kept."""
    learned: dict[str, tuple[int, int]] = {}
    kept: dict[str, tuple[int, int]] = {}
    for h in hypotheses:
        for f in h.support:
            if f.site_record is not None:
                (learned if f.weight_kept is None else kept).setdefault(f.rule_id, f.site_record)
    return learned, kept


def _told(records: dict[str, tuple[int, int]]) -> str:
    return "; ".join(f"{rule} confirmed {k} of {n}" for rule, (k, n) in sorted(records.items()))


def _site_record_line(shown: list[Hypothesis]) -> str | None:
    """One line under the answer when a listed hypothesis rests on rules a learned overlay judged from the
    site's findings at repair: which rules, and how often repairs confirmed each, weights learned and weights
    kept apart; None otherwise."""
    learned, kept = _site_records(shown)
    if not learned and not kept:
        return None
    parts = [f"weights learned from this site's findings at repair were applied ({_told(learned)})"] if learned else []
    if kept:
        who = "weights kept" if learned else "weights kept by learning from this site's findings at repair"
        parts.append(f"{who}, with their record ({_told(kept)})")
    return "; ".join(parts)


def _hypothesis_site_record(h: Hypothesis) -> str | None:
    """The site's record of the rules behind one hypothesis, beside the certainty it qualifies:
    ``site record: RULE confirmed k of n at repair``, weights kept said so; None without one."""
    learned, kept = _site_records([h])
    if not learned and not kept:
        return None
    told = [f"{_told(learned)} (weight learned)"] if learned else []
    told += [f"{_told(kept)} (weight kept)"] if kept else []
    return "site record at repair: " + "; ".join(told)


def _explained_by(h: Hypothesis) -> list[dict]:
    return [{"fault": x.fault, "fault_name": x.fault_name, "component": x.component, "share": round(x.share, 3)}
            for x in h.explained_by]


def _hypothesis(rank: int, h: Hypothesis, rec: Recommendation, shown: _Shown | None = None) -> dict:
    out = {"rank": rank, "fault": h.fault, "fault_name": h.named, "family": h.family,
           "component": h.component, "certainty": round(h.certainty, 3),
           "certainty_pct": round(100 * max(h.certainty, 0.0)), "strength": h.strength, "stage": h.stage,
           "support": [_firing(f, shown) for f in h.support], "against": [_firing(f, shown) for f in h.against],
           "other_matches": h.other_matches,
           "raw_certainty": None if h.raw_certainty is None else round(h.raw_certainty, 3),
           # who took part of its signs, when that lowered its certainty (a weaker match of one of its rules
           # can lose signs while its strongest keeps them all: then nothing was explained away)
           "explained_by": _explained_by(h) if h.raw_certainty is not None else [],
           "severity": rec.severity, "urgency": _urgency(rec.urgency), "actions": list(rec.actions),
           "spares": list(rec.spares), "confirm": list(rec.confirm), "urgency_raised_by": _raises(rec.raised_by, shown)}
    record = _hypothesis_site_record(h)
    if record is not None:               # rules judged by a learned overlay: beside the certainty they give
        out["site_record"] = record
    if h.same_evidence:                  # firings counted once with another rule's (counts_with): shown, not counted
        out["same_evidence"] = [{**_firing(f, shown), "counted_with": f.counted_with} for f in h.same_evidence]
    if h.indistinct:                     # rivals the evidence cannot tell from it: the finding names them too
        out["faults"] = list(h.faults)
        out["indistinct"] = [{**_firing(f, shown), "rival": f.rival, "rival_name": f.rival_name}
                             for f in h.indistinct]
    return out


def _raises(raises, shown: _Shown | None = None) -> list[dict]:
    """Why an urgency is sooner than the finding alone made it (rulebooks/time-to-act.yaml), most urgent first;
    each sentence worded from its firing's values in the shown units, as the advice's sentences are."""
    return [{"urgency": _urgency(r.urgency), "point": r.point,
             "because": " ".join((r.because if shown is None else shown.sentence(r.because)).split()),
             "rule": r.rule_id, "origin": r.origin} for r in raises]


def _oil_analysis(shown: list[Hypothesis], recs: dict) -> list[dict]:
    """The oil tests to request for the machine, each once: one sample serves every hypothesis.

    A test asked for by several hypotheses keeps what its result would mean
    for each (bearing wear, tooth damage ...), with the hypotheses it serves.
    """
    rows: dict[str, dict] = {}
    for h in shown:
        for t in recs[(h.fault, h.component)].oil:
            row = rows.setdefault(t.name, {"test": t.name, "source": t.source, "reads": []})
            read = next((r for r in row["reads"] if r["means"] == t.means), None)
            if read is None:
                row["reads"].append(read := {"means": t.means, "for": [], "components": []})
            read["for"].append(f"{h.named} on {h.component}")
            if h.component not in read["components"]:
                read["components"].append(h.component)
    return list(rows.values())


def _urgency(u) -> dict:
    return {"id": u.id, "label": u.label, "within": u.within}


def _summary(reasoning: Reasoning, advice: Advice, machine: Machine, shown: list[Hypothesis]) -> str:
    """The answer in one sentence; ``shown`` are the hypotheses the report lists under it."""
    if reasoning.withheld:
        # one problem found on several channels is said once, naming them (every channel clipped: one line)
        where: dict[str, list[str]] = {}
        for h in reasoning.reading_problems:
            if h.confident:
                where.setdefault(h.fault_name, []).append(h.component)
        text = (f"This reading of {machine.name} cannot support a fault conclusion: "
                + "; ".join(name if len(on) == 1 else f"{name} on {_names(dict.fromkeys(on))}"
                            for name, on in where.items()) + ".")
        if advice.urgency.id != "remeasure":
            text += (f" The channels that passed the quality checks still read an ISO 20816-3 level that "
                     f"calls for '{advice.urgency.label}' until a good reading says otherwise.")
        return text
    confident = reasoning.confident()
    if not confident:
        zone = f" The overall level is in ISO 20816-3 zone {advice.worst_zone}." if advice.worst_zone else ""
        if advice.scale is not None:
            trusted = (f" The channels the quality gates did not doubt read ISO 20816-3 zone {advice.worst_zone}, "
                       "unless they share the doubted channels' unit or gain." if advice.worst_zone else "")
            return (f"No fault of {machine.name} reaches a confident certainty, and faults known by their level "
                    f"alone (unbalance, for one) cannot be judged on {_names(advice.scale.channels)} until the "
                    f"scale is checked.{trusted}")
        return f"No fault of {machine.name} reaches a confident certainty.{zone}"
    top = confident[0]
    others = len([h for h in shown if h is not top])      # listed below the answer, whatever their certainty
    more = f" ({others} more {'hypothesis' if others == 1 else 'hypotheses'} below)" if others else ""
    return (f"{top.named.capitalize()} on {top.component}: {top.strength}, certainty "
            f"{100 * top.certainty:.0f} %{more}.")


def _names(items) -> str:
    items = list(items)
    return items[0] if len(items) == 1 else ", ".join(items[:-1]) + " and " + items[-1]


def _scale(advice: Advice, evidence: Evidence) -> dict:
    """Whether severity can be judged: the channels whose scale is not trusted, why, and what to check."""
    check = advice.scale
    if check is None:
        return {"trusted": True, "channels": [], "zone": None, "severity": None, "check": [], "text": None}
    doubted = {lv.channel: lv for lv in evidence.scale_doubted}

    def having(issue):
        return [c for c in check.channels if issue in doubted[c].scale_issues]

    reasons = []
    if level := having("implausible_level"):
        reasons.append(f"{_names(level)} {'reads' if len(level) == 1 else 'read'} a level no machine in service "
                       "gives in the stated unit")
    if shape := having("implausible_spectrum"):
        reasons.append(f"{_names(shape)} {'holds' if len(shape) == 1 else 'hold'} most of "
                       f"{'its' if len(shape) == 1 else 'their'} energy above 1 kHz, as no velocity or displacement "
                       "record does (acceleration stated in the wrong unit, most likely)")
    if slope := having("implausible_slope"):
        reasons.append(f"{_names(slope)} {'falls' if len(slope) == 1 else 'fall'} with frequency as a velocity "
                       "record does, with almost no energy above 1 kHz, as no accelerometer on a machine gives "
                       "(velocity stated as acceleration, most likely, or an accelerometer held on a probe)")
    one = len(check.channels) == 1
    text = (f"Severity is unknown until the scale is checked: {'; '.join(reasons)}. "
            f"{'That channel gets' if one else 'Those channels get'} no ISO 20816-3 zone and no severity from a "
            "level; frequency patterns, ratios and envelope tones over their own floor do not depend on the scale "
            "and are diagnosed.")
    return {"trusted": False,
            "channels": [{"channel": c, "issues": list(doubted[c].scale_issues)} for c in check.channels],
            "zone": check.zone, "severity": check.severity, "check": list(check.check), "text": text}


def report_time(now: datetime | None = None) -> str:
    """When a report is made: local time with its UTC offset, ISO 8601 to the minute
    (2026-03-04T10:15+01:00)."""
    return (now or datetime.now()).astimezone().isoformat(timespec="minutes")


def taken_at(timestamp) -> str | None:
    """The reading's time to the minute (ISO 8601) where the stated time is a date and time;
    a time of day or a logger's index as stated; None when nothing states it."""
    if timestamp is None or not str(timestamp).strip():
        return None
    text = str(timestamp).strip()
    try:
        return datetime.fromisoformat(text.replace("Z", "+00:00")).isoformat(timespec="minutes")
    except ValueError:
        return text


def taken_text(timestamp, time_from: str | None) -> str:
    """When the reading was taken, as the report's header says it: ``taken_at`` and where the
    time came from."""
    text = taken_at(timestamp)
    if text is None:
        return "not stated (give the reading's sidecar a timestamp, or --taken-at)"
    said_of: dict[str | None, str] = {"file": "as the file or its sidecar states", "route": "as the route states",
                                      "command line": "as given with --taken-at",
                                      "file modified": "the file's modification time: nothing states when it was taken"}
    said = said_of.get(time_from)
    return f"{text} ({said})" if said else text


def _differential(dx, reasoning: Reasoning, recs: dict, shown: _Shown) -> dict:
    lead = next(h for h in reasoning.hypotheses if (h.fault, h.component) == (dx.fault, dx.component))
    return {"fault": dx.fault, "fault_name": lead.named, "component": dx.component,
            "certainty": round(lead.certainty, 3),
            "rivals": [{"fault": r.fault, "fault_name": r.fault_name, "component": r.component,
                        "certainty": round(r.certainty, 3), "against": " ".join(shown.sentence(r.against).split()),
                        "explained_by_leader": round(r.explained_by_leader, 3)}
                       for r in dx.rivals],
            "separating": [" ".join(shown.sentence(t).split()) for t in dx.separating],
            "missing": list(dx.missing),
            "settle": list(recs[(dx.fault, dx.component)].confirm)}


def order_tracked_shafts(evidence: Evidence) -> list[str]:
    """Shafts whose once-per-turn average followed the speed as it wandered (order tracking)."""
    return sorted({f["shaft"] for f in evidence.facts
                   if f.get("kind") == "once_per_rev_event" and f.get("order_tracked")})


def speed_text(speed: dict, tracked: list[str] | tuple[str, ...] = ()) -> str:
    """The speed the analysis used, where it came from and how far to trust it, in one sentence; and,
    when the speed wandered during the record, a second saying whose turns were order tracked."""
    if not speed:
        return ""
    if tracked:
        whose = f"{', '.join(tracked[:-1])} and {tracked[-1]}" if len(tracked) > 1 else tracked[0]
        return (f"{speed_text(speed)} The speed wandered during the record, so the turns of {whose} were cut "
                "at the angle of a gear mesh line's phase (order tracking, no tach), not at one speed, before "
                "their once-per-turn events were read.")
    used = f"{speed['measured_rpm']:.1f} rpm of {speed['shaft']}"
    stated = speed["stated_rpm"]
    against = (f"stated {stated:.0f} rpm" if stated else f"nominal {speed['nominal_rpm']:.0f} rpm")
    gap = f", {speed['deviation_pct']:+.1f} % from the {against}".replace("-0.0 %", "0.0 %").replace("+0.0 %", "0.0 %")
    if speed["source"] == "1X harmonics":
        return (f"Speed {used}, measured from {speed['harmonics']} shaft harmonic lines{gap}; "
                "shaft-locked lines are matched within 0.5 % and bearing tones, which slip 1-2 %, within 2 %.")
    if speed["source"] == "bearing tones":
        return (f"Speed {used}, measured from {speed['harmonics']} lines of one bearing-tone family{gap} "
                "(no shaft line stood clear); bearings slip 1-2 %, so forcing frequencies are matched within 2 %.")
    if speed.get("shared_with"):
        return (f"Speed {used} as {'stated' if stated else 'in the machine file'}: the lines at the orders of "
                f"{speed['shaft']} could equally be the harmonics of {speed['shared_with']} (within the "
                f"{SPEED_SEARCH_FRACTION * 100:g} % the speed is searched over), whose own lines did not stand "
                "beside them, so they do not measure the speed; forcing frequencies are matched within 2 %. A "
                "tachometer or strobe reading of the speed settles it.")
    return (f"Speed {used} as {'stated' if stated else 'in the machine file'}: no shaft line or bearing tone "
            "stood clear enough to measure it, so forcing frequencies are matched within 2 %.")


def _alarms(alarms, units: ShownUnits | None = None) -> dict:
    """The site's alarms on this reading: each with its value, and the crossed ones first (danger first).
    A velocity alarm is shown in the chosen length unit (mm/s or in/s), its value and limits alike and its
    ``unit`` saying so; it stays RMS, a band's level being no single line's."""
    order = {"danger": 0, "alert": 1, "within": 2, None: 3}
    rows = [{**a, "value": None if a["value"] is None else round(a["value"], 4)}
            for a in sorted(alarms, key=lambda a: (order[a["state"]], a["point"], a["band"], a["quantity"]))]
    if units is not None and units.velocity.startswith("in/s"):
        for a in rows:
            if a["unit"] == "mm/s RMS":
                a.update({k: None if a[k] is None else float(f"{units.velocity_value(a[k], line=False):.4g}")
                          for k in ("value", "alert", "danger")}, unit=units.velocity_label(line=False))
    return {"crossed": sum(a["state"] in ("alert", "danger") for a in rows),
            "danger": sum(a["state"] == "danger" for a in rows), "results": rows}


def _phase(evidence: Evidence, reasoning: Reasoning, units: ShownUnits | None = None) -> dict:
    """The 1X phase readings the reading states, and each difference with the rules that read it.

    A difference across a coupling is one row (its mirror, the same pair seen from the other
    side, is folded into it); ``reads`` lists every firing that matched the pair, with the
    hypothesis it raised or lowered.
    """
    readings = [f for f in evidence.facts if f["kind"] == "phase_1x"]
    diffs = [f for f in evidence.facts if f["kind"] == "phase_difference"]
    if not readings:
        return {"readings": [], "differences": []}

    def key(f):
        ends = sorted([(f["location"], f["first_direction"]), (f["other_location"], f["other_direction"])])
        return (f["relation"], tuple(ends))

    reads: dict[tuple, list[dict]] = {}
    for h in reasoning.hypotheses:
        for firing in (*h.support, *h.against):
            for _, fact in firing.facts:
                if fact.get("kind") == "phase_difference" or fact.get("kind") == "phase_1x":
                    k = key(fact) if fact["kind"] == "phase_difference" else ("reading", fact.get("id"))
                    reads.setdefault(k, []).append({
                        "rule": firing.rule_id, "fault_name": h.fault_name, "component": h.component,
                        "certainty": round(firing.certainty, 3)})
    units = units or ShownUnits()
    rows = [{"point": f["point"], "location": f["location"], "direction": f["direction"],
             "amplitude_mm_s": f.get("amplitude_mm_s"),
             "amplitude": None if f.get("amplitude_mm_s") is None else units.velocity_text(f["amplitude_mm_s"]),
             "measured_channel": f.get("measured_channel") or "",
             "measured_1x_mm_s": f.get("measured_1x_mm_s"),
             "measured": None if f.get("measured_1x_mm_s") is None else units.velocity_text(f["measured_1x_mm_s"]),
             "phase_deg": f["phase_deg"], "readings": f["readings"],
             "spread_deg": f["spread_deg"], "reads": reads.get(("reading", f["id"]), [])} for f in readings]
    out = [{"relation": f["relation"], "direction": f["direction"],
            "first": f"{f['location']} {f['first_direction']}",
            "second": f"{f['other_location']} {f['other_direction']}",
            "difference_deg": f["difference_deg"], "reads": reads.get(key(f), [])}
           for f in diffs if not f.get("mirrored")]
    return {"readings": rows, "differences": out}


def _left_out_rows(reading, evidence: Evidence) -> list[dict]:
    """A levels row for each channel the analysis left out for a corrupting issue: no level and no zone from
    its samples, and why it was left out (its corrupting issues in the words ``tellwave reading`` uses)."""
    notes = [q for q in evidence.quality if q.left_out]
    rows: dict[str, dict] = {}
    for q in notes:
        rows.setdefault(q.channel, {"channel": q.channel, "point": q.point, "location": q.location,
                                    "velocity_rms_mm_s": None, "zone": None, "band_truncated": False,
                                    "signal_issues": [], "scale_trusted": True, "scale_issues": [], "left_out": ""})
        row = rows[q.channel]
        if q.corrupting:
            row["signal_issues"].append(q.issue)
        elif q.issue in SCALE_ISSUES:
            row["scale_issues"].append(q.issue)
            row["scale_trusted"] = False
    words = {(q["channel"], q["issue"]): q["words"] for q in reading.quality}
    for row in rows.values():
        row["left_out"] = "; ".join(words.get((row["channel"], issue), issue) for issue in row["signal_issues"])
    return list(rows.values())


def report_document(machine: Machine, reading, evidence: Evidence, reasoning: Reasoning,
                    advice: Advice, plots: PlotSet | None = None, reach=(), made_at: str | None = None,
                    alarms=(), plot_channels: tuple[str, ...] | None = None,
                    units: ShownUnits | None = None) -> dict:
    """The report as one plain dict; ``reading`` is the pipeline's ReadingInfo; ``alarms`` the site's
    alarms judged on the reading (``engine.alarms.judge_alarms``), crossed ones first.

    ``units`` are the units its words and tables show (default Hz and mm/s RMS; orders are of the
    shaft under the sensor at the speed the analysis used); fields named ``_hz`` and ``_mm_s`` keep
    theirs, and ``units`` in the document says which are shown.

    ``made_at`` is the report's own time (see ``report_time``), now when None;
    tests and runs whose reports must compare equal give one. ``plot_channels`` chooses the channels
    plotted (``plots.choose_channels``; None: the view of the top hypothesis).
    """
    recs = {(r.hypothesis.fault, r.hypothesis.component): r for r in advice.recommendations}
    shown = [h for h in reasoning.hypotheses if (h.fault, h.component) in recs]
    units = units or ShownUnits()
    speed = evidence.speed or {}
    shafts_hz = dict(machine.shaft_speeds_hz)       # nominal, unless the analysis used another speed
    if speed.get("measured_rpm"):
        try:
            shafts_hz = machine.speeds_at(speed["measured_rpm"], speed.get("shaft"))
        except MachineError:        # a speed the machine file cannot take: orders of the nominal speeds
            pass
    said = tuple(f for h in (*reasoning.hypotheses, *reasoning.reading_problems) for f in (*h.support, *h.against))
    worded = _Shown(units, shafts_hz, speed.get("shaft") or machine.driver_shaft, said + tuple(reasoning.chain))
    figures = []
    if plots is not None:
        from .plots import figures as draw

        figures = draw(plots, evidence, reasoning, machine, plot_channels, units)
    problems = [{"fault": h.fault, "fault_name": h.fault_name, "component": h.component,
                 "certainty": round(h.certainty, 3), "support": [_firing(f, worded) for f in h.support]}
                for h in reasoning.reading_problems]
    withheld_recs = [r for r in advice.recommendations if r.hypothesis.family == "reading"]
    scale = _scale(advice, evidence)
    tracked = order_tracked_shafts(evidence)
    doc = {
        "tellwave": __version__,
        "made_at": made_at or report_time(),
        "machine": {"name": machine.name, "plant": machine.plant, "file": machine.source,
                    "iso_group": advice.zone_scale.group, "support": advice.zone_scale.support,
                    "lubrication": machine.lubrication},
        "reading": {"source": reading.source, "timestamp": reading.timestamp, "time_from": reading.time_from,
                    "taken_at": taken_at(reading.timestamp), "taken": taken_text(reading.timestamp, reading.time_from),
                    "fs_hz": reading.fs_hz,
                    "duration_s": round(reading.duration_s, 4), "speed_rpm": reading.speed_rpm,
                    "channels": [{"name": name, "point": point, "direction": direction}
                                 for name, point, direction in reading.channels]},
        "thresholds": {"conclusion": CONFIDENT, "shown": POSSIBLE},
        "verdict": {"withheld": reasoning.withheld, "summary": _summary(reasoning, advice, machine, shown),
                    "urgency": _urgency(advice.urgency), "urgency_raised_by": _raises(advice.raised_by, worded),
                    "severity_known": scale["trusted"],
                    "scale_note": scale["text"], "site_record": _site_record_line(shown)},
        "scale": scale,
        "hypotheses": [_hypothesis(i + 1, h, recs[(h.fault, h.component)], worded) for i, h in enumerate(shown)],
        "oil_analysis": _oil_analysis(shown, recs),
        "reading_problems": problems,
        "differential": [_differential(dx, reasoning, recs, worded) for dx in reasoning.differential
                         if (dx.fault, dx.component) in recs],
        "remeasure": [" ".join(worded.remedy(x).split()) for x in advice.remeasure],
        "measure_next": list(advice.measure_next),
        # each action once: a problem found on several channels asks for the same check of each
        "remeasure_actions": list(dict.fromkeys(a for r in withheld_recs for a in r.actions)),
        "limitations": [" ".join(worded.sentence(x).split()) for x in advice.limitations],
        "reach": [{"state": v["state"], "fault": v["fault"], "component": v["component"], "label": v["label"],
                   # the planner's checks keep no parts: their Hz reworded as printed (orders of the reference shaft)
                   "reasons": [units.reword_hz(r, worded.shaft_hz(None)) for r in v["reasons"]]} for v in reach],
        "alarms": _alarms(alarms, units),
        "phase": _phase(evidence, reasoning, units),
        "cautions": list(advice.cautions),
        "disclaimer": advice.disclaimer,
        "zones": {"scale": {"group": advice.zone_scale.group, "support": advice.zone_scale.support,
                            "ab_mm_s": advice.zone_scale.ab, "bc_mm_s": advice.zone_scale.bc,
                            "cd_mm_s": advice.zone_scale.cd, "assumed": advice.zone_scale.assumed,
                            "source": " ".join(advice.zone_scale.source.split())},
                  "worst": advice.worst_zone, "meaning": advice.zone_meaning,
                  "points": [{"channel": z.channel, "point": z.point, "location": z.location,
                              "velocity_rms_mm_s": (None if z.velocity_rms_mm_s is None
                                                    else round(z.velocity_rms_mm_s, 3)),
                              "zone": z.zone, "band_truncated": z.band_truncated,
                              "signal_issues": list(z.signal_issues), "scale_trusted": z.scale_trusted,
                              "scale_issues": list(z.scale_issues), "left_out": None}
                             for z in advice.zones] + _left_out_rows(reading, evidence)},
        "chain": [_firing(f, worded) for f in reasoning.chain],
        "acquisition": {k: _number(v) for k, v in evidence.settings.items()},
        "speed": {**{k: _number(v) for k, v in evidence.speed.items()}, "order_tracked_shafts": tracked,
                  "text": speed_text(evidence.speed, tracked)},
        "data_quality": [{**q, "value": _number(q["value"])} for q in reading.quality],
        "rulebooks": [str(p) for p in reasoning.rulebook_files],
        "counts": {"evidence_facts": len(evidence.facts), "facts_considered": reasoning.facts_considered,
                   "rules": reasoning.rules_loaded},
        "figures": [{"title": f.title, "svg": f.svg, **({"data": f.data} if f.data else {})} for f in figures],
        "units": _units(units, advice, evidence, worded),
    }
    return doc


def _units(units: ShownUnits, advice: Advice, evidence: Evidence, worded: _Shown) -> dict:
    """What the report's words and tables show, and the values they show in them: the zone
    boundaries and each point's overall level (broadband: RMS whichever is chosen), Fmax and
    the line spacing (orders of the reference shaft). Numbers are JSON numbers with their unit beside
    them (``zone_boundaries``, ``point_levels`` with ``point_level_unit``, ``fmax``, ``resolution``);
    the words the templates print are the ``_text`` keys."""
    ref_hz = worded.shaft_hz(None)
    settings = evidence.settings

    def level(mm_s):       # the number only: tables give the unit in their heading
        return None if mm_s is None else units.velocity_text(mm_s, line=False).split(" ")[0]

    def frequency(hz, hz_format):
        if not hz:
            return None
        return f"{hz:{hz_format}} Hz" if units.frequency == "hz" else units.frequency_text(hz, ref_hz)

    scale = advice.zone_scale
    bounds = (scale.ab, scale.bc, scale.cd)
    return units.as_dict() | {
        "shaft_speeds_hz": {k: round(v, 4) for k, v in worded.shafts_hz.items()},
        "zone_boundaries": units.zone_boundaries(*bounds),
        "zone_boundaries_text": units.zone_boundaries_text(*bounds),
        "point_levels": {z.channel: units.velocity_number(z.velocity_rms_mm_s, line=False) for z in advice.zones},
        "point_level_unit": units.velocity_label(line=False),
        "point_levels_text": {z.channel: level(z.velocity_rms_mm_s) for z in advice.zones},
        "fmax": units.frequency_number(settings.get("fmax_hz") or None, ref_hz),
        "resolution": units.frequency_number(settings.get("resolution_hz") or None, ref_hz),
        "fmax_text": frequency(settings.get("fmax_hz"), ".0f"),
        "resolution_text": frequency(settings.get("resolution_hz"), ".3g"),
    }
