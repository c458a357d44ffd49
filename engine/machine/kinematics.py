"""Forcing frequencies of a drive train: where each fault shows in a spectrum.

Formulas
--------
Rolling bearings (stationary outer race, shaft rate ``fr``, ``n`` rolling
elements of diameter ``d`` on pitch diameter ``D`` at contact angle ``phi``),
the standard kinematic results (e.g. Randall & Antoni 2011, "Rolling element
bearing diagnostics - A tutorial", MSSP 25, eqs. 1-4)::

    FTF  = fr/2 (1 - d/D cos phi)
    BPFO = n fr/2 (1 - d/D cos phi)
    BPFI = n fr/2 (1 + d/D cos phi)
    BSF  = D fr/(2 d) (1 - (d/D cos phi)^2)

Gears: GMF = z x fr of either gear; hunting tooth frequency
f_HT = GMF gcd(z1, z2) / (z1 z2); assembly phase passing frequency
f_A = GMF / gcd(z1, z2) (listed only when gcd > 1).

Belts: belt pass frequency = belt speed / belt length = pi D1 f1 / L.

Induction motors (line frequency f_L, ``p`` poles): synchronous speed
f_s = 2 f_L / p (120 f_L / p in r/min); slip frequency f_s - fr; pole pass
frequency p (f_s - fr); twice line frequency 2 f_L; rotor bar pass frequency
= bars x fr. A motor fed from the line runs between f_s (1 - MAX_LINE_FED_SLIP)
and f_s (``speed_limits``).

``rates_at`` gives every rate the engine uses at given shaft speeds, grouped
by component (``Rates``); ``forcing_frequencies`` lists them flat for people.
No other module derives a rate from the machine's geometry.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import asdict, dataclass

from .model import Bearing, Machine

BEARING_DEFECTS = ("BPFO", "BPFI", "BSF", "FTF")
# Every name and family ``forcing_list`` gives a rate (tests/machines checks it): the values a rule may
# compare a forcing frequency's name or family with (``engine.evidence.vocabulary.known_values``).
RATE_NAMES = ("1X", *BEARING_DEFECTS, "GMF", "HTF", "APPF", "belt pass", "vane pass", "blade pass",
              "2xLF", "slip", "pole pass", "rotor bar pass")
RATE_FAMILIES = ("shaft", "bearing", "gear", "belt", "rotor", "electrical")
MAX_LINE_FED_SLIP = 0.10    # rated slip is 1-5 %; past about 10 % a motor is near pull-out (common practice)


def synchronous_hz(line_frequency_hz: float, poles: int) -> float:
    """Synchronous speed 2 f_L / p of an induction motor, in Hz (the standard relation 120 f / p in r/min)."""
    return 2 * line_frequency_hz / poles


def pole_pass_hz(line_frequency_hz: float, poles: int, shaft_hz: float) -> float | None:
    """Pole pass frequency p (f_s - fr) of a line-fed induction motor, in Hz.

    None when the shaft turns at or above synchronous speed, or slips more than
    MAX_LINE_FED_SLIP: such a motor is not running steadily on the stated line
    frequency (a drive feeds it), and its pole pass frequency is unknown.
    """
    sync_hz = synchronous_hz(line_frequency_hz, poles)
    slip_hz = sync_hz - shaft_hz
    if slip_hz <= 0 or slip_hz > MAX_LINE_FED_SLIP * sync_hz:
        return None
    return poles * slip_hz


@dataclass(frozen=True)
class ForcingFrequency:
    """One frequency at which a component of the machine can excite vibration."""

    name: str          # trade name: 1X, BPFO, GMF, 2xLF, ...
    component: str     # id of the shaft, bearing, mesh, belt, rotor or motor
    family: str        # shaft, bearing, gear, belt, rotor or electrical
    shaft: str         # the shaft whose speed it is a multiple of
    order: float       # frequency / that shaft's speed
    frequency_hz: float

    @property
    def label(self) -> str:
        """Its name and component, as the reports mark it."""
        return f"{self.name} {self.component}"

    def as_dict(self) -> dict:
        """Its fields and ``label`` as a plain dict."""
        return asdict(self) | {"label": self.label}


def bearing_multiples(bearing: Bearing) -> dict[str, float]:
    """BPFO, BPFI, BSF and FTF as multiples of shaft speed (orders)."""
    if bearing.multiples is not None:
        return dict(bearing.multiples)
    n, element, pitch = bearing.rolling_elements, bearing.element_diameter, bearing.pitch_diameter
    # the machine schema asks for all three of a bearing given without multiples
    assert n is not None and element is not None and pitch is not None
    ratio = element / pitch * math.cos(math.radians(bearing.contact_angle_deg))
    return {
        "bpfo": n / 2 * (1 - ratio),
        "bpfi": n / 2 * (1 + ratio),
        "bsf": pitch / (2 * element) * (1 - ratio ** 2),
        "ftf": 0.5 * (1 - ratio),
    }


@dataclass(frozen=True)
class BearingRates:
    """Defect rates of one rolling bearing, Hz."""

    bearing: str
    shaft: str
    shaft_hz: float
    bpfo_hz: float
    bpfi_hz: float
    bsf_hz: float
    ftf_hz: float

    def of(self, defect: str) -> float:
        """BPFO, BPFI, BSF or FTF in Hz."""
        return {"BPFO": self.bpfo_hz, "BPFI": self.bpfi_hz, "BSF": self.bsf_hz, "FTF": self.ftf_hz}[defect]

    def impact_rate_hz(self, defect: str) -> float:
        """How often a defect of this kind strikes: a spall on a rolling element strikes both
        races once per spin turn, so its impacts repeat at 2 x BSF (the ball defect rate)."""
        return 2.0 * self.bsf_hz if defect == "BSF" else self.of(defect)


@dataclass(frozen=True)
class MeshRates:
    """One gear mesh, Hz: GMF, hunting tooth and assembly phase passing frequencies."""

    mesh: str
    driving_shaft: str
    driven_shaft: str
    driving_teeth: int
    driven_teeth: int
    gmf_hz: float
    htf_hz: float
    appf_hz: float | None     # only when the tooth counts share a factor

    def teeth_on(self, shaft: str) -> int | None:
        """Teeth of the gear on ``shaft`` (its mesh order), None if the mesh does not touch it."""
        if shaft == self.driving_shaft:
            return self.driving_teeth
        if shaft == self.driven_shaft:
            return self.driven_teeth
        return None


@dataclass(frozen=True)
class MotorRates:
    """Electrical rates of one induction motor, Hz."""

    motor: str
    shaft: str
    line_hz: float
    twice_line_hz: float
    sync_hz: float
    slip_hz: float            # may be <= 0 when the stated speed is at or above synchronous
    pole_pass_hz: float | None
    rotor_bar_hz: float | None


@dataclass(frozen=True)
class BeltRates:
    """One belt's belt pass frequency, Hz, and the shafts it joins."""

    belt: str
    driving_shaft: str
    driven_shaft: str
    belt_pass_hz: float


