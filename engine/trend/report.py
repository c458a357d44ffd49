"""The trend of a machine as one plain dict: levels against baseline, the ISO 20816-3 change
criterion, rates per month, projections to the next zone boundary and to user limits, plots.

Zone boundaries come from the advice data (``engine.advice.zone_scale``),
never from numbers copied here.
"""

from __future__ import annotations

from dataclasses import replace
from datetime import UTC, datetime, timedelta
from functools import cache

import numpy as np

from .. import __version__
from ..common.units import ShownUnits
from .change import RATE_READINGS, change_of, is_db, iso_change, min_change_readings
from .health import choose, health_of, shipped_settings
from .projection import CONFIDENCE, Projection, project
from .repairs import Repair, repairs_of, reset_of
from .series import Series, series_by_point
from .shown import boundary_label, trend_in_units, velocity_words
from .store_prior import StorePrior, learned_from_store

SHOWN = ("velocity_rms_mm_s", "accel_peak_g", "accel_rms_g", "kurtosis", "crest_factor", "x1_mm_s", "x2_mm_s")
# indicators whose growth feeds itself (impacts of spreading damage): projected with the exponential model
EXPONENTIAL = ("accel_peak_g", "accel_rms_g", "ring_band_g", "kurtosis", "crest_factor")


def acceleration_band(indicator: str) -> bool:
    """Whether ``indicator`` is a site alarm band's acceleration level (``band[2000-6000 Hz]_g``, g RMS)."""
    return indicator.startswith("band[") and indicator.endswith("]_g")


def growth_of(indicator: str) -> str:
    """The growth model to project ``indicator`` with: exponential for impact and bearing-tone indicators and a
    site's acceleration band, else auto.

    An acceleration band is where a defect's impacts ring (bearing rates, a resonance band such as 2000-6000 Hz,
    a mesh with its sidebands): it grows as the damage feeds itself, like the acceleration levels, and takes
    the same path (its start of degradation found by the first-predicting-time rule, then the exponential
    model). The auto path's CUSUM on a 3-reading baseline dated such a band's rise from healthy scatter (a
    weekly pump's band, 4 weeks before its fault began), and its least-squares choice then took a line over an
    exponential fitted to logs of levels just above the baseline. A velocity band (1X, 2-4X) is a level that
    creeps (unbalance, misalignment) and stays on the auto path."""
    if indicator in EXPONENTIAL or indicator.startswith(("env_", "tone_")) or acceleration_band(indicator):
        return "exponential"
    return "auto"


# the most parameters a projection's model has (the exponential y = phi + theta exp(b t)): a fit needs
# more readings than that, or it passes through its points and its interval means nothing
MODEL_PARAMETERS = 3
MIN_PROJECTION_READINGS = MODEL_PARAMETERS + 1


def _round(x, digits=4):
    return None if x is None or not np.isfinite(x) else round(float(x), digits)


def _figures(x, figures=4):
    """``x`` to ``figures`` significant figures (a small rate keeps its size and sign; an exact 0 is 0, never -0)."""
    return None if x is None or not np.isfinite(x) else float(f"{float(x):.{figures}g}") + 0.0


def _exact(x):
    return None if x is None or not np.isfinite(x) else float(x)


def _seconds(d):
    return None if d is None or not np.isfinite(d) else float(d) * 86400.0


def _projection(p: Projection, s: Series) -> dict:
    last = s.times[-1]

    def when(d):
        return None if d is None else (last + timedelta(days=float(d))).isoformat(timespec="minutes")
    return {"indicator": s.indicator, "label": s.label, "limit": p.limit, "limit_label": p.limit_label,
            "projected": p.projected, "days": _exact(p.days), "low_days": _exact(p.low_days),
            "high_days": _exact(p.high_days), "seconds": _seconds(p.days), "low_seconds": _seconds(p.low_days),
            "high_seconds": _seconds(p.high_days), "act_by_days": _exact(p.act_by_days), "prior": p.prior,
            "date": when(p.days), "low_date": when(p.low_days),
            "high_date": when(p.high_days), "method": p.method, "reason": p.reason,
            "onset": None if p.onset_index is None else s.times[p.onset_index].isoformat(timespec="minutes"),
            "readings_since_onset": None if p.onset_index is None else len(s) - p.onset_index,
            "risen_fold": _round(p.risen_fold, 1)}


