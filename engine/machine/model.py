"""Machine descriptions: a YAML drive train -> a checked ``Machine`` value.

A machine file lists shafts with their speeds and the components on them
(rolling bearings, gear meshes, belt drives, couplings, impellers and fan
rotors, induction motors) and the measurement points. The file is checked against
``common/schemas/machine.schema.json`` and then for consistency (every reference
names a component that exists, shaft speeds resolve without a cycle, gear and
belt ratios agree with stated speeds). Every problem is one ``MachineError``
that names the file, the line and the field.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType

from ..common.errors import MachineError
from ..common.yamlfile import YamlDocument, numbers_as_names, read_yaml, validate

RATIO_TOLERANCE = 0.01  # a stated speed may differ from a gear/belt ratio by 1 %
MIN_SPEED_RPM = 0.1       # slower than a kiln or a thickener rake: not a machine this tool is for
MAX_SPEED_RPM = 600_000   # the schema's limit on a stated speed, also for derived ones
MIN_ELEMENT_TO_PITCH = 0.01  # d/D of real rolling bearings is about 0.1 to 0.4 (common practice)
FLUID_SLIP_MAX = 0.10     # a fluid coupling slips 2 to 5 % at full load (from memory); more is a wrong speed

# How a coupling takes misalignment (machine.schema.json; README, "Couplings"): flexible (not said
# which), jaw (elastomer spider between jaws), tyre (elastomer tyre), pin (pins in rubber bushes), grid
# (steel grid in grooved hubs, greased), gear (toothed hubs in a sleeve, greased), disc (laminated steel
# disc packs), rigid (no misalignment taken), fluid (oil-filled, slips), unknown (a shaft's ``same_as``
# with no coupling named).
COUPLING_TYPES = ("flexible", "jaw", "tyre", "pin", "grid", "gear", "disc", "rigid", "fluid", "unknown")

@dataclass(frozen=True)
class Bearing:
    """A rolling bearing on a shaft: its geometry, or its defect-rate multiples given directly."""
    id: str
    shaft: str
    model: str | None
    rolling_elements: int | None
    element_diameter: float | None
    pitch_diameter: float | None
    contact_angle_deg: float
    multiples: Mapping[str, float] | None  # bpfo, bpfi, bsf, ftf given directly

@dataclass(frozen=True)
class GearMesh:
    """A pair of gears in mesh: the shaft and tooth count of each side."""
    id: str
    driving_shaft: str
    driving_teeth: int
    driven_shaft: str
    driven_teeth: int

@dataclass(frozen=True)
class BeltDrive:
    """A belt between two sheaves: the shafts, the sheave diameters and the belt's length."""
    id: str
    driving_shaft: str
    driving_diameter_mm: float
    driven_shaft: str
    driven_diameter_mm: float
    belt_length_mm: float

@dataclass(frozen=True)
class Coupling:
    """A coupling joining two shafts end to end: its id, the two shafts (driving side first) and its type
    (``COUPLING_TYPES``). ``named`` is False for the coupling a shaft's ``same_as`` implies."""
    id: str
    shafts: tuple[str, str]
    type: str
    named: bool = True

@dataclass(frozen=True)
class Rotor:
    """An impeller or fan wheel on a shaft, with its number of vanes or blades, and whether it is
    overhung (outboard of both its shaft's bearings) rather than between them."""
    id: str
    shaft: str
    type: str  # "impeller" or "fan"
    vanes: int
    overhung: bool = False

@dataclass(frozen=True)
class Motor:
    """An induction motor on a shaft: line frequency, poles and rotor bars (electrical rates)."""
    id: str
    shaft: str
    line_frequency_hz: float
    poles: int
    rotor_bars: int | None

@dataclass(frozen=True)
class SpeedRange:
    """The speeds a variable-speed drive runs one shaft at, as the machine file states them."""

    shaft: str
    low_rpm: float
    high_rpm: float

DIRECTIONS = ("horizontal", "vertical", "axial")     # a point's direction (machine.schema.json)