@dataclass(frozen=True)
class RotorRates:
    """One impeller's or fan's vane or blade pass frequency, Hz."""

    rotor: str
    shaft: str
    kind: str                 # impeller or fan
    vanes: int
    pass_hz: float            # vane or blade pass

    @property
    def name(self) -> str:
        """The rate's trade name: vane pass for an impeller, blade pass for a fan."""
        return "vane pass" if self.kind == "impeller" else "blade pass"


@dataclass(frozen=True)
class Rates:
    """Every rate of a drive train at one set of shaft speeds."""

    shafts_hz: Mapping[str, float]
    bearings: tuple[BearingRates, ...]
    meshes: tuple[MeshRates, ...]
    motors: tuple[MotorRates, ...]
    belts: tuple[BeltRates, ...]
    rotors: tuple[RotorRates, ...]

    def bearing(self, bearing_id: str) -> BearingRates:
        """The defect rates of bearing ``bearing_id``."""
        return next(b for b in self.bearings if b.bearing == bearing_id)

    def motor(self, motor_id: str) -> MotorRates:
        """The electrical rates of motor ``motor_id``."""
        return next(m for m in self.motors if m.motor == motor_id)

    def mesh_orders(self, shaft: str) -> list[int]:
        """Tooth counts of the gears on ``shaft``: the orders at which its meshes show."""
        return [z for m in self.meshes if (z := m.teeth_on(shaft)) is not None]