def _project(s: Series, limit: float, label: str, source: Series | None,
             learned: StorePrior | None = None, healthy_until: datetime | None = None) -> Projection:
    """Project ``s`` to ``limit`` (the point's health indicator, made of ``source``, telling when degradation
    began), with the guard that a fit has more readings than its model's parameters; ``learned``: what the
    store's own histories gave for this indicator (its prior replaces the shipped one); ``healthy_until``: the
    first confident fault call at the point (``first_fault_call``): only readings before it make the healthy
    band. Degradation found by the rise test (``onset._risen``) with too few readings since to fit says
    how many times its healthy level the indicator stands, and to act on the diagnosis."""
    def too_few(n, what):
        return Projection(limit, label, None, None, None, "too few readings",
                          f"{n} reading(s) {what}; a fit needs more readings than the {MODEL_PARAMETERS} "
                          f"parameters of its model (at least {MIN_PROJECTION_READINGS})")
    n = len(s)
    if n < MIN_PROJECTION_READINGS and not (n and s.values[-1] >= limit):
        return too_few(n, "in the trend")
    priors = None
    if learned is not None and learned.prior is not None:
        from .degradation import shipped_priors
        priors = {**shipped_priors(), s.indicator: learned.prior}
    # a site's acceleration band is its own health indicator: the band the site chose to watch that point's
    # defect in starts to degrade when it leaves its own healthy band (None: made of its own readings)
    source = None if acceleration_band(s.indicator) else source
    p = project(s.days, s.values, limit, label, growth_of(s.indicator), indicator=s.indicator,
                health=None if source is None else health_of(source, s), priors=priors,
                single=None if source is None else health_of(source, s, single=True),
                healthy=_healthy_count(s, healthy_until))
    if learned is not None and learned.prior is None and p.prior:
        p = replace(p, prior=f"{p.prior} ({learned.note})", reason=f"{p.reason} ({learned.note})")
    if p.onset_index is not None and n - p.onset_index < MIN_PROJECTION_READINGS and p.method != "reached" \
            and (p.projected or p.risen_fold is not None):
        if p.risen_fold is not None:
            rise = shipped_settings()
            return Projection(limit, label, None, None, None, p.method,
                              f"degradation under way from reading {p.onset_index + 1} (the rise test: the latest "
                              f"{rise.rise_in_row} single readings of the health indicator {rise.rise_ratio:g} times "
                              f"their healthy level or more); too few readings to project ({n - p.onset_index} since "
                              f"the rise began, a fit needs at least {MIN_PROJECTION_READINGS}), but the "
                              f"{s.label.split(',')[0]} has risen {p.risen_fold:.0f}-fold over its healthy level: "
                              "act on the diagnosis",
                              p.onset_index, risen_fold=p.risen_fold)
        return too_few(n - p.onset_index, "since the rise began")
    return p


def _healthy_count(s: Series, until: datetime | None) -> int | None:
    """How many of the first readings of ``s`` were taken before ``until`` (None: not known, or none: the
    first reading was already called faulty, and the baseline cannot leave it out)."""
    if until is None:
        return None
    k = sum(1 for t in s.times if _naive(t) < until)
    return k or None


def first_fault_call(calls: list[dict] | None, point: str, reset: Repair | None) -> dict | None:
    """The first confident fault call (``fault_calls``) on a component ``point`` sees, after its last repair."""
    mine = [c for c in calls or () if point in c["points"] and (reset is None or reset.is_after(c["taken_at"]))]
    return min(mine, key=lambda c: c["taken_at"]) if mine else None


def fault_calls(store, machine_name: str, machine) -> list[dict]:
    """The confident fault calls (certainty at ``reasoning.CONFIDENT`` or more) the store holds for
    ``machine_name`` on a bearing of ``machine`` (an ``engine.machine.Machine``; None: not known, no call),
    oldest first, each with the points at the bearing (``repairs.points_seeing``): readings from the first
    call on are not healthy baseline."""
    from ..reasoning import CONFIDENT
    from .repairs import points_seeing

    if machine is None:
        return []
    bearings = {b.id for b in machine.bearings}
    out = []
    for c in store.confident_calls(machine_name, CONFIDENT):
        points = points_seeing(machine, c["component"]) if c["component"] in bearings else None
        if points:
            out.append({**c, "points": list(points)})
    return sorted(out, key=lambda c: c["taken_at"])


def _since(s: Series, repair: Repair) -> Series:
    """The part of ``s`` of the machine ``repair`` left (``Repair.is_after``)."""
    keep = [i for i, t in enumerate(s.times) if repair.is_after(t)]
    return Series(s.machine, s.point, s.indicator, tuple(s.times[i] for i in keep), s.values[keep],
                  tuple(s.reading_ids[i] for i in keep))


def _naive(t):
    return t.replace(tzinfo=None) if t.tzinfo is not None else t


def _next_boundary(v: float, scale) -> tuple[float, str] | None:
    for value, name in ((scale.ab, "A/B"), (scale.bc, "B/C"), (scale.cd, "C/D")):
        if v < value:
            return value, f"zone boundary {name} ({value:g} mm/s)"
    return None


BEFORE_REPAIR_COLOR = "#9a9a9a"     # readings of the machine before a repair: shown, not used
BEFORE_REPAIR_FADE = 0.55           # a curve's readings before a repair: its own colour this far toward white


def _faded(color: str) -> str:
    """``color`` (#rrggbb) faded toward white for readings before a repair: shown, not used, and each
    curve still told from the others (the dark ink fades to BEFORE_REPAIR_COLOR)."""
    rgb = [int(color[i:i + 2], 16) for i in (1, 3, 5)]
    return "#" + "".join(f"{round(c + (255 - c) * BEFORE_REPAIR_FADE):02x}" for c in rgb)
CONFIDENCE_WORDS = f"{round(CONFIDENCE * 100)} % interval"   # the projections' interval


def _reach(p: Projection) -> float:
    """How far after the last reading a projection's plot reaches: the late end of its interval, or
    twice the median when that end is open."""
    return float(p.high_days) if p.high_days is not None else 2.0 * float(p.days or 0.0)