@dataclass(frozen=True)
class Point:
    """A measurement point: the bearing or shaft it sits at, that shaft and the sensor's direction."""
    id: str
    at: str          # bearing id or shaft id
    shaft: str       # the shaft that point sits on
    direction: str   # horizontal, vertical or axial

@dataclass(frozen=True)
class Machine:
    """A checked drive train with the nominal speed of every shaft resolved."""

    name: str
    source: str
    plant: str | None
    iso_group: int | None
    support: str | None
    lubrication: str | None
    shaft_speeds_hz: Mapping[str, float]  # nominal, in file order
    driver_shaft: str                       # the shaft whose speed is stated, not derived
    bearings: tuple[Bearing, ...] = ()
    gears: tuple[GearMesh, ...] = ()
    belts: tuple[BeltDrive, ...] = ()
    couplings: tuple[Coupling, ...] = ()
    rotors: tuple[Rotor, ...] = ()
    motors: tuple[Motor, ...] = ()
    points: tuple[Point, ...] = ()
    descriptions: Mapping[str, str] = field(default_factory=dict)
    speed_range: SpeedRange | None = None   # a variable-speed drive's range, when the file states one
    alarms: tuple = ()                      # site limits per point (``alarms.Alarm``), the machine file's and --alarms
    joined: tuple[tuple[str, str], ...] = ()  # shafts joined directly: a coupling's two, or a ratio_to pair

    def speeds_at(self, speed_rpm: float | None = None, shaft: str | None = None) -> dict[str, float]:
        """Every shaft's speed in Hz when ``shaft`` (default: the driver) runs at ``speed_rpm``.

        All shafts scale together: ratios are fixed by gears, belts and couplings.
        """
        speeds = dict(self.shaft_speeds_hz)
        if speed_rpm is None:
            return speeds
        shaft = shaft or self.driver_shaft
        if shaft not in speeds:
            raise MachineError(f"no shaft {shaft!r}; shafts are {', '.join(speeds)}", path=self.source)
        check_speed_rpm(speed_rpm, self.source)
        scale = (speed_rpm / 60.0) / speeds[shaft]
        return {name: hz * scale for name, hz in speeds.items()}

    def shafts_seen_from(self, shaft: str) -> set[str]:
        """The shafts a sensor at a point on ``shaft`` can see, whose turns its record needs.

        By physics: the point's own shaft; a shaft joined to it directly (``same_as``, a coupling:
        the same speed; ``ratio_to``); and the other shaft of every gear mesh or belt with a
        gear or sheave on the point's shaft, since that shaft's 1X reaches the point as sidebands
        of the mesh or as the belt's modulation. No further: a flexible coupling and the next
        housing keep the rates of shafts two links away from a bearing housing, and a point on
        a motor does not see the gearbox's slow shaft beyond the first mesh.
        """
        seen = {shaft}
        for a, b in self.joined:
            if shaft in (a, b):
                seen |= {a, b}
        links: tuple[GearMesh | BeltDrive, ...] = (*self.gears, *self.belts)
        for link in links:
            if shaft in (link.driving_shaft, link.driven_shaft):
                seen |= {link.driving_shaft, link.driven_shaft}
        return seen

    def shafts_heard_from(self, shaft: str) -> set[str]:
        """The shafts whose bearings a sensor at a point on ``shaft`` can hear (their defects' impacts).

        ``shafts_seen_from`` less the other shaft of a belt drive. A bearing's impacts ring the
        structure at kilohertz and reach a sensor through its housing, the casing and the frame: a
        gear mesh's two shafts share a casing, and a coupled shaft's housing stands next to the
        point's, but a belt drive's other shaft sits in another machine's housings, and the rubber
        belt carries that shaft's 1X (as belt tension) without the ringing of its bearings (common
        practice: a bearing's high-frequency signal is read at its own housing and falls at every
        joint on the way). A belt fan's sensor does not weigh its motor's bearings, nor the
        motor's sensor the fan's, while those have a sensor of their own in the reading (the
        envelope evidence falls back on the far sensor when none does).
        """
        belts_only = {other for b in self.belts if shaft in (b.driving_shaft, b.driven_shaft)
                      for other in (b.driving_shaft, b.driven_shaft) if other != shaft}
        kept = set()
        for link in (*self.gears,):
            if shaft in (link.driving_shaft, link.driven_shaft):
                kept |= {link.driving_shaft, link.driven_shaft}
        for a, b in self.joined:
            if shaft in (a, b):
                kept |= {a, b}
        return self.shafts_seen_from(shaft) - (belts_only - kept)

    def shafts_seen_at(self, point_ids) -> set[str]:
        """The shafts the points ``point_ids`` see together (``shafts_seen_from`` of each point's
        shaft); every shaft of the machine when one of them is not a point of it or there are none."""
        by_id = {p.id: p for p in self.points}
        ids = list(point_ids)
        if not ids or any(i not in by_id for i in ids):
            return set(self.shaft_speeds_hz)
        return set().union(*(self.shafts_seen_from(by_id[i].shaft) for i in ids))

    def coupling(self, coupling_id: str) -> Coupling | None:
        """The coupling of this id, or None when the machine has none of that id."""
        return next((c for c in self.couplings if c.id == coupling_id), None)

    def has_point(self, point_id: str) -> bool:
        """Whether the machine has a measurement point of this id."""
        return any(p.id == point_id for p in self.points)

    def point(self, point_id: str) -> Point:
        """The measurement point of this id; a MachineError naming the points there are if none."""
        for p in self.points:
            if p.id == point_id:
                return p
        known = ", ".join(p.id for p in self.points) or "none"
        raise MachineError(f"no measurement point {point_id!r}; points are {known}", path=self.source)

