"""Advice: findings -> severity, urgency, actions, follow-ups, oil tests and cautions.

What to do about each fault, the ISO 20816-3 zone table and the zone scale
assumed when a machine file does not say, the urgency scale and its policy,
which oil tests follow which fault on which machines, and the cautions are
data in ``rulebooks/advice/``, read once; this module only looks them up and
picks the most urgent. Its inputs are the machine, the evidence (its typed
summaries) and the reasoning result; it reads no reading file and no spectrum.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from functools import lru_cache
from pathlib import Path
from typing import Protocol

from .common.errors import RulebookError
from .common.paths import RULEBOOKS
from .common.yamlfile import YamlDocument, first_problem, read_yaml
from .evidence import Evidence
from .machine import Machine
from .readings.quality import CORRUPTING_ISSUES
from .reasoning import POSSIBLE, Hypothesis, Reasoning

ADVICE_FOLDER = RULEBOOKS / "advice"
MAX_RECOMMENDATIONS = 5
# quality issues that distort a channel's overall level: those that corrupt its samples (a DC offset does not:
# the mean is removed), one list with the analysis's
LEVEL_DISTORTED = CORRUPTING_ISSUES


class Mounting(Protocol):
    """What the ISO 20816-3 zone scale reads of a machine (a ``Machine``, or a stand-in when its file
    cannot be read): its group and support, None where unsaid."""

    @property
    def iso_group(self) -> int | None:
        """ISO 20816-3 group: 1 for large machines (above 300 kW), 2 for medium ones."""

    @property
    def support(self) -> str | None:
        """How the machine stands: "rigid" or "flexible" (ISO 20816-3 support class)."""


@dataclass(frozen=True)
class Urgency:
    """One step of the urgency scale: its id, label, how soon to act (``within``) and rank."""

    id: str
    label: str
    within: str
    rank: int          # 0 is the most urgent


@dataclass(frozen=True)
class ZoneReading:
    """One channel's overall velocity (mm/s RMS, ISO 20816-3 band), its zone, and the issues that doubt them."""

    channel: str
    point: str
    location: str
    velocity_rms_mm_s: float | None   # None when the channel's scale is not trusted
    zone: str | None                  # None when the channel's scale is not trusted
    band_truncated: bool
    signal_issues: tuple[str, ...] = ()   # quality issues of the channel: its level is not to be trusted
    scale_issues: tuple[str, ...] = ()    # quality issues that doubt its scale: no level, no zone

    @property
    def scale_trusted(self) -> bool:
        """Whether no quality issue doubts the channel's scale, so its level and zone can be judged."""
        return not self.scale_issues


@dataclass(frozen=True)
class ScaleCheck:
    """Channels whose scale (unit, sensitivity, gain) is not trusted: severity is unknown until it is checked."""

    channels: tuple[str, ...]
    zone: str                         # what their zone reads
    severity: str                     # what a severity without a stage reads
    check: tuple[str, ...]            # what to check



@dataclass(frozen=True)
class ZoneScale:
    """ISO 20816-3 zone boundaries A/B, B/C and C/D (mm/s RMS) for one group and support, with their source."""

    group: int
    support: str
    ab: float
    bc: float
    cd: float
    assumed: bool      # group or support not stated in the machine file
    source: str


@dataclass(frozen=True)
class OilTest:
    """One oil analysis that follows a fault up: the test, what its result would mean, and its source."""

    name: str
    means: str
    source: str


@dataclass(frozen=True)
class UrgencyRaise:
    """A rule's reason to act sooner at one point (a ``time_to_act`` fact, rulebooks/time-to-act.yaml):
    the step it asks for, the point, its sentence and the rule."""

    urgency: Urgency
    point: str
    because: str
    rule_id: str
    origin: str


@dataclass(frozen=True)
class Recommendation:
    """What to do about one hypothesis: severity, urgency, actions, spares, how to confirm, oil tests."""

    hypothesis: Hypothesis
    severity: str
    urgency: Urgency
    actions: tuple[str, ...]
    spares: tuple[str, ...]
    confirm: tuple[str, ...]
    oil: tuple[OilTest, ...]
    raised_by: tuple[UrgencyRaise, ...] = ()   # the reasons that made its urgency sooner than it was


