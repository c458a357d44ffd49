"""Where a 1X phase reading sits on the machine, and which two readings are compared.

A phase reading names a measurement point of the machine (which has its direction)
or a bearing with a direction. ``phase_place`` resolves it to a ``PhasePlace``: the
bearing (or shaft), the shaft it carries and the direction. ``phase_pairs`` is the
one home of the pairs whose phase difference the trade reads (common practice, see
``rulebooks/phase.yaml`` for the sources):

- ``horizontal-vertical``: the two radial directions at one bearing;
- ``across coupling``: the same direction on either side of a coupling, at the
  coupling-side bearing of each shaft;
- ``end to end``: the axial direction at two bearings of one shaft.

The couplings are the machine's (``Machine.couplings``: those its file names, and an
unnamed one for each shaft ``same_as`` another). A shaft's coupling-side bearing is the one whose id names
the drive end (a word ``de``: ``motor_de``, ``pump-de``, ``DE``); a shaft with one
bearing has it; otherwise every bearing of the shaft counts.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from .model import Machine

RELATIONS = ("horizontal-vertical", "across coupling", "end to end")   # the pairs' names, as facts give them


@dataclass(frozen=True, order=True)
class PhasePlace:
    """Where a phase reading sits: bearing (or shaft) ``location`` on ``shaft``, in ``direction``."""

    location: str
    shaft: str
    direction: str


@dataclass(frozen=True)
class PhasePair:
    """Two places whose 1X phases the trade compares, and what relation joins them."""

    relation: str
    first: PhasePlace
    second: PhasePlace
    coupling: str = ""      # the coupling between them, for a pair across one


def phase_place(machine: Machine, point: str, direction: str | None) -> PhasePlace | str:
    """The place of a phase reading at ``point`` (a point or bearing id) in ``direction``,
    or a one-line problem when the machine has no such place."""
    for p in machine.points:
        if p.id == point:
            if direction is not None and direction != p.direction:
                return f"point {point!r} is {p.direction} in the machine file, not {direction}"
            return PhasePlace(p.at, p.shaft, p.direction)
    bearing_shaft = {b.id: b.shaft for b in machine.bearings}
    if point in bearing_shaft or point in machine.shaft_speeds_hz:
        if direction is None:
            return f"{point!r} is a bearing or shaft, not a point: give its direction"
        return PhasePlace(point, bearing_shaft.get(point, point), direction)
    known = ", ".join([p.id for p in machine.points] + list(bearing_shaft)) or "none"
    return f"machine {machine.name!r} has no point or bearing {point!r} (points and bearings: {known})"


def coupling_side(machine: Machine, shaft: str) -> tuple[str, ...]:
    """The bearings of ``shaft`` next to its coupling (see the module's note)."""
    own = [b.id for b in machine.bearings if b.shaft == shaft]
    named = [b for b in own if "de" in re.split(r"[^a-z0-9]+", b.lower())]
    return tuple(named or own or [shaft])


def phase_pairs(machine: Machine, places) -> list[PhasePair]:
    """Every pair of ``places`` whose phase difference the rules read, each once, in a fixed order."""
    have = sorted(set(places))
    pairs: list[PhasePair] = []
    for a in have:
        for b in have:
            if a >= b:
                continue
            if a.location == b.location and {a.direction, b.direction} == {"horizontal", "vertical"}:
                first, second = (a, b) if a.direction == "horizontal" else (b, a)
                pairs.append(PhasePair("horizontal-vertical", first, second))
            elif a.shaft == b.shaft and a.location != b.location and a.direction == b.direction == "axial":
                pairs.append(PhasePair("end to end", a, b))
    for coupling in machine.couplings:
        one, other = coupling.shafts
        near_one, near_other = coupling_side(machine, one), coupling_side(machine, other)
        for a in have:
            for b in have:
                if (a.shaft == one and b.shaft == other and a.direction == b.direction
                        and a.location in near_one and b.location in near_other):
                    pairs.append(PhasePair("across coupling", a, b, coupling.id))
    return pairs


def folded_difference_deg(a_deg: float, b_deg: float) -> float:
    """The difference of two phases folded to 0..180 degrees (which of the two leads is not kept)."""
    return abs((a_deg - b_deg + 180.0) % 360.0 - 180.0)