def points_across(machine: Machine, coupling: Coupling | str) -> tuple[tuple[Point, ...], tuple[Point, ...]]:
    """The measurement points on each side of ``coupling`` (a ``Coupling`` or its id): those on its first
    shaft, then those on its second, each in file order. Pairs of the same direction, one from each side,
    face each other across the coupling (for phase compared across it)."""
    if isinstance(coupling, str):
        found = machine.coupling(coupling)
        if found is None:
            known = ", ".join(c.id for c in machine.couplings) or "none"
            raise MachineError(f"no coupling {coupling!r}; couplings are {known}", path=machine.source)
        coupling = found
    first, second = coupling.shafts
    return (tuple(p for p in machine.points if p.shaft == first),
            tuple(p for p in machine.points if p.shaft == second))

def check_speed_rpm(speed_rpm, source: str | None = None, error=MachineError) -> float:
    """``speed_rpm`` as a float if it is a plausible shaft speed, else ``error`` saying why."""
    try:
        rpm = float(speed_rpm)
    except (TypeError, ValueError):
        raise error(f"speed must be a number of rpm, got {speed_rpm!r}", path=source) from None
    if not (MIN_SPEED_RPM <= rpm <= MAX_SPEED_RPM):
        raise error(f"speed must be between {MIN_SPEED_RPM:g} and {MAX_SPEED_RPM:g} rpm, got {rpm:g} rpm",
                    path=source)
    return rpm

def read_machine(path) -> tuple[Machine, YamlDocument]:
    """Read and check a machine YAML file; its ``alarms:`` are left to ``alarms.with_file_alarms``, which
    resolves their bands through kinematics (``engine.machine.load_machine`` does both)."""
    doc = read_yaml(path, MachineError)
    if not isinstance(doc.data, dict):
        raise MachineError("expected a mapping with 'machine' and 'shafts'", path=doc.path, line=1)
    numbers_as_names(doc, "machine.schema.json")     # model: 6309 is a name, not a number
    validate(doc, "machine.schema.json", MachineError)
    return _build(doc), doc