@dataclass(frozen=True)
class Advice:
    """The advice for one diagnosis: zones, overall urgency, recommendations, limitations and cautions."""

    zone_scale: ZoneScale
    zones: tuple[ZoneReading, ...]
    worst_zone: str | None
    zone_meaning: str
    urgency: Urgency
    recommendations: tuple[Recommendation, ...]
    remeasure: tuple[str, ...]        # settings to change for the next reading (the settings rules' measure_again)
    limitations: tuple[str, ...]      # reading problems not strong enough to withhold
    cautions: tuple[str, ...]
    disclaimer: str
    scale: ScaleCheck | None = None   # channels whose scale is not trusted, or None when every one is
    raised_by: tuple[UrgencyRaise, ...] = ()   # the reasons that made the overall urgency sooner than it was
    measure_next: tuple[str, ...] = ()   # a high level with no hypothesis shown: what would find its cause


def load_advice(folder=ADVICE_FOLDER) -> dict:
    """The advice data of ``folder`` (every YAML file merged), checked against its schema.

    Read once per folder and process; treat the result as read-only.
    """
    return _load_advice(str(Path(folder).resolve()))


@lru_cache(maxsize=8)
def _load_advice(folder: str) -> dict:
    root = Path(folder)
    files = sorted(root.glob("*.yaml"))
    if not files:
        raise RulebookError("no advice data found (rulebooks/advice/*.yaml)", path=str(root))
    merged, lines = {}, {}
    for f in files:
        doc = read_yaml(f, RulebookError)
        if not isinstance(doc.data, dict):
            raise RulebookError("advice data must be a mapping", path=str(f), line=1)
        for key, value in doc.data.items():
            if key in merged:
                raise RulebookError(f"{key!r} is already given in another advice file", path=str(f),
                                    line=doc.line_of([key]))
            merged[key] = value
            lines[(key,)] = (str(f), doc.line_of([key]))
    found = first_problem(YamlDocument(str(root), merged, {}), "advice.schema.json")
    if found is not None:
        path, problem = found
        file, line = lines.get(tuple(path[:1]), (str(root), None))
        raise RulebookError(f"{'.'.join(map(str, path))}: {problem}", path=file, line=line)
    return merged


def zone_scale(machine: Mounting, data: dict) -> ZoneScale:
    """The ISO 20816-3 boundaries for the machine's group and support (the stated assumption if unsaid)."""
    table = data["iso_20816_3"]
    group = machine.iso_group or table["assumed"]["group"]
    support = machine.support or table["assumed"]["support"]
    row = next(r for r in table["boundaries"] if r["group"] == group and r["support"] == support)
    return ZoneScale(group, support, row["ab"], row["bc"], row["cd"],
                     machine.iso_group is None or machine.support is None, table["source"])


def zone_of(velocity_mm_s: float, scale: ZoneScale) -> str:
    """ISO 20816-3 evaluation zone of a broadband velocity (mm/s RMS)."""
    if velocity_mm_s < scale.ab:
        return "A"
    if velocity_mm_s < scale.bc:
        return "B"
    if velocity_mm_s < scale.cd:
        return "C"
    return "D"


def _urgencies(data) -> dict[str, Urgency]:
    return {u["id"]: Urgency(u["id"], u["label"], u["within"], i) for i, u in enumerate(data["urgency"])}


def urgency_steps(data: dict) -> dict[str, Urgency]:
    """The urgency scale of the advice data (``load_advice``), id -> step, most urgent first."""
    return _urgencies(data)


def _oil_tests(machine: Machine, family: str, data: dict, component: str | None = None) -> tuple[OilTest, ...]:
    policy = data["oil_follow_up"].get(family)
    if policy is None or (policy["lubrication"] != "any" and machine.lubrication not in policy["lubrication"]):
        return ()
    # a coupling (a disc-pack drive shaft, say) runs outside any oil-lubricated housing: no oil sample sees it
    if policy.get("on_couplings") is False and component and hasattr(machine, "coupling") \
            and machine.coupling(component) is not None:
        return ()
    tests = data["oil_tests"]
    return tuple(OilTest(tests[t["test"]]["name"], t["means"], tests[t["test"]]["source"]) for t in policy["tests"])