def mesh_rates(gear, speeds_hz: Mapping[str, float]) -> MeshRates:
    """GMF, hunting tooth and assembly phase passing frequencies of one mesh, Hz."""
    gmf = gear.driving_teeth * speeds_hz[gear.driving_shaft]
    common = math.gcd(gear.driving_teeth, gear.driven_teeth)
    return MeshRates(gear.id, gear.driving_shaft, gear.driven_shaft, gear.driving_teeth, gear.driven_teeth, gmf,
                     gmf * common / (gear.driving_teeth * gear.driven_teeth), gmf / common if common > 1 else None)


def belt_pass_hz(belt, speeds_hz: Mapping[str, float]) -> float:
    """Belt pass frequency, Hz: belt speed over belt length."""
    return math.pi * belt.driving_diameter_mm * speeds_hz[belt.driving_shaft] / belt.belt_length_mm


def vane_pass_hz(rotor, speeds_hz: Mapping[str, float]) -> float:
    """Vane or blade pass frequency of an impeller or fan, Hz: vanes x the speed of its shaft."""
    return rotor.vanes * speeds_hz[rotor.shaft]


def rotor_bar_pass_hz(motor, speeds_hz: Mapping[str, float]) -> float | None:
    """Rotor bar pass frequency of an induction motor, Hz: rotor bars x the speed of its shaft
    (None when the machine file does not give the bar count)."""
    return motor.rotor_bars * speeds_hz[motor.shaft] if motor.rotor_bars else None


def rates_at(machine: Machine, speeds_hz: Mapping[str, float]) -> Rates:
    """Every rate of ``machine`` with its shafts at ``speeds_hz`` (Hz, by shaft id)."""
    bearings = []
    for b in machine.bearings:
        fr = speeds_hz[b.shaft]
        m = bearing_multiples(b)
        bearings.append(BearingRates(b.id, b.shaft, fr, m["bpfo"] * fr, m["bpfi"] * fr, m["bsf"] * fr,
                                     m["ftf"] * fr))
    meshes = [mesh_rates(g, speeds_hz) for g in machine.gears]
    motors = []
    for mot in machine.motors:
        fr = speeds_hz[mot.shaft]
        sync_hz = synchronous_hz(mot.line_frequency_hz, mot.poles)
        slip_hz = sync_hz - fr
        motors.append(MotorRates(mot.id, mot.shaft, mot.line_frequency_hz, 2 * mot.line_frequency_hz, sync_hz,
                                 slip_hz, pole_pass_hz(mot.line_frequency_hz, mot.poles, fr),
                                 rotor_bar_pass_hz(mot, speeds_hz)))
    belts = [BeltRates(b.id, b.driving_shaft, b.driven_shaft, belt_pass_hz(b, speeds_hz)) for b in machine.belts]
    rotors = [RotorRates(r.id, r.shaft, r.type, r.vanes, vane_pass_hz(r, speeds_hz)) for r in machine.rotors]
    return Rates(dict(speeds_hz), tuple(bearings), tuple(meshes), tuple(motors), tuple(belts), tuple(rotors))


def why_no_pole_pass(m: MotorRates) -> str | None:
    """Why the slip and pole pass lines of motor rates ``m`` are left out, in one line; None when
    they are given. ``pole_pass_hz`` gives them only for a shaft below synchronous speed that slips
    at most ``MAX_LINE_FED_SLIP``."""
    if m.pole_pass_hz is not None:
        return None
    shaft_rpm, sync_rpm = (m.sync_hz - m.slip_hz) * 60, m.sync_hz * 60
    poles = round(2 * m.line_hz / m.sync_hz)
    if m.slip_hz <= 0:
        where = "at" if abs(m.slip_hz) <= 1e-9 * m.sync_hz else "above"
        reason = (f"its shaft at {shaft_rpm:.6g} rpm turns {where} the synchronous speed of {poles} poles on "
                  f"{m.line_hz:g} Hz ({sync_rpm:.6g} rpm), so it has no slip on that line")
    else:
        reason = (f"its shaft at {shaft_rpm:.6g} rpm slips {100 * m.slip_hz / m.sync_hz:.3g} % below the "
                  f"synchronous speed of {poles} poles on {m.line_hz:g} Hz ({sync_rpm:.6g} rpm), more than the "
                  f"{MAX_LINE_FED_SLIP * 100:g} % a line-fed motor runs at")
    return (f"motor {m.motor}: slip and pole pass left out: {reason}; a drive feeds it at another "
            f"frequency, or the speed is wrong")