def _plots(by_name: dict[str, Series], used: dict[str, Series], scale, projections: dict[str, Projection],
           point: str, repairs: list[Repair], units: ShownUnits | None = None,
           alarms: list[dict] | None = None) -> list[dict]:
    """The plots of one point: every reading (those before a repair in grey), the fitted curves over
    the readings used, and a marker at the date of each finding that sees the point. The overall velocity
    in ``units`` (broadband: RMS in the chosen length unit)."""
    from ..report.svg import Level, Mark, Plot, render
    from ..report.svg import Series as Trace

    first = min(s.times[0] for s in by_name.values())
    base = _naive(first)

    def at(t) -> float:
        return (_naive(t) - base).total_seconds() / 86400.0

    def days(s: Series):
        return np.array([at(t) for t in s.times])

    marks = [Mark(at(r.after), f"found {r.found_on}: {r.fault_name} on {r.component}", strong=r.resets)
             for r in repairs]
    last = max(at(s.times[-1]) for s in by_name.values())
    for name, p in projections.items():
        if name in used and p.projected and p.method != "reached":
            last = max(last, at(used[name].times[-1]) + _reach(p))
    xlim = (0.0, max(last, *(m.x for m in marks)) * 1.02 or 1.0) if marks else None
    xlabel = f"days since {first:%Y-%m-%d %H:%M}"
    plots = []

    def traces(name, color="#1a1a1a", width=0.8, label=None):
        """The readings used in ``color``, and those before the repair in grey, each named in the legend."""
        s, u = by_name[name], used.get(name)
        out = []
        kept = set(u.reading_ids) if u is not None else set()
        old = [i for i, rid in enumerate(s.reading_ids) if rid not in kept]
        if old:
            out.append(Trace(days(s)[old], s.values[old], color=_faded(color), points=True, width=width,
                             label=f"{label or 'readings'} before the repair (not used)"))
        if u is not None and len(u):
            out.append(Trace(days(u), u.values, color=color, points=True, width=width, label=label or "readings"))
        return out

    def fitted(name, color="#8a2d2a", what="", key=None):
        p = projections.get(key or name)
        if p is None or not p.fit_days or name not in used:
            return []
        shift = at(used[name].times[0])
        out = [Trace(np.array(p.fit_days) + shift, np.array(p.fit_values), color=color, dashed=True, width=1.0,
                     label=f"fitted curve{what}, projected toward {p.limit_label}")]
        if p.projected and p.method != "reached" and p.days is not None:
            now = at(used[name].times[-1])
            out.append(Trace(np.array([now, now + p.days]), np.array([p.fit_values[-1], p.limit]), color=color,
                             dashed=True, width=0.6, label=f"to the projected crossing{what} (median)"))
            low = now + (p.low_days or 0.0)
            high = now + (_reach(p) if p.high_days is None else p.high_days)
            out.append(Trace(np.array([low, now + p.days, high]), np.array([p.limit] * 3), color=color, points=True,
                             width=3.0, label=f"{CONFIDENCE_WORDS} of the crossing{what}"
                                              + (" (open on the late side)" if p.high_days is None else "")))
        return out

    def plot(title, ylabel, series, levels=()):
        return Plot(title, xlabel, ylabel, series=series, levels=list(levels), marks=marks, xlim=xlim)

    def alarm_levels(name, k=1.0):
        """The alert and danger levels of the point's alarms on ``name`` (times ``k``, a unit's factor)."""
        return [Level(a[w] * k, f"{w} {a['band']}") for a in alarms or [] if a["indicator"] == name
                for w in ("alert", "danger")]

    if "velocity_rms_mm_s" in by_name:
        shown = units or ShownUnits()
        k = shown.velocity_value(1.0, line=False)      # linear: readings, fit and boundaries scale alike
        target = projections.get("velocity_rms_mm_s")

        def toward(label: str) -> str:
            return label if target is None else label.replace(
                target.limit_label, boundary_label(target.limit_label, target.limit, shown))
        plots.append(plot(f"{point}: overall velocity", shown.velocity_label(line=False),
                          [replace(t, y=t.y * k, label=t.label and toward(t.label)) for t in
                           traces("velocity_rms_mm_s", width=1.2) + fitted("velocity_rms_mm_s")],
                          [Level(scale.ab * k, "A/B"), Level(scale.bc * k, "B/C"), Level(scale.cd * k, "C/D")]
                          + alarm_levels("velocity_rms_mm_s", k)))
    acc = [(n, c, w) for n, c, w in (("accel_peak_g", "#1a1a1a", "peak"), ("accel_rms_g", "#2a5d8a", "RMS"))
           if n in by_name]
    if acc:
        limits = [Level(p.limit, p.limit_label) for n, _, _ in acc for k, p in projections.items() if k == n
                  and p.limit_label.startswith("limit")]
        plots.append(plot(f"{point}: acceleration peak and RMS", "g",
                          [t for n, c, w in acc for t in traces(n, c, 1.2, label=w)]
                          + fitted("accel_peak_g", what=" of the peak")
                          + fitted("accel_rms_g", color="#2a5d8a", what=" of the RMS"),
                          limits + alarm_levels("accel_peak_g") + alarm_levels("accel_rms_g")))
    if "kurtosis" in by_name:
        plots.append(plot(f"{point}: kurtosis", "kurtosis", traces("kurtosis"),
                          [Level(3.0, "3: a Gaussian signal")]))
    tones = [n for n in sorted(by_name) if n.startswith("env_")]
    if tones:
        colors = ("#1a1a1a", "#2a5d8a", "#8a2d2a", "#4a7a2a")
        plots.append(plot(f"{point}: bearing tones in the squared envelope spectrum", "dB over floor",
                          [t for i, n in enumerate(tones) for t in traces(n, colors[i % 4], label=n[4:-3])]))
    # each site alarm band trended at the point: its readings, the fit toward a limit (the user's, else the
    # alarm's danger level) and the alarm's levels; velocity bands in ``units`` as the overall velocity is
    for name in sorted(n for n in by_name if n.startswith("band[")):
        key = next((k for k in (f"{name}@limit", name, f"{name}@alarm") if k in projections), None)
        k = (units or ShownUnits()).velocity_value(1.0, line=False) if name.endswith("_mm_s") else 1.0
        ylabel = (units or ShownUnits()).velocity_label(line=False) if name.endswith("_mm_s") else "g RMS"
        plots.append(plot(f"{point}: {velocity_words(by_name[name].label, units or ShownUnits())}", ylabel,
                          [replace(t, y=t.y * k, label=t.label and velocity_words(t.label, units or ShownUnits()))
                           for t in traces(name, width=1.2) + fitted(name, key=key)],
                          alarm_levels(name, k) + ([Level(projections[key].limit * k, projections[key].limit_label)]
                                                   if key == f"{name}@limit" else [])))
    return [{"title": p.title, "svg": render(p)} for p in plots]