def check_fault_advice(fault_advice: dict, data: dict) -> list[RulebookError]:
    """Each problem of the advice site overlays give their own faults (``rulebook.FaultAdvice`` by fault id):
    an urgency or oil test that the advice data (rulebooks/advice/) does not know."""
    urgencies = [u["id"] for u in data["urgency"]]
    problems = []
    for fid, todo in fault_advice.items():
        if todo.urgency not in urgencies:
            problems.append(RulebookError(f"faults.{fid}.advice.urgency: {todo.urgency!r} is not on the urgency "
                                          f"scale ({', '.join(urgencies)})", path=todo.path, line=todo.line))
        for test, _ in todo.oil_tests:
            if test not in data["oil_tests"]:
                problems.append(RulebookError(f"faults.{fid}.advice.oil_tests: no oil test {test!r} "
                                              f"(known: {', '.join(data['oil_tests'])})", path=todo.path,
                                              line=todo.line))
    return problems


def _site_todo(todo, machine: Machine, family: str, data: dict) -> tuple[dict, tuple[OilTest, ...]]:
    """A site fault's advice as the advice data gives a shipped fault's, with its oil tests (the family's
    policy when it names none)."""
    tests = data["oil_tests"]
    oil = (tuple(OilTest(tests[t]["name"], means, tests[t]["source"]) for t, means in todo.oil_tests)
           if todo.oil_tests else _oil_tests(machine, family, data))
    return {"urgency": todo.urgency, "actions": todo.actions, "spares": todo.spares, "confirm": todo.confirm}, oil


def _recommend(h: Hypothesis, machine: Machine, worst: str | None, data: dict, urgencies,
               scale: ScaleCheck | None = None, site_advice: dict | None = None,
               points_unknown: bool = False) -> Recommendation:
    if site_advice and h.fault in site_advice:
        todo, oil = _site_todo(site_advice[h.fault], machine, h.family, data)
    else:
        todo = data["faults"].get(h.fault, {"urgency": "watch", "actions": [], "spares": [], "confirm": []})
        names = _PartNames(part_names(machine, h))
        todo = {**todo, **{k: [line.format_map(names) for line in todo[k]] for k in ("actions", "spares", "confirm")}}
        oil = _oil_tests(machine, h.family, data, h.component)
    candidates = [urgencies[todo["urgency"]]]
    own = fault_measure(h, data)
    if h.stage is not None:       # stages are told by patterns, which no scale changes
        candidates.append(urgencies[data["stage_urgency"][h.stage]])
        severity = f"damage stage {h.stage} of 4: {data['stages'][h.stage]}"
        if points_unknown:
            severity += f" ({data['stage_points_unknown']})"
    elif own is not None:         # the fault's own measure: a ratio, which no scale changes either
        candidates.append(urgencies[own.urgency])
        condition = (scale.severity if scale is not None
                     else f"ISO 20816-3 zone {worst}" if worst else "no overall level available")
        severity = f"{own.grade} ({own.measure}); the machine's overall condition: {condition}"
    elif scale is not None:
        severity = scale.severity + (f" (channels the quality gates did not doubt: ISO 20816-3 zone {worst})"
                                     if worst else "")
    else:
        severity = f"machine in ISO 20816-3 zone {worst}" if worst else "no overall level available"
    if worst is not None and h.confident and h.family != "reading":
        candidates.append(urgencies[data["zone_urgency"][worst]])
    urgency = min(candidates, key=lambda u: u.rank)
    extra = _coupling_advice(machine, h.component, data)
    actions = tuple(todo["actions"]) + tuple(extra.get("actions", ()))
    spares = tuple(todo["spares"]) + tuple(extra.get("spares", ()))
    if not h.confident and h.family != "reading":
        # not yet a call: confirm first; the work and its spares only when the fault itself is urgent
        policy = data.get("unconfirmed_work")
        if policy is not None and urgency.rank > urgencies[policy["full_from"]].rank:
            actions, spares = tuple(policy["actions"]), ()
        urgency = max(urgency, urgencies[data["unconfirmed_urgency"]], key=lambda u: u.rank)
    return Recommendation(h, severity, urgency, actions, spares,
                          tuple(todo["confirm"]) + tuple(extra.get("confirm", ())) + _twin_confirm(h, machine, data),
                          oil)