def _build(doc: YamlDocument) -> Machine:
    data = doc.data
    fail = _failer(doc)
    _check_unique_ids(data, fail)
    shafts = {s["id"]: s for s in data["shafts"]}

    def need_shaft(name, where):
        if name not in shafts:
            fail(where, f"unknown shaft {name!r}; shafts are {', '.join(shafts)}")

    bearings = []
    for i, b in enumerate(data.get("bearings", [])):
        need_shaft(b["shaft"], ("bearings", i, "shaft"))
        if "element_diameter" in b and b["element_diameter"] >= b["pitch_diameter"]:
            fail(("bearings", i, "element_diameter"),
                 "rolling element diameter must be smaller than the pitch diameter")
        if "element_diameter" in b and b["element_diameter"] < MIN_ELEMENT_TO_PITCH * b["pitch_diameter"]:
            fail(("bearings", i, "element_diameter"),
                 f"rolling element diameter below {MIN_ELEMENT_TO_PITCH:.0%} of the pitch diameter: "
                 "check both are in the same unit")
        bearings.append(Bearing(
            id=b["id"], shaft=b["shaft"], model=b.get("model"),
            rolling_elements=_whole(b.get("rolling_elements")),
            element_diameter=b.get("element_diameter"), pitch_diameter=b.get("pitch_diameter"),
            contact_angle_deg=float(b.get("contact_angle_deg", 0.0)),
            multiples=MappingProxyType(dict(b["multiples"])) if "multiples" in b else None,
        ))
    gears = []
    for i, g in enumerate(data.get("gears", [])):
        need_shaft(g["driving"]["shaft"], ("gears", i, "driving", "shaft"))
        need_shaft(g["driven"]["shaft"], ("gears", i, "driven", "shaft"))
        if g["driving"]["shaft"] == g["driven"]["shaft"]:
            fail(("gears", i, "driven", "shaft"), "a gear mesh joins two different shafts")
        gears.append(GearMesh(g["id"], g["driving"]["shaft"], _whole(g["driving"]["teeth"]),
                              g["driven"]["shaft"], _whole(g["driven"]["teeth"])))
    belts = []
    for i, b in enumerate(data.get("belts", [])):
        need_shaft(b["driving"]["shaft"], ("belts", i, "driving", "shaft"))
        need_shaft(b["driven"]["shaft"], ("belts", i, "driven", "shaft"))
        belts.append(BeltDrive(b["id"], b["driving"]["shaft"], b["driving"]["sheave_diameter_mm"],
                               b["driven"]["shaft"], b["driven"]["sheave_diameter_mm"],
                               b["belt_length_mm"]))
    rotors = []
    for i, r in enumerate(data.get("rotors", [])):
        need_shaft(r["shaft"], ("rotors", i, "shaft"))
        rotors.append(Rotor(r["id"], r["shaft"], r["type"], _whole(r["vanes"]), bool(r.get("overhung", False))))
    motors = []
    for i, m in enumerate(data.get("motors", [])):
        need_shaft(m["shaft"], ("motors", i, "shaft"))
        motors.append(Motor(m["id"], m["shaft"], float(m["line_frequency_hz"]), _whole(m["poles"]),
                            _whole(m.get("rotor_bars"))))

    speeds, driver = _resolve_speeds(data["shafts"], gears, belts, fail)
    couplings = _couplings(data, speeds, {g.id for g in gears} | {b.id for b in belts}, fail)

    bearing_shaft = {b.id: b.shaft for b in bearings}
    points = []
    for i, p in enumerate(data.get("points", [])):
        if p["at"] in bearing_shaft:
            shaft = bearing_shaft[p["at"]]
        elif p["at"] in shafts:
            shaft = p["at"]
        else:
            fail(("points", i, "at"), f"{p['at']!r} is neither a bearing nor a shaft of this machine")
        points.append(Point(p["id"], p["at"], shaft, p["direction"]))

    speed_range = _speed_range(data["shafts"], speeds, fail)
    descriptions = {s["id"]: s["description"] for s in data["shafts"] if "description" in s}
    machine = Machine(
        name=data["machine"], source=doc.path, plant=data.get("plant"),
        iso_group=_whole(data.get("iso_group")), support=data.get("support"),
        lubrication=data.get("lubrication"),
        shaft_speeds_hz=MappingProxyType(speeds), driver_shaft=driver,
        bearings=tuple(bearings), gears=tuple(gears), belts=tuple(belts), couplings=couplings,
        rotors=tuple(rotors), motors=tuple(motors), points=tuple(points),
        descriptions=MappingProxyType(descriptions), speed_range=speed_range,
        joined=tuple(c.shafts for c in couplings) + tuple((spec["id"], spec["ratio_to"]["shaft"])
                                                          for spec in data["shafts"] if "ratio_to" in spec),
    )
    return machine