def alarm_rows(alarms) -> list[dict]:
    """The machine's alarms (``engine.machine.alarms.Alarm``) as the plain rows ``trend_from_rows`` reads."""
    return [{"point": a.point, "band": a.band, "unit": a.unit, "indicator": a.indicator, "alert": a.alert,
             "danger": a.danger, "source": a.source, "set_at": a.where} for a in alarms]


FROM_MACHINE_FILE = ("from the machine file as it reads now (the latest reading here was stored before tellwave "
                     "kept the alarms each reading was judged by)")


def judged_alarms(stored: dict[str, dict], file_alarms: list[dict], points) -> list[dict]:
    """The alarms a trend shows and projects to at each of ``points``: those the latest diagnosis there was
    judged by (``Store.alarms``: the machine file's with any ``--alarms`` file laid over, as applied), else, for
    a point whose latest reading was stored before they were kept, the machine file's (``file_alarms``), each
    with ``judged``: where its levels come from."""
    out = []
    for pt in sorted(points):
        if pt in stored:
            when = f"as judged on reading {stored[pt]['reading']} ({str(stored[pt]['taken_at'])[:10]})"
            out += [{**a, "judged": when} for a in stored[pt]["alarms"]]
        else:
            out += [{**a, "judged": FROM_MACHINE_FILE} for a in file_alarms if a["point"] == pt]
    return out


def _alarm_label(a: dict) -> str:
    return f"alarm danger level {a['band']} = {a['danger']:g} {a['unit']}"


def _alarm_row(a: dict, s: Series) -> dict:
    """One alarm of a point in the trend: its levels, the state of the latest reading, and every reading
    (those before a repair included) at or past its alert level."""
    from ..alarms import state_of

    passed = [{"taken_at": t.isoformat(timespec="minutes"), "reading": rid, "value": _figures(float(v)),
               "state": state_of(float(v), a["alert"], a["danger"])}
              for t, v, rid in zip(s.times, s.values, s.reading_ids, strict=True) if v >= a["alert"]]
    return {"indicator": a["indicator"], "label": s.label, "band": a["band"], "unit": a["unit"],
            "alert": a["alert"], "danger": a["danger"], "latest": _figures(float(s.values[-1])),
            "latest_state": state_of(float(s.values[-1]), a["alert"], a["danger"]), "passed": passed,
            "source": a.get("source") or "", "set_at": a.get("set_at") or "",
            "judged": a.get("judged") or ""}


def _indicator(name: str, s: Series, u: Series | None, until: datetime | None = None, times=()) -> dict:
    """One indicator of a point: baseline, latest, change and rate over the readings used (``u``); the baseline
    of the readings taken before ``until`` (the first confident fault call) when there are some. ``times``: when
    the point's readings used were taken (any indicator): a line not found in the latest of them (a bearing tone
    after a repair) says that its latest value is older (``not_found_since``, ``latest_at``)."""
    before = len(s) - (0 if u is None else len(u))
    entry: dict = {"name": name, "label": s.label, "readings": 0 if u is None else len(u),
                   "readings_before_repair": before,
                   "last_before_repair": _round(float(s.values[before - 1])) if before else None,
                   "baseline": None, "baseline_readings": 0, "latest": None, "change": None, "change_pct": None,
                   "change_db": None, "rate_per_month": None, "rate_readings": 0, "unit": "dB" if is_db(name) else "",
                   "risen_fold": None, "latest_at": None, "not_found_since": 0}
    if u is None or not len(u):
        return entry
    entry.update(latest_at=u.times[-1].isoformat(timespec="minutes"),
                 not_found_since=sum(1 for t in times if _naive(t) > _naive(u.times[-1])))
    c = change_of(u, healthy=_healthy_count(u, until))
    entry.update(baseline=_round(c.baseline), baseline_readings=c.baseline_readings, latest=_round(c.latest),
                 change=_round(c.change), change_pct=_round(c.change_pct, 1), rate_per_month=_figures(c.rate_per_month),
                 rate_readings=c.rate_readings,
                 change_db=_round(c.change, 2) if is_db(name) else None,
                 risen_fold=_round(_risen_fold(name, u.values, c.baseline, c.baseline_readings), 1))
    return entry