def _twin_confirm(h: Hypothesis, machine: Machine, data: dict) -> tuple[str, ...]:
    """The line that says a bearing hypothesis below a call cannot be told from another bearing's of the same
    rates, and where to measure (``twin_bearing_confirm``); () when it is a call, has no such twin, or the sensors
    told the two apart (a rule read the twin's own lines as this bearing's)."""
    line = data.get("twin_bearing_confirm")
    if line is None or h.confident or h.family != "bearing":
        return ()
    twins = sorted({f["twin"] for firing in h.support for _, f in firing.facts
                    if f.get("twin") and f.get("component") == h.component})
    # a firing for it that reads the twin's own lines as this bearing's (the louder housing's): the sensors
    # told the two apart, and what holds it below a call is something else
    told = any(f.get("component") in twins and f.get("twin") == h.component
               for firing in h.support for _, f in firing.facts)
    if not twins or told:
        return ()
    at = {h.component, *twins}
    points = [p.id for p in getattr(machine, "points", ()) if p.at in at]
    where = ", ".join(points) if points else "no point of the machine file sits on either: add one on each"
    return tuple(line.format(component=h.component, twin=twin, points=where) for twin in twins)


TIME_TO_ACT = "time_to_act"     # the derived kind whose facts ask for an urgency (rulebooks/time-to-act.yaml)
FROM_DAYS = "from-days"         # its urgency when the step is the one whose window holds its within_days


def urgency_raises(reasoning: Reasoning, data: dict, urgencies: dict[str, Urgency]) -> tuple[UrgencyRaise, ...]:
    """The urgency each ``time_to_act`` fact the rules derived asks for: its ``urgency`` step, or for a time in
    days the step with the latest window opening at or before it (``window_opens_days``); none past the last."""
    opens = sorted((days, uid) for uid, days in (data.get("window_opens_days") or {}).items())
    out = []
    for f in reasoning.derived(TIME_TO_ACT):
        d = f.derived or {}
        step = d.get("urgency") or ""
        if step in ("", FROM_DAYS):
            days = d.get("within_days")
            held = [uid for start, uid in opens if days is not None and days >= 0 and start <= days]
            step = held[-1] if held else ""
        if not step or step == "none":
            continue
        if step not in urgencies:
            raise RulebookError(f"rule {f.rule_id}: derives {TIME_TO_ACT} with urgency {step!r}, not on the urgency "
                                f"scale ({', '.join(urgencies)})", path=f.origin)
        out.append(UrgencyRaise(urgencies[step], str(d.get("point") or ""), f.because, f.rule_id, f.origin))
    return tuple(out)


def _raised(current: Urgency, raises) -> tuple[Urgency, tuple[UrgencyRaise, ...]]:
    """``current`` made as urgent as the most urgent of ``raises`` that is sooner (a raise never lowers it),
    with the raises that moved it, most urgent first."""
    sooner = sorted((r for r in raises if r.urgency.rank < current.rank), key=lambda r: r.urgency.rank)
    return (sooner[0].urgency if sooner else current), tuple(sooner)


@dataclass(frozen=True)
class FaultMeasure:
    """A hypothesis graded by its fault's own measure (``fault_severity`` in rulebooks/advice/):
    the band's grade, the least urgency it asks, and the measure in words."""

    grade: str
    urgency: str
    measure: str
    value: float


def fault_measure(h: Hypothesis, data: dict) -> FaultMeasure | None:
    """The band of the fault's own measure that the worst (largest) value among the hypothesis's
    supporting facts falls in; None when the fault has no such scale or no supporting fact carries it."""
    scale = data.get("fault_severity", {}).get(h.fault)
    if scale is None:
        return None
    # the field names the measure (sideband_to_carrier_db, fm4): no fact is picked by its kind
    values = [f[scale["field"]] for firing in (*h.support, *h.same_evidence) for _, f in firing.facts
              if isinstance(f.get(scale["field"]), (int, float))]
    if not values:
        return None
    value = max(values)
    band = scale["bands"][0]
    for b in scale["bands"]:
        if value >= b["at_least"]:
            band = b
    words = scale["measure"].format(value=f"{value:.3g}", depth=f"{-value:.0f}")
    return FaultMeasure(band["grade"], band["urgency"], words, value)


class _PartNames(dict):
    """The names advice lines may hold in braces; an unknown name is left as written."""

    def __missing__(self, key: str) -> str:
        return "{" + key + "}"


