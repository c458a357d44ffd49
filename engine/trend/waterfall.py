"""Spectra over time at one point: a waterfall of its stored surveys and an overlay of two, as plain data.

Each stored reading (schema 7 on) keeps a compact velocity spectrum per
channel (``engine.analysis.compact``: the peak of each group of lines) and the
forcing frequencies the analysis named. This module reads them from the store
(``Store.spectra``), puts two spectra on one grid to list the lines that
changed most, and draws the figures with ``engine.report.svg``: the waterfall
oldest at the back and each survey raised above the one before, the overlay
of two readings; forcing frequencies marked by name (1X, 2X, BPFO...) with a
legend. A reading stored before schema 7 has no spectrum, and the section
says so.

The store keeps Hz and mm/s RMS (fields named ``_hz`` and ``_mm_s``, and ``before``, ``after`` and
``change`` in the section's ``unit``); ``shown`` beside them gives the same numbers in the units a user
chose (``engine.common.units.ShownUnits``), which the words and the figures use. Each kept line is a
line's amplitude, so a peak is sqrt(2) x its RMS; orders are of the point's shaft at each reading's own
speed (the marks and the changes at the later reading's), Hz when a reading stored no speed.
"""

from __future__ import annotations

from datetime import datetime

import numpy as np

from ..common.errors import UsageError
from ..common.units import ShownUnits

MOST_SURVEYS = 24         # the latest surveys a waterfall shows
CHANGES_LISTED = 8        # the lines that changed most, listed per comparison
HARMONICS = (1, 2, 3)     # orders of the point's shaft marked
NO_SPECTRUM = ("stored before schema 7, which keeps no spectrum; diagnose it again "
               "(`tellwave route ... --again`) to add one")
SAME_LINE = 0.001         # another shaft's order this close to the point's own shaft order is the same line
MATCH_FRACTION = 0.005    # a line within one kept line and 0.5 % of a forcing frequency is named by it
ORDERS_DRAWN = 12         # the figures show at least 12 orders of the point's shaft
FORCING_MARGIN = 1.3      # and 30 % beyond its highest marked forcing frequency
COLORS = ("#7a7a7a", "#1a1a1a")     # overlay: the earlier reading grey, the later black
BEFORE_REPAIR = "#a8a8a8"           # waterfall: the surveys before the repair that reset the point


def marks_for(forcing: list[dict], shaft: str | None, at: str | None, f_max_hz: float,
              seen: set[str] | None = None) -> list[dict]:
    """The forcing frequencies to mark at a point below ``f_max_hz``: 1X, 2X, 3X of the shaft under the point
    and of every other shaft the point sees (``seen``: ``Machine.shafts_seen_from``; labelled with the
    shaft's name, ``1X input``), the defect rates of the bearing it sits at, and the gear, belt, vane, blade
    and electrical lines of the shafts it sees (of any shaft for meshes and belts, which both shafts carry).
    Each: label, name, component, frequency_hz, what (words for the legend)."""
    seen = {shaft} | (seen or set()) if shaft is not None else (seen or set())
    out = []
    for f in forcing:
        hz, family = f["frequency_hz"], f["family"]
        if f["name"] == "1X" and f["component"] in seen:
            own = f["component"] == shaft
            out += [{"label": f"{k}X" if own else f"{k}X {f['component']}", "name": f"{k}X",
                     "component": f["component"], "frequency_hz": k * hz,
                     "what": f"{'running speed' if k == 1 else f'{k} x running speed'} of shaft {f['component']}"
                     + ("" if own else " (seen from this point's shaft)"), "seen_from": not own}
                    for k in HARMONICS]
        elif family == "bearing" and f["component"] == at:
            out.append({"label": f["name"], "name": f["name"], "component": at, "frequency_hz": hz,
                        "what": f"{f['name']} of bearing {at}"})
        elif family not in ("shaft", "bearing") and (f["shaft"] in seen or family in ("gear", "belt")):
            out.append({"label": f["name"], "name": f["name"], "component": f["component"], "frequency_hz": hz,
                        "what": f"{f['name']} of {f['component']}",
                        "seen_from": f["shaft"] != shaft and family not in ("gear", "belt")})
    own = [m["frequency_hz"] for m in out if _is_order(m["name"]) and m["component"] == shaft]
    out = [m for m in out if not (_is_order(m["name"]) and m["component"] != shaft      # a shaft coupled at the
                                  and any(abs(m["frequency_hz"] - f) <= SAME_LINE * f for f in own))]   # same speed
    listed: set[tuple[str, float]] = set()
    kept = []
    for m in sorted(out, key=lambda m: m["frequency_hz"]):
        key = (m["label"], round(m["frequency_hz"], 3))
        if 0 < m["frequency_hz"] <= f_max_hz and key not in listed:
            listed.add(key)
            kept.append(m)
    return kept


