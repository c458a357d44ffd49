"""The trend of a machine as one plain dict: levels against baseline, the ISO 20816-3 change
criterion, rates per month, projections to the next zone boundary and to user limits, plots.

Zone boundaries come from the advice data (``engine.advice.zone_scale``),
never from numbers copied here.
"""

from __future__ import annotations

from datetime import UTC, datetime, timedelta

import numpy as np

from .. import __version__
from .change import change_of, iso_change
from .health import choose, health_of
from .projection import Projection, project
from .series import Series, series_by_point

SHOWN = ("velocity_rms_mm_s", "accel_peak_g", "accel_rms_g", "kurtosis", "crest_factor", "x1_mm_s", "x2_mm_s")
# indicators whose growth feeds itself (impacts of spreading damage): projected with the exponential model
EXPONENTIAL = ("accel_peak_g", "accel_rms_g", "kurtosis", "crest_factor")


def growth_of(indicator: str) -> str:
    """The growth model to project ``indicator`` with: exponential for impact and bearing-tone indicators, else auto."""
    if indicator in EXPONENTIAL or indicator.startswith(("env_", "tone_")):
        return "exponential"
    return "auto"


def _round(x, digits=4):
    return None if x is None or not np.isfinite(x) else round(float(x), digits)


def _projection(p: Projection, s: Series) -> dict:
    last = s.times[-1]

    def when(d):
        return None if d is None else (last + timedelta(days=float(d))).isoformat(timespec="minutes")
    def exact(d):      # unrounded: a remaining life can be shorter than any rounding step
        return None if d is None or not np.isfinite(d) else float(d)
    return {"indicator": s.indicator, "label": s.label, "limit": p.limit, "limit_label": p.limit_label,
            "projected": p.projected, "days": exact(p.days), "low_days": exact(p.low_days),
            "high_days": exact(p.high_days), "seconds": None if p.days is None else exact(p.days * 86400.0),
            "low_seconds": None if p.low_days is None else exact(p.low_days * 86400.0),
            "high_seconds": None if p.high_days is None else exact(p.high_days * 86400.0),
            "act_by_days": exact(p.act_by_days), "prior": p.prior,
            "date": when(p.days), "low_date": when(p.low_days),
            "high_date": when(p.high_days), "method": p.method, "reason": p.reason,
            "onset": None if p.onset_index is None else s.times[p.onset_index].isoformat(timespec="minutes")}


def _projected(s: Series, limit: float, label: str, source: Series | None) -> Projection:
    """Project ``s`` to ``limit``, the point's health indicator (made of ``source``) telling when degradation began."""
    return project(s.days, s.values, limit, label, growth_of(s.indicator), indicator=s.indicator,
                   health=None if source is None else health_of(source, s))


def _next_boundary(v: float, scale) -> tuple[float, str] | None:
    for value, name in ((scale.ab, "A/B"), (scale.bc, "B/C"), (scale.cd, "C/D")):
        if v < value:
            return value, f"zone boundary {name} ({value:g} mm/s)"
    return None


def _plots(by_name: dict[str, Series], scale, projections: dict[str, Projection], point: str) -> list[dict]:
    from ..report.svg import Level, Plot, render
    from ..report.svg import Series as Trace

    first = min(s.times[0] for s in by_name.values())

    def days(s: Series):
        return np.array([(t - first).total_seconds() / 86400.0 for t in s.times])

    xlabel = f"days since {first:%Y-%m-%d %H:%M}"
    plots = []

    def fitted(name, color="#8a2d2a"):
        p = projections.get(name)
        if p is None or not p.fit_days:
            return []
        s = by_name[name]
        shift = (s.times[0] - first).total_seconds() / 86400.0
        return [Trace(np.array(p.fit_days) + shift, np.array(p.fit_values), color=color, dashed=True, width=1.0)]

    if "velocity_rms_mm_s" in by_name:
        s = by_name["velocity_rms_mm_s"]
        plots.append(Plot(f"{point}: overall velocity", xlabel, "mm/s RMS",
                          series=[Trace(days(s), s.values, points=True, width=1.2)] + fitted(s.indicator),
                          levels=[Level(scale.ab, "A/B"), Level(scale.bc, "B/C"), Level(scale.cd, "C/D")]))
    acc = [(n, c) for n, c in (("accel_peak_g", "#1a1a1a"), ("accel_rms_g", "#2a5d8a")) if n in by_name]
    if acc:
        limits = [Level(p.limit, p.limit_label) for n, _ in acc for k, p in projections.items() if k == n
                  and p.limit_label.startswith("limit")]
        plots.append(Plot(f"{point}: acceleration peak (black) and RMS (blue)", xlabel, "g",
                          series=[Trace(days(by_name[n]), by_name[n].values, color=c, points=True, width=1.2)
                                  for n, c in acc] + fitted("accel_peak_g"), levels=limits))
    if "kurtosis" in by_name:
        s = by_name["kurtosis"]
        plots.append(Plot(f"{point}: kurtosis", xlabel, "kurtosis", series=[Trace(days(s), s.values, points=True)],
                          levels=[Level(3.0, "Gaussian (3)")]))
    tones = [n for n in sorted(by_name) if n.startswith("env_")]
    if tones:
        colors = ("#1a1a1a", "#2a5d8a", "#8a2d2a", "#4a7a2a")
        plots.append(Plot(f"{point}: bearing tones in the squared envelope spectrum "
                          + ", ".join(f"{n[4:-3]} ({colors[i % 4]})" for i, n in enumerate(tones)),
                          xlabel, "dB over floor",
                          series=[Trace(days(by_name[n]), by_name[n].values, color=colors[i % 4], points=True)
                                  for i, n in enumerate(tones)]))
    return [{"title": p.title, "svg": render(p)} for p in plots]