def _risen_fold(name: str, values: np.ndarray, base: float | None, k: int) -> float | None:
    """How many times its baseline an acceleration level's latest reading stands when the latest ``rise_in_row``
    readings after the baseline's ``k`` all stand ``rise_ratio`` times it or more (rulebooks/trend/onset.yaml:
    one reading that far up can be a knock on the sensor, two surveys in a row cannot both be); None otherwise."""
    rise = shipped_settings()
    if name not in ACCELERATION or base is None or base <= 0 or rise.rise_ratio <= 1 \
            or len(values) - k < rise.rise_in_row:
        return None
    latest = np.asarray(values[-rise.rise_in_row:], float)
    return float(latest[-1] / base) if bool(np.all(latest >= rise.rise_ratio * base)) else None


def _healthy_baseline(call: dict | None, until: datetime | None, s: Series) -> dict | None:
    """What the point's baseline leaves out: the readings from the first confident fault call on (None: no call)."""
    if call is None or until is None:
        return None
    k = sum(1 for t in s.times if _naive(t) < until)
    return {"reading": call["reading_id"], "taken_at": call["taken_at"], "fault": call["fault"],
            "fault_name": call["fault_name"] or call["fault"], "component": call["component"],
            "certainty": _round(call["certainty"], 3), "healthy_readings": k, "holds_faulty": k == 0,
            "why": (f"the baseline is the {k} reading(s) before {call['taken_at'][:10]}, when "
                    f"{call['fault_name'] or call['fault']} on {call['component']} was first called at "
                    f"{100 * call['certainty']:.0f} %: readings diagnosed faulty are not healthy" if k else
                    f"the first reading was already called {call['fault_name'] or call['fault']} on "
                    f"{call['component']} at {100 * call['certainty']:.0f} %: no healthy reading, so the baseline "
                    "holds faulty readings")}


ACCELERATION = ("accel_peak_g", "accel_rms_g")     # the levels a bearing's damage multiplies first


def governing(entry: dict, urgency: dict | None, opens: dict[str, float] | None = None,
              raises: list[dict] | None = None) -> dict | None:
    """Which time governs at a point whose velocity is projected to a zone boundary (or a limit): the soonest window
    (``window_opens_days`` of rulebooks/advice/severity.yaml, ``opens``) that opens before the crossing, of the
    diagnosis of the point's latest reading (``urgency``: id, label, within) and of the rules on the point's trend
    (``raises``: the point's rows of ``acting.trend_raises`` or ``acting.raises_of``; None: the rules are run on
    the entry's own trend facts). None when nothing opens sooner, or no velocity projection is given.

    The result names the time (``urgency``, ``opens_days``), who sets it (``by``: diagnosis or trend; the
    diagnosis first at a tie), each reason (``because``, soonest first), the rules' sentences (``why``, from
    the rulebook) and the projection it governs over (``projection``, its index in ``entry["projections"]``)."""
    zone = [x for x in entry["projections"] if x["indicator"] == "velocity_rms_mm_s" and x["projected"]
            and x["method"] != "reached" and x["days"] is not None]
    if not zone:
        return None
    x = min(zone, key=lambda z: z["days"])
    at = next(i for i, z in enumerate(entry["projections"]) if z is x)
    if opens is None:
        from ..advice import load_advice
        opens = load_advice().get("window_opens_days") or {}
    if raises is None:
        from .acting import trend_raises
        raises = trend_raises([entry]).get(entry["point"], [])
    last = max(opens.values(), default=0.0)       # the normal survey interval's opening: no step of action
    sooner = min(last, x["days"])
    said: list[tuple[float, int, str, str, dict, str | None]] = []
    if urgency and urgency.get("id") in opens and opens[urgency["id"]] < sooner:
        said.append((opens[urgency["id"]], 0, "diagnosis",
                     f"the diagnosis of the latest reading says {urgency['label']} ({urgency['within']})",
                     {k: urgency.get(k) for k in ("id", "label", "within")}, None))
    for r in raises:
        if r["opens_days"] is not None and r["opens_days"] < sooner:
            u = r["urgency"]
            said.append((r["opens_days"], 1, "trend", f"the trend says {u['label']} ({u['within']}; rule {r['rule']})",
                         u, r["rule"]))
    if not said:
        return None
    said.sort(key=lambda s: (s[0], s[1]))
    folds = [i.get("risen_fold") or 0.0 for i in entry["indicators"] if i["name"] in ACCELERATION]
    folds += [p.get("risen_fold") or 0.0 for p in entry["projections"]]
    rules = [s[5] for s in said if s[5]]
    why = [r["because"] for r in raises if r["rule"] in rules]
    return {"by": said[0][2], "because": list(dict.fromkeys(s[3] for s in said)), "urgency": said[0][4],
            "opens_days": said[0][0],
            "rules": list(dict.fromkeys(rules)), "why": list(dict.fromkeys(why)),
            "label": x["label"], "limit_label": x["limit_label"], "days": x["days"],
            "fold": _round(max(folds, default=0.0), 1) or None, "projection": at}


