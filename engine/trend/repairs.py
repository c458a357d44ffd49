"""Findings in a trend: what was found when the machine was opened, and the baseline a repair resets.

A finding records the as-found condition of a component on the day the machine was opened. When a
fault was found (anything but ``nothing-found``), the component was repaired or replaced that day:
readings taken up to that day are of a different machine, at the points that see the component.
Their baseline, change, rates and projections use only the readings taken after the day found; the
earlier readings still show, marked as before the repair. A reading taken on the day found is the
as-found condition (``Store.latest_readings`` judges it), so it counts as before the repair.

A repair resets more points than see the component: every point on the shaft (or, for a mesh, belt or
coupling, the shafts) the component sits on (``points_reset``). Opening a bearing housing takes the rotor
out and puts it back: the fits, the alignment and the balance of that shaft change, and the faulty
bearing's lines, carried along the shaft, fall at the other bearing's point too (the demo pump's
non-drive-end point read the drive-end inner race at 23 dB over its floor before the repair). A point on
another shaft keeps its baseline: a flexible coupling and the next housing stand between.

Which points see a component comes from the machine file of the stored readings (``points`` of
``engine.machine.model``): a bearing is seen by the points that sit at it (by the points on its shaft
when none does); a shaft, an impeller or fan, or a motor by every point on its shaft; a gear mesh, a
belt or a coupling by every point on either of its shafts. When the machine file cannot be read, or does not
name the component, every point of the machine sees it, and the trend says so.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime, timedelta

NOTHING_FOUND = "nothing-found"       # the one finding that repairs nothing (engine.history.findings)
OWN_NAMES = {NOTHING_FOUND: "nothing found", "other": "other (see the notes)"}


@dataclass(frozen=True)
class Repair:
    """One finding as the trend shows it (the rows of one finding judging several readings merged)."""
    found_on: str                       # ISO date
    component: str
    fault: str
    fault_name: str
    stage: int | None
    work_order: str | None
    notes: str | None
    judged: tuple[str, ...]             # times of the readings it judges
    points: tuple[str, ...] | None      # the points that see the component; None: not known, every point
    reset_points: tuple[str, ...] | None = None     # the points a repair of it resets (``points_reset``); None: every

    @property
    def resets(self) -> bool:
        """Whether the component was repaired or replaced on its date (a fault was found)."""
        return self.fault != NOTHING_FOUND

    @property
    def after(self) -> datetime:
        """The first moment of the repaired machine: the start of the day after the day found."""
        return datetime.fromisoformat(self.found_on) + timedelta(days=1)

    def is_after(self, taken_at: str | datetime) -> bool:
        """Whether a reading taken at ``taken_at`` (ISO text or a datetime; its own clock, any offset left
        aside) is of the repaired machine: at or after ``after``. The one cut every part of the trend uses."""
        t = datetime.fromisoformat(taken_at) if isinstance(taken_at, str) else taken_at
        return t.replace(tzinfo=None) >= self.after

    def sees(self, point: str) -> bool:
        """Whether ``point`` sees the component (every point does when that is not known)."""
        return self.points is None or point in self.points

    def resets_at(self, point: str) -> bool:
        """Whether this finding repaired something that resets ``point``'s baseline (``points_reset``)."""
        return self.resets and (self.reset_points is None or point in self.reset_points)

    def shown_at(self, point: str) -> bool:
        """Whether the trend shows this finding beside ``point``: the point sees it or a repair resets it."""
        return self.sees(point) or self.resets_at(point)

    def shown(self) -> dict:
        """The plain dict the trend document carries."""
        return {"found_on": self.found_on, "component": self.component, "fault": self.fault,
                "fault_name": self.fault_name, "stage": self.stage, "work_order": self.work_order,
                "notes": self.notes, "judged": list(self.judged), "resets_baseline": self.resets,
                "points": None if self.points is None else list(self.points),
                "reset_points": None if self.reset_points is None else list(self.reset_points),
                "points_from": "the machine file" if self.points is not None
                else "not known (the machine file cannot be read or does not name the component): every point"}