def on_grid(amplitude: np.ndarray, step_hz: float, resolution_hz: float, grid_step_hz: float, lines: int) -> np.ndarray:
    """A compact spectrum carried onto a coarser grid (``grid_step_hz`` per line, ``lines`` lines) by the
    peak of the lines that fall in each: a tone keeps its amplitude."""
    centres = (np.arange(len(amplitude)) + 0.5) * step_hz - 0.5 * resolution_hz
    index = np.floor(centres / grid_step_hz).astype(int)
    keep = (index >= 0) & (index < lines)
    out = np.zeros(lines)
    np.maximum.at(out, index[keep], amplitude[keep].astype(float))
    return out


def largest_changes(a: dict, b: dict, marks: list[dict], n: int = CHANGES_LISTED) -> list[dict]:
    """The ``n`` lines whose amplitude changed most from reading ``a`` to reading ``b`` (rows of
    ``Store.spectra``), on the coarser of their grids up to the lower of their last lines, each at least
    three lines from a larger one: frequency_hz, before, after, change (mm/s RMS), and the forcing
    frequency, harmonic or 1X sideband it lies at (within one line and 0.5 %), if any."""
    step = max(a["step_hz"], b["step_hz"])
    top = min(len(a["amplitudes"]) * a["step_hz"], len(b["amplitudes"]) * b["step_hz"])
    lines = int(top / step)
    if lines < 1:
        return []
    before = on_grid(a["amplitudes"], a["step_hz"], a["resolution_hz"], step, lines)
    after = on_grid(b["amplitudes"], b["step_hz"], b["resolution_hz"], step, lines)
    change = after - before
    taken: list[int] = []
    for i in np.argsort(-np.abs(change), kind="stable"):
        if len(taken) == n or change[i] == 0:
            break
        if all(abs(int(i) - j) > 3 for j in taken):
            taken.append(int(i))
    coarse = a if a["step_hz"] >= b["step_hz"] else b
    names = named_lines(marks)
    out = []
    for i in taken:
        hz = (i + 0.5) * step - 0.5 * coarse["resolution_hz"]
        at, also = name_of(hz, step, names)
        out.append({"frequency_hz": round(hz, 3), "before": _r(before[i]), "after": _r(after[i]),
                    "change": _r(change[i]), "at": at, "also_near": also})
    return out


def name_of(hz: float, step_hz: float, names: list[tuple[float, str, int]]) -> tuple[str | None, list[str]]:
    """The name of a line at ``hz`` on a grid of ``step_hz`` (``named_lines``), and the other names within
    reach (one line and 0.5 %).

    Names as close as the nearest (within half a line of it: the grid cannot tell them apart) go by the
    simpler explanation: a shaft order (1X, 2X, 3X of any shaft the point sees) before another forcing
    frequency, before a harmonic of one (2xBPFI, 3xBSF), before a 1X sideband; then the nearer. A shaft's
    2X is a line of every machine; a bearing's third harmonic at the same place is the rarer claim.
    """
    near = sorted((abs(f - hz), rank, label) for f, label, rank in names if abs(f - hz) <= step_hz + MATCH_FRACTION * f)
    if not near:
        return None, []
    closest = near[0][0]
    best = min((x for x in near if x[0] - closest <= 0.5 * step_hz), key=lambda x: (x[1], x[0]))
    also = []
    for x in near:
        if x is not best and x[2] not in also and x[2] != best[2]:
            also.append(x[2])
    return best[2], also