def trend_from_rows(machine: str, rows: list[dict], scale, *, limits: dict[str, float] | None = None,
                    point: str | None = None, plots: bool = False, repairs: list[Repair] | None = None,
                    learned: dict[str, StorePrior] | None = None, units: ShownUnits | None = None,
                    plot_units: ShownUnits | None = None, alarms: list[dict] | None = None,
                    calls: list[dict] | None = None, urgency: dict[str, dict] | None = None,
                    bearings: dict[str, str] | None = None, pool: bool = True, site: tuple = (),
                    govern: bool = True) -> dict:
    """The trend document of ``machine`` from ``Store.history`` rows (oldest first), shown in ``units``
    (``shown.trend_in_units``; None: Hz and mm/s RMS). ``plot_units``: the units the plots are drawn in when
    they are not ``units`` (a document kept in Hz and mm/s RMS that a report converts later, ``diagnosis``).

    ``repairs``: the machine's findings (``repairs.repairs_of``); each is shown beside the points that
    see its component, and one with a fault found resets their baseline to the readings after its day.
    ``learned``: indicator -> the prior from the store's own histories (``store_prior``).
    ``alarms``: the site's alarms (point, band, unit, indicator, alert, danger; ``engine.alarms`` results or
    ``alarm_rows``): each point's indicator with an alarm there is projected to its danger level, and the
    point shows the alarm's levels and the readings that passed them.
    ``calls``: the store's confident fault calls on the machine's bearings (``fault_calls``): at each point,
    the readings from the first call on (after its last repair) are not healthy baseline, and the point says so
    (``healthy_baseline``). ``urgency``: point -> the urgency (id, label, within) of the diagnosis of its latest
    reading: with an acceleration risen many-fold, it says whether a velocity projection to a zone boundary
    is the time that governs (``governing``).
    ``bearings``: point -> the bearing it sits at (the machine file), how the pooled answer's hazards group
    the points (``pool.pool_section``; without it each point is a bearing of its own); ``pool``: False leaves
    the pooled answer out (``points[].pool`` None), where no report shows it (the trend ``diagnose --store``
    reads its facts from, on every reading stored: the GP costs about a CPU second a point).
    ``site``: the rulebook overlays whose rules on trend facts say, with the shipped ones, how soon to act
    (``acting.trend_raises``, for ``governs``); ``govern``: False leaves ``governs`` None, for a diagnosis to say
    after its own reasoning (``diagnosis.HistoryLink.govern``).
    """
    from ..advice import zone_of
    from .acting import trend_raises
    from .pool import pool_section

    limits = limits or {}
    repairs = repairs or []
    by_point = series_by_point(rows, machine)
    if point is not None:
        by_point = {k: v for k, v in by_point.items() if k == point}
    points = []
    used_at: dict[str, dict[str, Series]] = {}
    sources: dict[str, Series | None] = {}
    for pt, by_name in sorted(by_point.items()):
        direction = next((r["direction"] for r in rows if (r["point"] or r["channel"]) == pt), "")
        reset = reset_of(repairs, pt)
        used = {n: _since(s, reset) for n, s in by_name.items()} if reset else dict(by_name)
        used = {n: u for n, u in used.items() if len(u)}
        indicators, projections = [], {}
        source = choose(by_name)
        call = first_fault_call(calls, pt, reset)
        until = None if call is None else _naive(datetime.fromisoformat(call["taken_at"]))
        used_at[pt], sources[pt] = used, source
        times = sorted({_naive(t) for u in used.values() for t in u.times})
        for name in list(SHOWN) + sorted(n for n in by_name if n not in SHOWN):
            if name in by_name:
                indicators.append(_indicator(name, by_name[name], used.get(name), until, times))
        iso = None
        if "velocity_rms_mm_s" in used:
            s = used["velocity_rms_mm_s"]
            c = change_of(s, healthy=_healthy_count(s, until))
            ic = iso_change(c, scale.bc)
            if ic is not None and c.baseline is not None:
                iso = {"baseline_mm_s": _round(c.baseline, 3), "latest_mm_s": _round(c.latest, 3),
                       "change_mm_s": _round(ic.change_mm_s, 3), "criterion_mm_s": _round(ic.criterion_mm_s, 3),
                       "bc_mm_s": scale.bc, "significant": ic.significant, "zone": zone_of(c.latest, scale),
                       "baseline_zone": zone_of(c.baseline, scale)}
            target = _next_boundary(c.latest, scale)
            if target is not None:
                projections[s.indicator] = _project(s, target[0], target[1], source, healthy_until=until)
        for name, limit in limits.items():
            if name in used:
                s = used[name]
                key = name if name not in projections else f"{name}@limit"
                projections[key] = _project(s, limit, f"limit {name} = {limit:g}", source, (learned or {}).get(name),
                                            until)
        here = [a for a in alarms or [] if a["point"] == pt and a["indicator"] in by_name]
        for a in here:
            name = a["indicator"]
            if name in used and f"{name}@alarm" not in projections:
                projections[f"{name}@alarm"] = _project(used[name], float(a["danger"]), _alarm_label(a), source,
                                                        (learned or {}).get(name), until)
        ref = next(iter(by_name.values()))
        since = used[ref.indicator] if ref.indicator in used else None
        entry = {"point": pt, "direction": direction, "readings": len(ref), "first": ref.times[0].isoformat(),
                 "last": ref.times[-1].isoformat(), "indicators": indicators, "iso_change": iso,
                 "projections": [_projection(p, used[k.split("@")[0]]) for k, p in projections.items()],
                 "missing_limits": sorted(n for n in limits if n not in by_name),
                 "alarms": [_alarm_row(a, by_name[a["indicator"]]) for a in here],
                 "findings": [r.shown() for r in repairs if r.shown_at(pt)],
                 "reset": None if reset is None else {
                     "found_on": reset.found_on, "component": reset.component, "fault": reset.fault,
                     "fault_name": reset.fault_name, "work_order": reset.work_order,
                     "from": reset.after.isoformat(), "readings_after": 0 if since is None else len(since),
                     "readings_before": len(ref) - (0 if since is None else len(since)),
                     "every_point": reset.points is None},
                 "healthy_baseline": _healthy_baseline(call, until, since if since is not None else ref)}
        entry["governs"] = governing(entry, (urgency or {}).get(pt), raises=trend_raises([entry], site).get(pt, [])) \
            if govern else None
        if plots:
            entry["plots"] = _plots(by_name, used, scale, projections, pt, [r for r in repairs if r.shown_at(pt)],
                                    plot_units or units, here)
        points.append(entry)
    for entry in points:        # the pooled answer; its hazards judge a bearing by all of its points
        entry["pool"] = pool_section(str(entry["point"]), used_at, sources, bearings) if pool else None
    # in ``units`` (engine/trend/shown.py); None: the store's Hz and mm/s RMS
    return trend_in_units({"tellwave": __version__, "machine": machine,
            "made_at": datetime.now(UTC).isoformat(timespec="seconds"),
            "zone_scale": {"group": scale.group, "support": scale.support, "ab_mm_s": scale.ab, "bc_mm_s": scale.bc,
                           "cd_mm_s": scale.cd, "assumed": scale.assumed},
            "baseline": "median of the first readings (3, or a quarter of a long history, at most 10; never the "
                        "latest), after the last repair at the point and before the first confident fault call on "
                        f"its bearing; a percent change from {min_change_readings()} "
                        "readings on, a dB quantity's change in dB",
            "rate": f"per month: the least-squares slope of the latest {RATE_READINGS} readings (the present "
                    "direction; the change compares the latest with the baseline, so the two can differ in sign)",
            "iso_change_rule": "ISO 20816-3 criterion II: a change of more than 25 % of the B/C boundary is "
                               "significant, even within zone B (from memory)",
            "findings": [r.shown() for r in repairs],
            "points": points}, units or ShownUnits())