def trend_from_rows(machine: str, rows: list[dict], scale, *, limits: dict[str, float] | None = None,
                    point: str | None = None, plots: bool = False) -> dict:
    """The trend document of ``machine`` from ``Store.history`` rows (oldest first)."""
    limits = limits or {}
    by_point = series_by_point(rows, machine)
    if point is not None:
        by_point = {k: v for k, v in by_point.items() if k == point}
    points = []
    for pt, by_name in sorted(by_point.items()):
        direction = next((r["direction"] for r in rows if (r["point"] or r["channel"]) == pt), "")
        indicators, projections = [], {}
        source = choose(by_name)
        for name in list(SHOWN) + sorted(n for n in by_name if n not in SHOWN):
            if name not in by_name:
                continue
            s = by_name[name]
            c = change_of(s)
            indicators.append({"name": name, "label": s.label, "readings": len(s), "baseline": _round(c.baseline),
                               "latest": _round(c.latest), "change": _round(c.change),
                               "change_pct": _round(c.change_pct, 1), "rate_per_month": _round(c.rate_per_month)})
        iso = None
        if "velocity_rms_mm_s" in by_name:
            s = by_name["velocity_rms_mm_s"]
            c = change_of(s)
            ic = iso_change(c, scale.bc)
            from ..advice import zone_of
            iso = {"baseline_mm_s": _round(c.baseline, 3), "latest_mm_s": _round(c.latest, 3),
                   "change_mm_s": _round(ic.change_mm_s, 3), "criterion_mm_s": _round(ic.criterion_mm_s, 3),
                   "bc_mm_s": scale.bc, "significant": ic.significant, "zone": zone_of(c.latest, scale),
                   "baseline_zone": zone_of(c.baseline, scale)}
            target = _next_boundary(c.latest, scale)
            if target is not None:
                projections[s.indicator] = _projected(s, target[0], target[1], source)
        for name, limit in limits.items():
            if name in by_name:
                s = by_name[name]
                key = name if name not in projections else f"{name}@limit"
                projections[key] = _projected(s, limit, f"limit {name} = {limit:g}", source)
        ref = next(iter(by_name.values()))
        entry = {"point": pt, "direction": direction, "readings": len(ref), "first": ref.times[0].isoformat(),
                 "last": ref.times[-1].isoformat(), "indicators": indicators, "iso_change": iso,
                 "projections": [_projection(p, by_name[k.split("@")[0]]) for k, p in projections.items()],
                 "missing_limits": sorted(n for n in limits if n not in by_name)}
        if plots:
            entry["plots"] = _plots(by_name, scale, projections, pt)
        points.append(entry)
    return {"tellwave": __version__, "machine": machine,
            "made_at": datetime.now(UTC).isoformat(timespec="seconds"),
            "zone_scale": {"group": scale.group, "support": scale.support, "ab_mm_s": scale.ab, "bc_mm_s": scale.bc,
                           "cd_mm_s": scale.cd, "assumed": scale.assumed},
            "baseline": "median of the first readings (3, or a quarter of a long history, at most 10)",
            "iso_change_rule": "ISO 20816-3 criterion II: a change of more than 25 % of the B/C boundary is "
                               "significant, even within zone B (from memory)",
            "points": points}


def zone_scale_for(machine_file: str | None):
    """The machine's ISO 20816-3 zone scale, from its file when it can still be read."""
    from ..advice import Mounting, load_advice, zone_scale
    from ..common.errors import TellwaveError
    from ..machine import load_machine

    data = load_advice()
    machine: Mounting | None = None
    if machine_file:
        try:
            machine = load_machine(machine_file)
        except TellwaveError:
            machine = None
    if machine is None:
        from types import SimpleNamespace
        machine = SimpleNamespace(iso_group=None, support=None)
    return zone_scale(machine, data)


def trend_document(store, machine: str, *, point: str | None = None, limits: dict[str, float] | None = None,
                   plots: bool = False) -> dict:
    """The trend document of a stored machine."""
    rows = store.history(machine, point)
    files = [r["machine_file"] for r in store.readings(machine) if r["machine_file"]]
    doc = trend_from_rows(machine, rows, zone_scale_for(files[-1] if files else None), limits=limits,
                          point=point, plots=plots)
    doc["store"] = str(store.path)
    return doc