def _is_order(name: str) -> bool:
    return name.endswith("X") and name[:-1].isdigit()


def named_lines(marks: list[dict]) -> list[tuple[float, str, int]]:
    """(Hz, name, rank) of the lines a change can be named by: each mark (rank 0 for a shaft order, 1 for
    another forcing frequency), the 2nd and 3rd harmonics of the forcing frequencies that are not shaft orders
    (2xBPFI, rank 2), and their sidebands at the point's own 1X (BPFI-1X, BPFI+1X, rank 3)."""
    one_x = next((m["frequency_hz"] for m in marks if m["label"] == "1X"), None)
    out = [(m["frequency_hz"], m["label"], 0 if _is_order(m["name"]) else 1) for m in marks]
    for m in marks:
        if _is_order(m["name"]):
            continue
        out += [(k * m["frequency_hz"], f"{k}x{m['label']}", 2) for k in (2, 3)]
        if one_x:
            out += [(m["frequency_hz"] - one_x, f"{m['label']}-1X", 3),
                    (m["frequency_hz"] + one_x, f"{m['label']}+1X", 3)]
    return out


def _r(x: float) -> float:
    return float(f"{float(x):.4g}")


def _one_x(row: dict) -> float | None:
    """The speed (Hz) of the point's shaft when ``row`` was taken, from its stored forcing frequencies."""
    return next((f["frequency_hz"] for f in row.get("forcing") or ()
                 if f["name"] == "1X" and f["component"] == row.get("shaft")), None)


class _Shown:
    """The section's numbers in ``units``: frequencies per reading (orders of its own shaft speed),
    velocities of single lines (peak = sqrt(2) x RMS)."""

    def __init__(self, units: ShownUnits, rows: list[dict]):
        self.units = units
        # orders need every reading's shaft speed: without one, the section stays in Hz and says so
        self.orders = units.frequency == "orders" and bool(rows) and all(_one_x(r) for r in rows)
        self.frequency_label = "Hz" if units.frequency == "orders" and not self.orders else units.frequency_label()

    def f(self, hz: float, row: dict) -> float:
        if self.units.frequency == "orders" and not self.orders:
            return hz
        v = self.units.frequency_value(hz, _one_x(row))
        return hz if v is None else v

    def v(self, mm_s: float) -> float:
        return self.units.velocity_value(mm_s, line=True)

    def spectrum(self, row: dict) -> tuple[np.ndarray, np.ndarray]:
        """A reading's kept lines as the figures draw them: frequencies and amplitudes in the shown units
        (both conversions are linear: one factor each)."""
        return _frequencies(row) * self.f(1.0, row), row["amplitudes"].astype(float) * self.v(1.0)

    def about(self, rows: list[dict]) -> dict:
        length = self.units.velocity_label(True).split(" ")[0]
        shaft = rows[-1].get("shaft") if rows else None
        return {"frequency": self.frequency_label, "velocity": self.units.velocity_label(True), "length": length,
                "orders_of": shaft if self.orders else None,
                "axis": f"orders of {shaft}" if self.orders else self.frequency_label}


def _when(row: dict) -> str:
    return datetime.fromisoformat(row["taken_at"]).strftime("%Y-%m-%d %H:%M")