def zone_scale_for(machine_file: str | None, known: dict | None = None):
    """The machine's ISO 20816-3 zone scale, from its file when it can still be read (``known``: the machine
    files already read, ``repairs.machine_of``)."""
    return _machine_file(machine_file, known)[0]


def _machine_file(machine_file: str | None, known: dict | None = None) -> tuple:
    """The machine's ISO 20816-3 zone scale and its file's alarms (``alarm_rows``), from its file when it
    can still be read (else the assumed scale and no alarms; ``known``: the machine files already read,
    ``repairs.machine_of``)."""
    from ..advice import Mounting, load_advice, zone_scale
    from .repairs import machine_of

    data = load_advice()
    loaded = machine_of(machine_file, {} if known is None else known)
    if loaded is None:
        from types import SimpleNamespace
        mounting: Mounting = SimpleNamespace(iso_group=None, support=None)
        return zone_scale(mounting, data), []
    return zone_scale(loaded, data), alarm_rows(loaded.alarms)


@cache
def fault_names() -> dict[str, str]:
    """Fault id -> name, from the shipped rulebooks (a finding names its fault by id)."""
    from ..reasoning import load_rulebook

    return {k: f.name for k, f in load_rulebook().faults.items()}


def _repairs(store, machine: str, readings: list[dict], names: dict[str, str] | None,
             known: dict | None = None) -> list[Repair]:
    """The findings of a stored machine as Repairs (``known``: the machine files already read)."""
    found = store.findings(machine)
    return repairs_of(found, {r["id"]: r["machine_file"] for r in readings},
                      fault_names() if names is None and found else names or {}, known=known)