def part_names(machine: Machine, h: Hypothesis) -> dict[str, str]:
    """What the machine file knows of the part a hypothesis sits on, for the advice lines:
    ``{bearing}`` (its designation), ``{gear}`` (the gear by its shaft and tooth count),
    ``{envelope_band}`` (the demodulation band, Hz, of the envelope the call rests on) and
    ``{belt_tension}`` (", belt tension" on a machine with a belt drive, else nothing)."""
    names = {"belt_tension": ", belt tension" if getattr(machine, "belts", ()) else ""}
    bearing = next((b for b in getattr(machine, "bearings", ()) if b.id == h.component), None)
    if bearing is not None:
        names["bearing"] = (f"bearing {bearing.model} ({bearing.id})" if bearing.model
                            else f"bearing at {bearing.id} (the machine file names no designation)")
    else:
        names["bearing"] = "bearing"
    # the band seen at the part's own point first (its signal is strongest at its own housing), then the clearest
    bands = sorted((f for firing in h.support for _, f in firing.facts
                    if f.get("band_hi_hz") and f.get("component") == h.component),
                   key=lambda f: (f.get("location") != h.component, -f.get("max_snr_db", 0.0)))
    names["envelope_band"] = (f"the envelope band of {bands[0]['band_lo_hz']:.0f} to {bands[0]['band_hi_hz']:.0f} Hz "
                              f"({bands[0]['channel']})" if bands else "the envelope band the report gives")
    mesh = next((g for g in getattr(machine, "gears", ()) if g.id == h.component), None)
    if mesh is not None:
        shafts = {f.get("shaft") for firing in h.support for _, f in firing.facts if f.get("fm4") is not None}
        sides = [(mesh.driving_shaft, mesh.driving_teeth), (mesh.driven_shaft, mesh.driven_teeth)]
        shown = [(s, t) for s, t in sides if s in shafts] or sides
        names["gear"] = " or ".join(f"the {t}-tooth gear on {s}" for s, t in shown) + f" ({mesh.id})"
    else:
        names["gear"] = "the gear on the shaft that shows the once-per-turn event"
    return names


def _coupling_advice(machine: Machine, component: str | None, data: dict) -> dict:
    """The advice data's lines for the type of the coupling ``component`` names ({} when it names none)."""
    coupling = machine.coupling(component) if component and hasattr(machine, "coupling") else None
    if coupling is None:
        return {}
    return data.get("coupling_advice", {}).get(coupling.type, {})


