"""What each purpose is for at a point: the faults it must show, on which component and shaft.

A target is one fault on one component. The checks say whether settings can
show it (by the evidence ``ROUTES`` each need gates), the proof simulates it,
and ``shown`` asks the Reasoner whether a diagnosis would name it. Purposes:
``severity`` (overall level, ISO 20816-3), ``bearing`` (rolling-bearing
defects by envelope analysis), ``gear`` (the mesh and its sidebands),
``shaft`` (slow shafts and looseness) and ``electrical`` (induction motors).
"""

from __future__ import annotations

from dataclasses import dataclass

from ..machine import Bearing, GearMesh, Machine, Motor, Point

PURPOSE_TITLES = {
    "severity": "overall severity (ISO 20816-3)",
    "bearing": "rolling bearings (envelope analysis)",
    "gear": "gear mesh and sidebands",
    "shaft": "slow shafts and looseness",
    "electrical": "electrical (induction motor)",
}
BEARING_SIGNATURES = ("outer-race", "inner-race", "rolling-element", "cage")
ENVELOPE_DEFECT = {"outer-race": "BPFO", "inner-race": "BPFI", "rolling-element": "BSF", "cage": "FTF"}

# The ways the rulebooks reach each fault that the checks gate: (route name, the rule or advice step it
# stands for). A need names the routes it blocks or weakens; a fault all of whose routes are blocked
# cannot be shown. Only names live here: whether a record shows the fault is the Reasoner's answer.
ROUTES: dict[str, tuple[tuple[str, str], ...]] = {
    "severity": (("iso-band", "ISO 20816-3 zone of the overall level (advice)"),),
    "outer-race": (("envelope", "bearing.tones.envelope"),),
    "inner-race": (("envelope", "bearing.tones.envelope"),),
    "rolling-element": (("envelope", "bearing.tones.envelope"),),
    "cage": (("envelope", "bearing.tones.envelope-cage"),),
    "gear-tooth": (("synchronous-average", "gear.tooth.once-per-rev"),),
    "gear-eccentricity": (("sidebands", "gear.eccentricity.sidebands"),),
    "gear-wear": (("mesh-harmonics", "gear.wear.mesh-harmonics"), ("sidebands-both-shafts", "gear.wear.both-shafts")),
    "looseness": (("harmonics", "shaft.looseness.harmonics"), ("half-orders", "shaft.looseness.half-orders")),
    "stator": (("twice-line", "electrical.stator.twice-line"),),
    "rotor-bar": (("pole-pass", "electrical.rotor-bar.pole-pass"),),
}


@dataclass(frozen=True)
class Target:
    """One fault to show: ``signature`` keys the evidence routes, ``fault`` is the simulator's and the
    rulebooks' fault id."""

    purpose: str
    signature: str
    fault: str
    component: str
    shaft: str                 # the shaft whose turns matter: the faulty gear's, the bearing's
    gear_side: str = "driving"

    @property
    def label(self) -> str:
        """The target in words: the fault on its component (with the gear's shaft for a tooth or eccentricity)."""
        if self.signature == "severity":
            return f"overall level on {self.component}"
        if self.purpose == "gear" and self.signature != "gear-wear":
            return f"{self.signature} on {self.component} ({self.shaft} gear)"
        return f"{self.signature} on {self.component}"


def bearings_at(machine: Machine, point: Point) -> list[Bearing]:
    """The bearing the point sits on, or every bearing of its shaft when it sits on a shaft."""
    own = [b for b in machine.bearings if b.id == point.at]
    return own or [b for b in machine.bearings if b.shaft == point.shaft]


def meshes_at(machine: Machine, point: Point) -> list[GearMesh]:
    """The gear meshes with a gear on the point's shaft."""
    return [g for g in machine.gears if point.shaft in (g.driving_shaft, g.driven_shaft)]


def motors_at(machine: Machine, point: Point) -> list[Motor]:
    """The motors on the point's shaft."""
    return [m for m in machine.motors if m.shaft == point.shaft]


def purposes_at(machine: Machine, point: Point) -> list[str]:
    """The purposes that apply at ``point``, in a fixed order."""
    out = ["severity"]
    if bearings_at(machine, point):
        out.append("bearing")
    if meshes_at(machine, point):
        out.append("gear")
    out.append("shaft")
    if motors_at(machine, point):
        out.append("electrical")
    return out


def targets_at(machine: Machine, point: Point, purpose: str) -> list[Target]:
    """The faults ``purpose`` must show at ``point``."""
    if purpose == "severity":
        # a fault rich in 1X harmonics and half orders spreads over the ISO band
        return [Target("severity", "severity", "looseness-rotating", point.shaft, point.shaft)]
    if purpose == "bearing":
        return [Target("bearing", sig, sig, b.id, b.shaft)
                for b in bearings_at(machine, point) for sig in BEARING_SIGNATURES]
    if purpose == "gear":
        out = []
        for g in meshes_at(machine, point):
            for side, shaft in (("driving", g.driving_shaft), ("driven", g.driven_shaft)):
                out += [Target("gear", "gear-tooth", "gear-tooth", g.id, shaft, side),
                        Target("gear", "gear-eccentricity", "gear-eccentricity", g.id, shaft, side)]
            out.append(Target("gear", "gear-wear", "gear-wear", g.id, g.driving_shaft))
        return out
    if purpose == "shaft":
        return [Target("shaft", "looseness", "looseness-rotating", point.shaft, point.shaft)]
    if purpose == "electrical":
        return [Target("electrical", sig, sig, m.id, m.shaft) for m in motors_at(machine, point)
                for sig in ("stator", "rotor-bar")]
    raise ValueError(f"unknown purpose {purpose!r}")