def _couplings(data, speeds: dict[str, float], link_ids: set[str], fail) -> tuple[Coupling, ...]:
    """The file's couplings, checked (two different shafts of the file, turning at one speed, each pair
    joined once), then one of type "unknown" for each shaft ``same_as`` another with none named."""
    out: list[Coupling] = []
    joined: dict[frozenset, str] = {}
    for i, c in enumerate(data.get("couplings", [])):
        a, b = c["shafts"]
        for j, name in enumerate((a, b)):
            if name not in speeds:
                fail(("couplings", i, "shafts", j), f"unknown shaft {name!r}; shafts are {', '.join(speeds)}")
        if a == b:
            fail(("couplings", i, "shafts"), "a coupling joins two different shafts")
        pair = frozenset((a, b))
        if pair in joined:
            fail(("couplings", i, "shafts"), f"shafts {a!r} and {b!r} are already joined by {joined[pair]!r}")
        joined[pair] = c["id"]
        slip = 1.0 - speeds[b] / speeds[a]
        if c["type"] == "fluid":
            if not -RATIO_TOLERANCE <= slip <= FLUID_SLIP_MAX:
                fail(("couplings", i, "shafts"), f"a fluid coupling's second shaft runs up to "
                     f"{FLUID_SLIP_MAX:.0%} slower than its first, but {b!r} runs at {speeds[b] * 60:.1f} rpm and "
                     f"{a!r} at {speeds[a] * 60:.1f} rpm")
        elif abs(slip) > RATIO_TOLERANCE:
            fail(("couplings", i, "shafts"), f"a {c['type']} coupling joins shafts at one speed, but {a!r} runs "
                 f"at {speeds[a] * 60:.1f} rpm and {b!r} at {speeds[b] * 60:.1f} rpm; write {b!r} as "
                 f"same_as: {a}")
        out.append(Coupling(c["id"], (a, b), c["type"]))
    taken = set(link_ids) | {c.id for c in out} | set(speeds)
    for spec in data["shafts"]:
        other = spec.get("same_as")
        if other is None or other == spec["id"] or frozenset((other, spec["id"])) in joined:
            continue
        ident = base = f"{other}-{spec['id']}-coupling"
        n = 1
        while ident in taken:
            n += 1
            ident = f"{base}-{n}"
        taken.add(ident)
        joined[frozenset((other, spec["id"]))] = ident
        out.append(Coupling(ident, (other, spec["id"]), "unknown", named=False))
    return tuple(out)

def _speed_range(shaft_specs, speeds: dict[str, float], fail) -> SpeedRange | None:
    """The one shaft's stated speed range, checked: lowest below highest, the shaft's own speed inside."""
    ranged = [(i, spec) for i, spec in enumerate(shaft_specs) if "speed_range_rpm" in spec]
    if not ranged:
        return None
    first = ranged[0][1]["id"]
    for i, _spec in ranged[1:]:
        fail(("shafts", i, "speed_range_rpm"), f"only one shaft may state a speed range and shaft {first!r} "
             "does; the other shafts follow it by their ratios")
    i, spec = ranged[0]
    low, high = (float(v) for v in spec["speed_range_rpm"])
    if not low < high:
        fail(("shafts", i, "speed_range_rpm"), f"the lowest speed ({low:g} rpm) must be below the highest "
             f"({high:g} rpm)")
    rpm = speeds[spec["id"]] * 60.0
    if not low * (1 - 1e-9) <= rpm <= high * (1 + 1e-9):     # a derived speed carries rounding
        fail(("shafts", i, "speed_range_rpm"), f"shaft {spec['id']!r} runs at {rpm:.6g} rpm, outside its "
             f"speed range of {low:g} to {high:g} rpm")
    return SpeedRange(spec["id"], low, high)

def _whole(value):
    """A count the schema checked as an integer; JSON Schema also takes 23.0, Python wants 23."""
    return None if value is None else int(value)