def advise(machine: Machine, evidence: Evidence, reasoning: Reasoning, data: dict | None = None) -> Advice:
    """Severity, urgency and what to do, for one diagnosis."""
    data = data or load_advice()
    wrong = check_fault_advice(reasoning.fault_advice, data)
    if wrong:
        raise wrong[0]
    urgencies = _urgencies(data)
    scale = zone_scale(machine, data)
    issues: dict[str, list[str]] = {}
    for q in evidence.quality:
        if q.issue in LEVEL_DISTORTED:
            issues.setdefault(q.channel, []).append(q.issue)
    # a channel whose scale is not trusted has no level (None): no zone, and no urgency from one
    zones = tuple(ZoneReading(lv.channel, lv.point, lv.location, lv.velocity_rms_mm_s,
                              zone_of(lv.velocity_rms_mm_s, scale) if lv.velocity_rms_mm_s is not None else None,
                              lv.band_truncated, tuple(issues.get(lv.channel, ())), lv.scale_issues)
                  for lv in evidence.levels)
    worst = max((z.zone for z in zones if z.zone is not None), default=None)
    doubted = evidence.scale_doubted
    policy = data["scale_not_trusted"]
    checking = ScaleCheck(tuple(lv.channel for lv in doubted), policy["zone"], policy["severity"],
                          tuple(policy["check"])) if doubted else None
    shown = [h for h in reasoning.hypotheses if h.certainty >= POSSIBLE][:MAX_RECOMMENDATIONS]
    problems = [h for h in reasoning.reading_problems if h.certainty >= POSSIBLE]
    # what to set when measuring again: the remedies the settings rules give (a limit with no setting to change,
    # such as impacts sampled coarsely while the envelope is not affected, has none and stays a limit)
    settings = list(dict.fromkeys(f.measure_again for h in problems if h.fault.startswith("settings-")
                                  for f in h.support if f.measure_again))
    raised_by: tuple[UrgencyRaise, ...] = ()
    if reasoning.withheld:
        recs = tuple(_recommend(h, machine, worst, data, urgencies, checking, reasoning.fault_advice)
                     for h in problems if h.confident)
        # no fault conclusion, but a high level on a channel that passed the quality gates still counts
        flagged = {q.channel for q in evidence.quality}
        clean = max((z.zone for z in zones if z.channel not in flagged and z.zone is not None), default=None)
        candidates = [urgencies[data["withheld_urgency"]]]
        if clean:
            candidates.append(urgencies[data["zone_urgency"][clean]])
        urgency = min(candidates, key=lambda u: u.rank)
        limitations = tuple(f.because for h in problems if not h.withholds and not h.fault.startswith("settings-")
                            for f in h.support)
    else:
        points_unknown = any(h.fault == "points-unknown" and h.confident for h in problems)
        # a stage is "at least" only where every channel it rests on names no point: a channel on a point beside
        # them judged the signs that need a sensor's direction
        placed = {lv.channel for lv in evidence.levels if lv.point}
        recs = tuple(_recommend(h, machine, worst, data, urgencies, checking, reasoning.fault_advice,
                                points_unknown and not placed.intersection(h.channels))
                     for h in shown)
        # the trend's reasons to act sooner (rulebooks/time-to-act.yaml): each finding seen at the point, and
        # the diagnosis; never later than it was
        raises = urgency_raises(reasoning, data, urgencies)
        confident = [r.urgency for r in recs if r.hypothesis.confident]
        base = [urgencies[data["zone_urgency"][worst]]] if worst else []
        if checking is not None:      # a level that cannot be judged: check the scale, then decide
            base.append(urgencies[policy["urgency"]])
        urgency = min(confident + (base or [urgencies["none"]]), key=lambda u: u.rank)
        if raises:     # the overall urgency first, so its reasons are said where it is
            urgency, raised_by = _raised(urgency, raises)
            point_of = {lv.channel: lv.point or lv.channel for lv in evidence.levels}
            recs = tuple(_raise_rec(r, [x for x in raises if x.point in {point_of.get(c, c) for c in
                                                                        r.hypothesis.channels}])
                         for r in recs)
        # a reading problem that does not withhold the diagnosis, or is too weak to, still limits it
        limitations = tuple(f.because for h in problems for f in h.support)
    meaning = data["iso_20816_3"]["zones"][worst] if worst else ""
    return Advice(scale, zones, worst, meaning, urgency, recs, tuple(settings) if reasoning.withheld else (),
                  limitations, cautions_for(machine, recs, data), data["disclaimer"].strip(), checking,
                  raised_by, () if reasoning.withheld or shown else measure_next(zones, data))


def measure_next(zones: tuple[ZoneReading, ...], data: dict) -> tuple[str, ...]:
    """What to measure next when a level stands in the zones of ``unexplained_level`` and no hypothesis explains
    it (none shown): the advice data's lines with the points in those zones."""
    policy = data["unexplained_level"]
    high = sorted({z.point or z.channel for z in zones if z.zone in policy["zones"]})
    if not high:
        return ()
    points = high[0] if len(high) == 1 else ", ".join(high[:-1]) + " and " + high[-1]
    return tuple(line.format(points=points, them="it" if len(high) == 1 else "them") for line in policy["measure_next"])


def _raise_rec(rec: Recommendation, raises) -> Recommendation:
    """``rec`` with its urgency made sooner by those of ``raises`` that are (a reading problem's is left alone)."""
    if rec.hypothesis.family == "reading" or not raises:
        return rec
    urgency, by = _raised(rec.urgency, raises)
    return replace(rec, urgency=urgency, raised_by=by) if by else rec


def machine_parts(machine: Machine) -> tuple[str, ...]:
    """The parts of the machine that have cautions of their own: pump, fan, gearbox, belt_drive."""
    rotors = {r.type for r in getattr(machine, "rotors", ())}
    parts = [("pump", "impeller" in rotors), ("fan", "fan" in rotors),
             ("gearbox", bool(getattr(machine, "gears", ()))), ("belt_drive", bool(getattr(machine, "belts", ())))]
    return tuple(name for name, has in parts if has)


def cautions_for(machine: Machine, recs, data: dict) -> tuple[str, ...]:
    """The general cautions, then those of the machine's parts, then those of the recommended faults' families."""
    out = list(data["cautions"])
    for part in machine_parts(machine):
        out += data.get("cautions_by_part", {}).get(part, [])
    for rec in recs:
        out += data.get("cautions_by_family", {}).get(rec.hypothesis.family, [])
    return tuple(dict.fromkeys(out))