def _band_limits(limits: dict[str, float], rows: list[dict], point: str | None, store_path: str) -> dict[str, float]:
    """``limits`` with each site alarm band's name made the stored indicator's (``band[2000-6000 Hz]`` becomes
    ``band[2000-6000 Hz]_g`` when that is the one stored); a UsageError naming the bands stored when one is not."""
    from ..common.errors import UsageError
    from ..history.record import indicator_label

    stored = sorted({k for r in rows for k in r["indicators"] if k.startswith("band[")})
    out = {}
    for name, value in limits.items():
        if not name.startswith("band[") or name in stored:
            out[name] = value
            continue
        matches = [k for k in stored if k.startswith(name + "_")]
        if len(matches) == 1:
            out[matches[0]] = value
            continue
        where = f"at point {point}" if point else "of this machine"
        known = "; ".join(f"{k} ({indicator_label(k)})" for k in stored) or "none (no site alarm band was judged)"
        raise UsageError(f"--limit {name}: no stored site alarm band of that name {where}"
                         + (" in more than one unit: add _g or _mm_s" if matches else "")
                         + f"; bands with stored values: {known}", path=store_path)
    return out


def latest_urgency(readings: list[dict]) -> dict[str, dict]:
    """point -> the urgency step (id, label, within) of the diagnosis of the latest stored reading at it
    (``Store.readings`` rows, oldest first); a step not on the shipped scale is left out."""
    from ..advice import load_advice

    steps = {u["id"]: u for u in load_advice()["urgency"]}
    out: dict[str, dict] = {}
    for r in readings:
        for pt in r.get("points") or ():
            if r.get("urgency") in steps:
                out[pt] = {k: steps[r["urgency"]][k] for k in ("id", "label", "within")}
            else:
                out.pop(pt, None)
    return out


def trend_document(store, machine: str, *, point: str | None = None, limits: dict[str, float] | None = None,
                   plots: bool = False, names: dict[str, str] | None = None, waterfall: bool = False,
                   compare: tuple[int, int] | None = None, units: ShownUnits | None = None,
                   site: tuple = ()) -> dict:
    """The trend document of a stored machine, with its findings (the store is only read); ``waterfall``
    adds each point's spectra over time, ``compare`` (two reading ids) an overlay of those two readings'
    spectra at each point both have (``waterfall.spectra_section``); all shown in ``units`` (None: Hz and
    mm/s RMS). A ``point`` with no stored reading is a UsageError listing the points that have some. The
    alarms shown, and projected to, at each point are those its latest reading was judged by, as stored with
    it (the machine file's with any site alarm file laid over); for a reading stored before they were kept,
    those of the machine file it was diagnosed with, as that file reads now (``judged_alarms``). ``site``: the
    rulebook overlays (folders) whose rules on trend facts join the shipped ones in saying how soon to act."""
    rows = store.history(machine, point)
    if point is not None and not rows:        # only then is the whole history read, to list its points
        from ..common.errors import UsageError

        points = sorted({r["point"] or r["channel"] for r in store.history(machine)})
        raise UsageError(f"{machine} has no stored reading at point {point!r}; points with readings: "
                         f"{', '.join(points) or 'none'}", path=str(store.path))
    limits = _band_limits(limits or {}, rows, point, str(store.path))
    readings = store.readings(machine)
    files = [r["machine_file"] for r in readings if r["machine_file"]]
    known: dict = {}        # machine file -> Machine: each file read once for the whole document
    repairs = _repairs(store, machine, readings, names, known)
    scale, file_alarms = _machine_file(files[-1] if files else None, known)
    alarms = judged_alarms(store.alarms(machine), file_alarms, {r["point"] or r["channel"] for r in rows})
    from .repairs import machine_of

    loaded = machine_of(files[-1], known) if files else None
    bearings = {} if loaded is None else {p.id: p.at for p in loaded.points if p.at in {b.id for b in loaded.bearings}}
    doc = trend_from_rows(machine, rows, scale, limits=limits, alarms=alarms, bearings=bearings,
                          point=point, plots=plots, repairs=repairs, units=units,
                          calls=fault_calls(store, machine, loaded),
                          urgency=latest_urgency(readings), site=site,
                          learned=learned_from_store(store, limits or {}, growth_of, lambda m: repairs if m == machine
                                                     else _repairs(store, m, store.readings(m), names, known)))
    doc["store"] = str(store.path)
    if waterfall or compare is not None:
        _add_spectra(doc, store, machine, point, compare, plots, repairs, units, known)
    return doc


def _add_spectra(doc: dict, store, machine: str, point: str | None, compare, plots: bool,
                 repairs: list[Repair], units: ShownUnits | None = None, known: dict | None = None) -> None:
    """Each point's spectra over time (``waterfall.spectra_section``); with ``compare``, at the points both
    readings have (``point`` named: that point must have both). ``known``: the machine files already read."""
    known = {} if known is None else known
    from ..common.errors import UsageError
    from .waterfall import spectra_section

    for entry in doc["points"]:
        try:
            entry["spectra"] = spectra_section(store, machine, entry["point"], compare=compare, plots=plots,
                                               repair=reset_of(repairs, entry["point"]), units=units,
                                               machines=known)
        except UsageError:
            if point is not None:
                raise
            entry["spectra"] = None
    if compare is not None and not any(e.get("spectra") for e in doc["points"]):
        raise UsageError(f"--compare: readings {compare[0]} and {compare[1]} are not both stored readings of "
                         f"{machine} at one point (`tellwave history` lists the ids and points)")