def _by_reading(rows: list[dict]) -> list[dict]:
    """One row per reading: its first channel with a spectrum, else its first channel."""
    out: dict[int, dict] = {}
    for r in rows:
        if r["id"] not in out or (out[r["id"]]["amplitudes"] is None and r["amplitudes"] is not None):
            out[r["id"]] = r
    return sorted(out.values(), key=lambda r: (r["taken_at"], r["id"]))


def _listed(r: dict, shown: _Shown | None = None) -> dict:
    """A reading as the section lists it: no spectrum, and why, or its lines (and, with ``shown``, its
    spacing and largest line in the shown units)."""
    entry = {"id": r["id"], "taken_at": r["taken_at"], "channel": r["channel"], "has_spectrum": False,
             "why": None, "step_hz": None, "lines": 0, "largest_mm_s": None, "largest_at_hz": None, "amplitudes": None,
             "shown": None}
    if r["amplitudes"] is None:
        entry["why"] = (NO_SPECTRUM if not r["spectra_kept"] else
                        "its spectrum is damaged in the store" if r["damaged"] else
                        "no spectrum kept: the channel's scale was not trusted")
        return entry
    a = r["amplitudes"]
    k = int(np.argmax(a))
    entry.update(has_spectrum=True, step_hz=r["step_hz"], lines=len(a), largest_mm_s=_r(a[k]),
                 largest_at_hz=round((k + 0.5) * r["step_hz"] - 0.5 * r["resolution_hz"], 3),
                 amplitudes=[_r(v) for v in a])
    if shown is not None:
        entry["shown"] = {"step": shown.f(r["step_hz"], r), "largest": shown.v(entry["largest_mm_s"]),
                          "largest_at": shown.f(entry["largest_at_hz"], r)}
    return entry


def _seen_shafts(store, reading_id: int, shaft: str | None, machines: dict) -> set[str] | None:
    """The shafts a point on ``shaft`` sees (``Machine.shafts_seen_from``), from the machine file the reading
    was diagnosed with (read once per ``machines``: ``repairs.machine_of``); None when that file cannot be
    read or does not name the shaft."""
    from .repairs import machine_of

    row = store.reading(reading_id)
    if not shaft or row is None or not row.get("machine_file"):
        return None
    machine = machine_of(row["machine_file"], machines)
    if machine is None:
        return None
    return machine.shafts_seen_from(shaft) if shaft in machine.shaft_speeds_hz else None