def points_seeing(machine, component: str) -> tuple[str, ...] | None:
    """The ids of the measurement points of ``machine`` (an ``engine.machine.Machine``) that see
    ``component``; None when the machine does not name it."""
    points = machine.points

    def on(*shafts):
        return tuple(p.id for p in points if p.shaft in shafts)

    for b in machine.bearings:
        if b.id == component:
            return tuple(p.id for p in points if p.at == b.id) or on(b.shaft)
    if component in machine.shaft_speeds_hz:
        return on(component)
    for g in machine.gears:
        if g.id == component:
            return on(g.driving_shaft, g.driven_shaft)
    for belt in machine.belts:
        if belt.id == component:
            return on(belt.driving_shaft, belt.driven_shaft)
    for c in getattr(machine, "couplings", ()):
        if c.id == component:
            return on(*c.shafts)
    for x in (*machine.rotors, *machine.motors):
        if x.id == component:
            return on(x.shaft)
    return None


def points_reset(machine, component: str) -> tuple[str, ...] | None:
    """The ids of the points of ``machine`` whose baseline a repair of ``component`` resets: every point on
    the shaft a bearing sits on (and the points at it), on the shaft of a shaft, rotor or motor, on both
    shafts of a mesh, belt or coupling (``points_seeing`` for those); None when the machine does not name it."""
    for b in machine.bearings:
        if b.id == component:
            return tuple(sorted({p.id for p in machine.points if p.at == b.id or p.shaft == b.shaft}))
    return points_seeing(machine, component)


def machine_of(machine_file: str | None, known: dict):
    """The Machine of ``machine_file``, read once per ``known`` (file -> Machine, None when it cannot be read)."""
    from ..common.errors import TellwaveError
    from ..machine import load_machine

    if machine_file not in known:
        try:
            known[machine_file] = load_machine(machine_file) if machine_file else None
        except TellwaveError:
            known[machine_file] = None
    return known[machine_file]


def repairs_of(findings: list[dict], machine_files: dict[int, str | None], fault_names: dict[str, str],
               machine=None, known: dict | None = None) -> list[Repair]:
    """The findings of one machine (``Store.findings`` rows) as Repairs, oldest first.

    ``machine_files``: reading id -> the machine file it was diagnosed with; ``machine``: a Machine
    to use instead of reading those files (a diagnosis has its own); ``fault_names``: fault id -> name
    from the rulebooks (a fault id not there, ``other`` or ``nothing-found``, shows as itself); ``known``:
    machine file -> Machine (None: unreadable) already read, filled as files are read (``machine_of``).
    """
    merged: dict[tuple, dict] = {}
    known = {} if known is None else known
    for f in findings:
        key = (f["found_on"], f["component"], f["fault"], f["stage"], f["work_order"], f["notes"])
        entry = merged.setdefault(key, {"judged": [], "points": set(), "unknown": False, "reset": set()})
        entry["judged"].append(f["taken_at"])
        m = machine if machine is not None else machine_of(machine_files.get(f["reading_id"]), known)
        seen = None if m is None else points_seeing(m, f["component"])
        if seen is None:
            entry["unknown"] = True
        else:
            entry["points"].update(seen)
            entry["reset"].update(points_reset(m, f["component"]) or ())
    out = []
    for (found_on, component, fault, stage, work_order, notes), e in merged.items():
        name = fault_names.get(fault, OWN_NAMES.get(fault, fault))
        out.append(Repair(found_on, component, fault, name, stage, work_order, notes,
                          tuple(sorted(set(e["judged"]))), None if e["unknown"] else tuple(sorted(e["points"])),
                          None if e["unknown"] else tuple(sorted(e["reset"]))))
    out.sort(key=lambda r: (r.found_on, r.component, r.fault))
    return out


def reset_of(repairs: list[Repair], point: str) -> Repair | None:
    """The latest repair that resets ``point``'s baseline (``Repair.resets_at``), or None."""
    resets = [r for r in repairs if r.resets_at(point)]
    return resets[-1] if resets else None