def _failer(doc: YamlDocument):
    def fail(field_path, problem):
        dotted = ".".join(str(p) for p in field_path)
        raise MachineError(f"{dotted}: {problem}", path=doc.path, line=doc.line_of(field_path))
    return fail

def _check_unique_ids(data, fail) -> None:
    seen: dict[str, str] = {}
    for section in ("shafts", "bearings", "gears", "belts", "couplings", "rotors", "motors", "points"):
        for i, item in enumerate(data.get(section, [])):
            ident = item["id"]
            if ident in seen:
                fail((section, i, "id"), f"id {ident!r} is already used in {seen[ident]}")
            seen[ident] = section

def _resolve_speeds(shaft_specs, gears, belts, fail) -> tuple[dict[str, float], str]:
    """Nominal speed of every shaft in Hz, following couplings, ratios, gears and belts."""
    links = {g.id: g for g in gears} | {b.id: b for b in belts}
    index = {s["id"]: i for i, s in enumerate(shaft_specs)}
    speeds: dict[str, float] = {}

    def ratio_of(link):
        if isinstance(link, GearMesh):
            return link.driving_shaft, link.driven_shaft, link.driving_teeth / link.driven_teeth
        return link.driving_shaft, link.driven_shaft, link.driving_diameter_mm / link.driven_diameter_mm

    def resolve(name, stack):
        if name in speeds:
            return speeds[name]
        i = index[name]
        spec = shaft_specs[i]
        if name in stack:
            fail(("shafts", i), f"shaft speeds refer to each other in a loop: {' -> '.join(stack + [name])}")
        stack = stack + [name]
        if "speed_rpm" in spec:
            hz = spec["speed_rpm"] / 60.0
        elif "speed_hz" in spec:
            hz = float(spec["speed_hz"])
        elif "same_as" in spec:
            if spec["same_as"] not in index:
                fail(("shafts", i, "same_as"), f"unknown shaft {spec['same_as']!r}")
            hz = resolve(spec["same_as"], stack)
        elif "ratio_to" in spec:
            other = spec["ratio_to"]["shaft"]
            if other not in index:
                fail(("shafts", i, "ratio_to", "shaft"), f"unknown shaft {other!r}")
            hz = resolve(other, stack) * spec["ratio_to"]["ratio"]
        else:
            link_id = spec["driven_through"]
            if link_id not in links:
                fail(("shafts", i, "driven_through"), f"no gear mesh or belt drive with id {link_id!r}")
            driving, driven, ratio = ratio_of(links[link_id])
            if driven == name:
                hz = resolve(driving, stack) * ratio
            elif driving == name:
                hz = resolve(driven, stack) / ratio
            else:
                fail(("shafts", i, "driven_through"), f"{link_id!r} does not connect to shaft {name!r}")
        speeds[name] = hz
        return hz

    for spec in shaft_specs:
        resolve(spec["id"], [])
    speeds = {s["id"]: speeds[s["id"]] for s in shaft_specs}

    for kind, items in (("gears", gears), ("belts", belts)):
        for i, link in enumerate(items):
            driving, driven, ratio = ratio_of(link)
            expected = speeds[driving] * ratio
            if abs(speeds[driven] - expected) > RATIO_TOLERANCE * expected:
                fail((kind, i), f"shaft {driven!r} runs at {speeds[driven] * 60:.1f} rpm but "
                     f"{link.id!r} gives {expected * 60:.1f} rpm; use driven_through: {link.id}")

    stated = [s["id"] for s in shaft_specs if "speed_rpm" in s or "speed_hz" in s]
    if not stated:
        fail(("shafts",), "no shaft states its speed (speed_rpm or speed_hz)")
    for i, spec in enumerate(shaft_specs):
        rpm = speeds[spec["id"]] * 60.0
        if not (MIN_SPEED_RPM <= rpm <= MAX_SPEED_RPM):
            fail(("shafts", i), f"shaft {spec['id']!r} comes out at {rpm:.4g} rpm, outside "
                 f"{MIN_SPEED_RPM:g} to {MAX_SPEED_RPM:g} rpm: check its ratios, teeth and sheave diameters")
    return speeds, stated[0]
