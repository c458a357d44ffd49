"""One reading of a route, diagnosed in a worker process: task in, plain data out.

Each worker process builds its own Reasoner (durable-rules state cannot be
pickled) and loads the advice data and each machine file once. What it
returns is plain data (the stored record and the rendered report), so the
same function runs in a local process pool and on a Dask worker.
"""

from __future__ import annotations

import time
from dataclasses import replace
from pathlib import Path

from ..common.errors import TellwaveError, UsageError
from .files import Task

_STATE: dict = {}


def _reasoner(site: tuple[str, ...]):
    if _STATE.get("site") != site:
        from ..advice import load_advice
        from ..reasoning import Reasoner, load_rulebook

        _STATE.update(site=site, reasoner=Reasoner(load_rulebook(*site)), advice=load_advice(), machines={})
    return _STATE["reasoner"], _STATE["advice"]


def _machine(path: str):
    from ..machine import load_machine

    machines = _STATE.setdefault("machines", {})
    if path not in machines:
        machines[path] = load_machine(path)
    return machines[path]


def _map_points(reading, machine, points: dict, task: Task):
    """Channels renamed to the route's point ids; direction from the machine where the file says none."""
    if not points:
        return reading
    known = {p.id: p for p in machine.points}
    names = {c.name for c in reading.channels}
    for channel, point in points.items():
        if channel not in names:
            raise UsageError(f"the route maps channel {channel!r} to {point}, but the file's channels are "
                             f"{', '.join(sorted(names))}", path=task.files[0])
        if point not in known:
            raise UsageError(f"the route maps {channel} to point {point!r}, which {machine.name} does not have "
                             f"(points: {', '.join(known)})", path=task.files[0])
    channels = tuple(replace(c, point=points[c.name], direction=c.direction or known[points[c.name]].direction)
                     if c.name in points else c for c in reading.channels)
    return replace(reading, channels=channels)


def _history_link(settings: dict, machine, advice, content_hash: str, when: str, recording: str | None = None,
                  units=None):
    """Trend facts and a trend section from the store's earlier surveys, read-only; None without a store.
    ``units``: what the report shows (``HistoryLink``)."""
    path = settings.get("store")
    if not path:
        return None
    from ..advice import zone_scale
    from ..common.errors import StoreError
    from ..history.store import Store
    from ..trend.diagnosis import HistoryLink

    if _STATE.get("store_path") != path:
        try:
            _STATE.update(store_path=path, store=Store(path, read_only=True))
        except StoreError:      # not reachable from this worker (a remote Dask worker): no trend
            _STATE.update(store_path=path, store=None)
    if _STATE["store"] is None:
        return None
    return HistoryLink(_STATE["store"], machine, zone_scale(machine, advice), content_hash=content_hash,
                       taken_at=when, plots=settings.get("format") == "html", exclude_route=settings.get("route_id"),
                       recording_hash=recording, units=units)


def taken_at(task: Task, reading, clock) -> tuple[str, str]:
    """The reading's time (ISO 8601) and where it came from: the route, the file, or the file's date."""
    from ..history.times import reading_time

    return reading_time(task.time, "route", reading, task.files[0], clock, what=f"{task.name}: time")


def _plot_channels(plots, reading) -> tuple[str, ...] | None:
    """The channels ``route --plots NAMES`` asks for that this reading has (None: the default view)."""
    if not isinstance(plots, str) or not plots.strip():
        return None
    if plots.strip() == "all":
        return ("all",)
    have = {c.name for c in reading.channels}
    chosen = tuple(n for n in dict.fromkeys(p.strip() for p in plots.split(",")) if n in have)
    return chosen or None


def diagnose_task(task: Task, keys, settings: dict) -> dict:
    """Diagnose one task; a bad file becomes ``{"ok": False, "error": ...}``, never an exception.

    ``keys`` is (the diagnosis's key, the hash of its files): ``history.record.reading_key`` and ``content_hash``.
    """
    start = time.perf_counter()
    content_hash, recording = (keys, keys) if isinstance(keys, str) else keys
    try:
        from ..common.units import shown_units
        from ..history.record import record_of
        from ..pipeline import diagnose, document_of
        from ..readings import combine_readings, load_reading, with_phase
        from ..report import render

        reasoner, advice = _reasoner(tuple(settings.get("site", ())))
        machine = _machine(task.machine_file)
        if settings.get("alarms"):
            from ..machine.alarms import with_site_alarms

            machine = with_site_alarms(machine, settings["alarms"])
        options = {k: task.options.get(k) for k in ("speed_rpm", "sample_rate_hz", "unit")}
        reading = combine_readings([load_reading(f, **options, max_samples=settings.get("max_samples"))
                                    for f in task.files])
        reading = with_phase(_map_points(reading, machine, task.points, task), task.phase_1x)
        when, origin = taken_at(task, reading, settings.get("clock"))
        said = settings.get("units") or {}
        units = shown_units(said.get("frequency"), said.get("velocity"), base=reasoner.rulebook.units)
        link = _history_link(settings, machine, advice, content_hash, when, recording, units)
        plots = settings.get("plots", False)
        d = diagnose(reading, machine, reasoner, advice_data=advice, plots=plots is not False and plots is not None,
                     more_facts=link, taken=(when, origin))
        doc = document_of(d, made_at=settings.get("made_at"), plot_channels=_plot_channels(plots, reading))
        if link is not None and link.doc is not None:
            from ..trend.acting import raises_of

            link.govern(doc["verdict"]["urgency"], raises_of(d.reasoning, advice))
            doc["trend"] = link.doc
        record = record_of(doc, d.facts, content_hash=content_hash, taken_at=when, time_from=origin,
                           machine_file=task.machine_file, elapsed_s=time.perf_counter() - start,
                           recording_hash=recording, reasoning=d.reasoning, spectra=d.spectra,
                           forcing=d.forcing)
        if not units.default:       # the store keeps Hz and mm/s RMS; the report shows the chosen units
            trend = {"trend": link.shown_in(units)} if link is not None and "trend" in doc else {}
            doc = document_of(d, made_at=doc["made_at"], plot_channels=_plot_channels(plots, reading),
                              units=units) | trend
        report = render(doc, settings.get("format", "html")) if settings.get("reports", True) else None
        return {"index": task.index, "ok": True, "record": record, "report": report}
    except TellwaveError as exc:
        return {"index": task.index, "ok": False, "file": task.files[0], "error": str(exc)}
    except Exception as exc:  # a bug on one reading must not stop a route of hundreds; it is named as one
        return {"index": task.index, "ok": False, "file": task.files[0],
                "error": f"{Path(task.files[0]).name}: internal error ({exc.__class__.__name__}: {exc}); "
                         "please report it"}