def spectra_section(store, machine: str, point: str, *, waterfall: bool = True,
                    compare: tuple[int, int] | None = None, plots: bool = False, repair=None,
                    units: ShownUnits | None = None, machines: dict | None = None) -> dict:
    """Spectra over time at ``point``: the readings (with their compact spectra, or why none), the forcing
    frequencies marked, the largest changes per line (between the two readings of ``compare``, or from the
    first survey of the waterfall after ``repair``, the latest repair that reset the point's baseline
    (``repairs.reset_of``), to the latest: never across a repair), and with ``plots`` the SVG figures, the
    surveys before the repair in grey. ``compare`` ids must be stored readings of ``machine`` at ``point``
    (a UsageError otherwise). ``units``: what ``shown`` and the figures use (None: Hz and mm/s RMS).
    ``machines``: machine file -> Machine already read (``repairs.machine_of``), shared by a document's points."""
    rows = _by_reading(store.spectra(machine, point))
    section: dict = {"point": point, "quantity": "velocity", "unit": "mm/s RMS", "readings": [],
                     "marks": [], "marks_from": None, "waterfall": None, "compare": None,
                     "without_spectrum": 0, "surveys_left_out": 0, "changes": [], "changes_from": None,
                     "changes_to": None, "repair": None, "changes_why": None, "shafts_seen": None}
    if compare is not None:
        known = {r["id"]: r for r in rows}
        missing = [i for i in compare if i not in known]
        if missing:
            raise UsageError(f"--compare: reading {missing[0]} is not a stored reading of {machine} at point "
                             f"{point} (`tellwave history` lists the ids)")
        shown = [known[i] for i in compare]
    else:
        shown = rows[-MOST_SURVEYS:] if waterfall else []
        section["surveys_left_out"] = len(rows) - len(shown)
    with_spectrum = [r for r in shown if r["amplitudes"] is not None]
    worded = _Shown(units or ShownUnits(), with_spectrum)
    section["shown"] = worded.about(with_spectrum)
    section["readings"] = [_listed(r, worded) for r in shown]
    section["without_spectrum"] = len(shown) - len(with_spectrum)
    if not with_spectrum:
        return section
    latest = with_spectrum[-1]
    f_max = max(len(r["amplitudes"]) * r["step_hz"] for r in with_spectrum)
    seen = _seen_shafts(store, latest["id"], latest["shaft"], {} if machines is None else machines)
    marks = marks_for(latest["forcing"], latest["shaft"], latest["at"], f_max, seen)
    section.update(marks=[m | {"shown": {"frequency": worded.f(m["frequency_hz"], latest)}} for m in marks],
                   marks_from={"id": latest["id"], "taken_at": latest["taken_at"]},
                   shafts_seen=None if seen is None else sorted(seen))

    def changes(a, b):
        return [c | {"shown": {"frequency": worded.f(c["frequency_hz"], b), "before": worded.v(c["before"]),
                               "after": worded.v(c["after"]), "change": worded.v(c["change"])}}
                for c in largest_changes(a, b, marks)]
    if compare is not None:
        a, b = shown
        both = a["amplitudes"] is not None and b["amplitudes"] is not None
        section["compare"] = {"ids": list(compare), "changes": changes(a, b) if both else [],
                              "svg": _overlay(point, a, b, marks, worded) if plots and both else None}
        section.update(changes=section["compare"]["changes"], changes_from=a["id"], changes_to=b["id"])
    else:
        since = [r for r in with_spectrum if repair is None or repair.is_after(r["taken_at"])]
        first = since[0] if since else None
        if repair is not None:
            section["repair"] = {"found_on": repair.found_on, "component": repair.component,
                                 "fault_name": repair.fault_name,
                                 "surveys_before": len(with_spectrum) - len(since), "surveys_after": len(since)}
        words = f"the repair of {repair.component} found {repair.found_on}" if repair is not None else ""
        if first is None:
            section["changes_why"] = f"no survey with a spectrum after {words} yet"
        elif first is latest:
            section["changes_why"] = (f"one survey since {words}: the next one shows what changed" if repair
                                      else "one survey: the next one shows what changed")
        section["waterfall"] = {
            "surveys": len(with_spectrum), "first": None if first is None else first["id"], "last": latest["id"],
            "changes": changes(first, latest) if first is not None and first is not latest else [],
            "svg": _waterfall(point, with_spectrum, marks, worded, repair, {r["id"] for r in since}) if plots
            else None}
        section.update(changes=section["waterfall"]["changes"], changes_from=None if first is None else first["id"],
                       changes_to=latest["id"])
    return section


def _frequencies(r: dict) -> np.ndarray:
    return (np.arange(len(r["amplitudes"])) + 0.5) * r["step_hz"] - 0.5 * r["resolution_hz"]


def _svg_marks(marks: list[dict], shown: _Shown, latest: dict):
    from ..report.svg import Mark

    return [Mark(shown.f(m["frequency_hz"], latest), m["label"], strong=m["name"] == "1X") for m in marks]


def drawn_to_hz(rows: list[dict], marks: list[dict]) -> float:
    """The highest frequency the figures draw: 12 orders of the point's shaft or 1.3 times its highest marked
    forcing frequency (of its own shaft, bearing, meshes and belts: another shaft's rotor bar pass would squeeze
    the figure), whichever is higher, within what is stored (the tables cover everything stored)."""
    stored = max(float(_frequencies(r)[-1]) for r in rows)
    one_x = next((m["frequency_hz"] for m in marks if m["label"] == "1X"), 0.0)
    wanted = max(ORDERS_DRAWN * one_x, FORCING_MARGIN * max((m["frequency_hz"] for m in marks
                                                             if not m.get("seen_from")), default=0.0))
    return min(stored, wanted) if wanted > 0 else stored