def forcing_list(rates: Rates) -> list[ForcingFrequency]:
    """The rates as a flat list of named forcing frequencies, sorted by frequency."""
    speeds = rates.shafts_hz
    out: list[ForcingFrequency] = []

    def add(name, component, family, on_shaft, hz):
        out.append(ForcingFrequency(name, component, family, on_shaft, hz / speeds[on_shaft], hz))

    for name, hz in speeds.items():
        add("1X", name, "shaft", name, hz)
    for b in rates.bearings:
        for defect in BEARING_DEFECTS:
            add(defect, b.bearing, "bearing", b.shaft, b.of(defect))
    for g in rates.meshes:
        add("GMF", g.mesh, "gear", g.driving_shaft, g.gmf_hz)
        add("HTF", g.mesh, "gear", g.driving_shaft, g.htf_hz)
        if g.appf_hz is not None:
            add("APPF", g.mesh, "gear", g.driving_shaft, g.appf_hz)
    for belt in rates.belts:
        add("belt pass", belt.belt, "belt", belt.driving_shaft, belt.belt_pass_hz)
    for r in rates.rotors:
        add(r.name, r.rotor, "rotor", r.shaft, r.pass_hz)
    for m in rates.motors:
        add("2xLF", m.motor, "electrical", m.shaft, m.twice_line_hz)
        if m.pole_pass_hz is not None:
            add("slip", m.motor, "electrical", m.shaft, m.slip_hz)
            add("pole pass", m.motor, "electrical", m.shaft, m.pole_pass_hz)
        if m.rotor_bar_hz:
            add("rotor bar pass", m.motor, "electrical", m.shaft, m.rotor_bar_hz)
    out.sort(key=lambda f: (f.frequency_hz, f.name, f.component))
    return out


def forcing_frequencies(machine: Machine, speed_rpm: float | None = None,
                        shaft: str | None = None) -> list[ForcingFrequency]:
    """Every forcing frequency of ``machine``, with ``shaft`` (default the driver) at ``speed_rpm``.

    Without ``speed_rpm`` the nominal speeds of the machine file are used.
    The list is sorted by frequency.
    """
    return forcing_list(rates_at(machine, machine.speeds_at(speed_rpm, shaft)))


@dataclass(frozen=True)
class SpeedLimits:
    """The speeds the machine's drive allows one shaft, in rpm, and what sets them."""

    shaft: str
    low_rpm: float
    high_rpm: float
    set_by: str        # words for the report: the drive's range, or the line-fed motors


def speed_limits(machine: Machine, shaft: str) -> SpeedLimits | None:
    """What the drive allows ``shaft`` to turn at, scaled from the shaft that fixes it; None if unknown.

    A speed range in the machine file (a variable-speed drive) wins. Else each
    induction motor whose nominal speed is that of a line-fed motor (below
    synchronous speed by at most MAX_LINE_FED_SLIP) holds its shaft between
    f_s (1 - MAX_LINE_FED_SLIP) and f_s; several such motors hold the train to
    the overlap of their ranges. A motor whose nominal speed lies outside that
    band is fed by a drive whose range the file does not state: no limit.
    """
    nominal = machine.shaft_speeds_hz
    scale = nominal[shaft]
    if machine.speed_range is not None:
        r = machine.speed_range
        to_shaft = scale / nominal[r.shaft]
        return SpeedLimits(shaft, r.low_rpm * to_shaft, r.high_rpm * to_shaft,
                           f"the machine file's speed range for shaft {r.shaft}, {r.low_rpm:.6g} to "
                           f"{r.high_rpm:.6g} rpm")
    low, high, motors = 0.0, math.inf, []
    for mot in machine.motors:
        sync_hz = synchronous_hz(mot.line_frequency_hz, mot.poles)
        if not sync_hz * (1 - MAX_LINE_FED_SLIP) <= nominal[mot.shaft] <= sync_hz * (1 + 1e-9):
            continue            # not line-fed at its nominal speed: a drive feeds it
        to_shaft = scale / nominal[mot.shaft]
        low = max(low, sync_hz * (1 - MAX_LINE_FED_SLIP) * 60 * to_shaft)
        high = min(high, sync_hz * 60 * to_shaft)
        motors.append(f"line-fed motor {mot.id}: {mot.poles} poles at {mot.line_frequency_hz:g} Hz, synchronous "
                      f"{sync_hz * 60:.6g} rpm, slip at most {MAX_LINE_FED_SLIP * 100:g} %")
    if not motors:
        return None
    return SpeedLimits(shaft, low, high, "; ".join(motors))