def _waterfall(point: str, rows: list[dict], marks: list[dict], shown: _Shown, repair=None,
               after: set[int] | None = None) -> str:
    """The waterfall: the oldest survey at the top (the back), each later one lower and drawn over it; the
    surveys before ``repair`` in grey, below a dashed line naming the repair (``after``: the ids of the
    surveys after it, every one when None)."""
    from ..report.svg import Level, Plot, Series, render

    tallest = shown.v(max(float(np.max(r["amplitudes"])) for r in rows))
    rise = 0.6 * tallest if tallest > 0 else 1.0
    n = len(rows)
    after = {r["id"] for r in rows} if after is None else after
    series, ticks = [], []
    for k, r in enumerate(rows):                      # oldest first: drawn first, so later ones cover it
        offset = (n - 1 - k) * rise
        before = r["id"] not in after
        x, y = shown.spectrum(r)
        series.append(Series(x, y + offset, width=0.7,
                             color="#1a1a1a" if k == n - 1 else BEFORE_REPAIR if before else "#2a5d8a",
                             fill_to=offset))
        ticks.append((offset, _when(r)[:10]))
    f_max = shown.f(drawn_to_hz(rows, marks), rows[-1])
    repaired, levels = "", []
    if repair is not None:
        repaired = f"; grey: before the repair of {repair.component} found {repair.found_on}"
        last_before = max((k for k, r in enumerate(rows) if r["id"] not in after), default=None)
        if last_before is not None:           # a dashed line at the base of the last survey before the repair
            levels.append(Level((n - 1 - last_before) * rise, f"repair {repair.found_on} ({repair.component}): "
                                "the surveys from here up are before it"))
    plot = Plot(f"{point}: velocity spectra of {n} surveys, oldest at the back, each {rise:.3g} "
                f"{shown.units.velocity_label(True)} above the next{repaired}",
                f"frequency, {shown.about(rows)['axis']}", "",
                series=series, marks=_svg_marks(marks, shown, rows[-1]), levels=levels, xlim=(0.0, f_max),
                ylim=(0.0, (n - 1) * rise + 1.15 * tallest if tallest > 0 else n),
                height=min(640, 160 + 26 * n), ytick_labels=ticks)
    return render(plot)


def _overlay(point: str, a: dict, b: dict, marks: list[dict], shown: _Shown) -> str:
    """Two readings' spectra on one axis: the first grey, the second black."""
    from ..report.svg import Plot, Series, render

    f_max = shown.f(drawn_to_hz([a, b], marks), b)
    plot = Plot(f"{point}: velocity spectrum of reading {a['id']} ({_when(a)}, grey) and {b['id']} "
                f"({_when(b)}, black)", f"frequency, {shown.about([a, b])['axis']}", shown.units.velocity_label(True),
                series=[Series(*shown.spectrum(r), color=c, width=0.8, label=f"reading {r['id']} ({_when(r)})")
                        for r, c in zip((a, b), COLORS)],
                marks=_svg_marks(marks, shown, b), xlim=(0.0, f_max), height=300)
    return render(plot)


def parse_compare(text: str) -> tuple[int, int]:
    """``--compare ID1,ID2`` as two reading ids; a UsageError for anything else."""
    parts = [p.strip() for p in text.split(",")]
    if len(parts) != 2 or not all(p.isdigit() and 0 < len(p) <= 18 for p in parts):
        raise UsageError(f"--compare {text!r}: expected two stored reading ids, e.g. --compare 12,40 "
                         "(`tellwave history MACHINE` lists them)")
    a, b = int(parts[0]), int(parts[1])
    if a == b:
        raise UsageError(f"--compare {text!r}: name two different readings")
    return a, b
