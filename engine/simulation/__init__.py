"""A physically based simulator of machine vibration with known faults.

Every extractor and rule is tested against signals whose true answer is
known. The models follow the textbook mechanisms (Randall 2011, "Vibration-
based Condition Monitoring", Wiley, chapters 2 and 5; Randall & Antoni 2011
for bearings; McFadden & Smith 1984 for the bearing signal model), one module
per fault family:

- ``shaft``: unbalance, misalignment, looseness (rotating, and of a support);
- ``bearings``: impacts at a defect rate ringing a resonance, load-zone modulated;
- ``gears``: eccentricity, a damaged tooth, distributed wear;
- ``belts``: belt-pass harmonics; ``flow``: vane or blade pass;
- ``electrical``: twice line frequency, pole-pass sidebands around 1X;
- ``healthy``: the background every fault sits on;
- ``signal``: the shared signal making (tones, impacts, rings, the ``Scene``),
  ``recording``: clipping, the in-memory Reading, writing files.

``FAULTS`` is the one table of faults: name -> the component it sits on, the
family function that makes it, and what it is. ``tellwave synth --fault``,
the casebook and the demo read it. Every rate comes from
``engine.machine.kinematics``.

All signals are acceleration in m/s^2. ``simulate`` returns channels for the
machine's measurement points plus the ground truth; ``write_simulation``
saves them as a reading file that ``load_reading`` reads, with the truth in
``<file>.truth.yaml``.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import cast

import numpy as np

from ..common.errors import TellwaveError, UsageError
from ..machine import Machine
from ..machine.kinematics import MAX_LINE_FED_SLIP, pole_pass_hz, rates_at
from . import bearings, belts, electrical, flow, gears, shaft
from .healthy import background
from .recording import as_reading, clip_channel, write_simulation
from .result import Simulation, Truth
from .signal import NOTHING, RING_RESPONSES, G, Part, Scene

__all__ = ["FAULTS", "Fault", "fault_of", "G", "RING_RESPONSES", "STAGES", "Simulation", "Truth", "as_reading",
           "clip_channel", "runs_at", "simulate", "write_simulation"]

STAGES = (1, 2, 3, 4)
GEAR_SIDES = ("driving", "driven")


@dataclass(frozen=True)
class Fault:
    """One entry of ``FAULTS``: the kind of component it sits on, the function that makes it, what it is."""

    sits_on: str | None                               # shaft, support, bearing, gear, belt, rotor, motor
    make: Callable[[Scene, str, int], Part]           # family function: (scene, component, stage) -> Part
    description: str


def _no_fault(scene: Scene, component, stage: int) -> Part:
    return NOTHING


# the one table of faults; the names are the rulebooks' own fault ids
FAULTS: dict[str, Fault] = {
    "healthy": Fault(None, _no_fault, "no fault: the healthy background alone"),
    "unbalance": Fault("shaft", shaft.unbalance, "1X radial, rising with the speed squared"),
    "misalignment-angular": Fault("shaft", shaft.misalignment_angular, "strong axial 1X and 2X"),
    "misalignment-parallel": Fault("shaft", shaft.misalignment_parallel, "radial 2X above 1X"),
    "looseness-rotating": Fault("shaft", shaft.looseness_rotating,
                                "a truncated waveform rich in harmonics and half orders"),
    "looseness-structural": Fault("support", shaft.looseness_structural,      # a loose foot or a weak base
                                  "1X far stronger horizontally than vertically at one bearing"),
    "outer-race": Fault("bearing", bearings.outer_race, "impacts at BPFO, not modulated"),
    "inner-race": Fault("bearing", bearings.inner_race, "impacts at BPFI, modulated at 1X"),
    "rolling-element": Fault("bearing", bearings.rolling_element, "impacts at 2 x BSF, modulated at FTF"),
    "cage": Fault("bearing", bearings.cage, "weak impacts at FTF, 1X modulated at FTF"),
    "gear-eccentricity": Fault("gear", gears.eccentricity, "GMF modulated at the gear's speed"),
    "gear-tooth": Fault("gear", gears.tooth, "an impact once per turn of the gear"),
    "gear-wear": Fault("gear", gears.wear, "GMF harmonics raised, sidebands spread"),
    "belt": Fault("belt", belts.worn, "belt-pass harmonics"),
    "vane-pass": Fault("rotor", flow.vane_pass, "vane or blade pass and its 2nd harmonic raised"),
    "stator": Fault("motor", electrical.stator, "twice line frequency raised"),
    "rotor-bar": Fault("motor", electrical.rotor_bar, "pole-pass sidebands around 1X"),
}


def fault_of(name: str, error: type[TellwaveError] = UsageError, path: str | None = None,
             line: int | None = None) -> Fault:
    """The table's entry for ``name``. An unknown name is one line, the same wherever it was
    written (``tellwave synth --fault``, a case file): ``error`` at ``path`` and ``line``,
    listing the table's names."""
    if name not in FAULTS:
        raise error(f"unknown fault {name!r}; expected one of {', '.join(FAULTS)}", path=path, line=line)
    return FAULTS[name]


def _default_component(machine: Machine, fault: str) -> str:
    kind = FAULTS[fault].sits_on
    assert kind is not None     # asked only for a fault that sits on a component
    pool = _candidates(machine, kind)
    if not pool:
        raise UsageError(f"machine {machine.name!r} has no {kind} for a {fault} fault")
    return pool[0]


def _candidates(machine: Machine, kind: str) -> list[str]:
    """The ids a fault that sits on ``kind`` may be put on (a support is a bearing's housing and foot)."""
    return {"shaft": list(machine.shaft_speeds_hz), "bearing": [b.id for b in machine.bearings],
            "support": [b.id for b in machine.bearings],
            "gear": [g.id for g in machine.gears], "belt": [b.id for b in machine.belts],
            "rotor": [r.id for r in machine.rotors], "motor": [mm.id for mm in machine.motors]}[kind]


def _component_shafts(machine: Machine, fault: str, component: str) -> set[str]:
    kind = FAULTS[fault].sits_on
    if kind == "shaft":
        if component not in machine.shaft_speeds_hz:
            coupling = machine.coupling(component)
            hint = (f"; {component!r} is a coupling: name one of the shafts it joins ({', '.join(coupling.shafts)})"
                    if coupling is not None else "")
            raise UsageError(f"no shaft {component!r} in {machine.name!r} (its shafts: "
                             f"{', '.join(machine.shaft_speeds_hz)}){hint}")
        return {component}
    for items, kinds in ((machine.bearings, "bearing"), (machine.bearings, "support"), (machine.rotors, "rotor"),
                         (machine.motors, "motor")):
        if kind == kinds:
            for item in items:
                if item.id == component:
                    return {item.shaft}
    if kind == "gear":
        for g in machine.gears:
            if g.id == component:
                return {g.driving_shaft, g.driven_shaft}
    if kind == "belt":
        for b in machine.belts:
            if b.id == component:
                return {b.driving_shaft, b.driven_shaft}
    where = "a bearing's housing and foot, named by the bearing" if kind == "support" else f"a {kind}"
    raise UsageError(f"no {kind} {component!r} in {machine.name!r}; a {fault} fault sits on {where}: "
                     f"{', '.join(_candidates(machine, kind) if kind else []) or 'none'}")


def runs_at(machine: Machine, fault: str, component: str | None, speed_rpm: float) -> bool:
    """Whether ``fault`` can show at ``speed_rpm``: broken rotor bars need their motor on its line
    frequency at a real slip (a pole pass frequency to modulate 1X at)."""
    if fault != "rotor-bar":
        return True
    mot = next((mm for mm in machine.motors if mm.id == (component or _default_component(machine, fault))), None)
    if mot is None:
        return True
    shaft_hz = machine.speeds_at(speed_rpm)[mot.shaft]
    return pole_pass_hz(mot.line_frequency_hz, mot.poles, shaft_hz) is not None


def simulate(machine: Machine, fault: str = "healthy", component: str | None = None, stage: int = 2,
             speed_rpm: float | None = None, fs_hz: float = 25600.0, duration_s: float = 4.0,
             seed: int = 0, points: list[str] | None = None, also=(),
             healthy_background: bool = True, *, resonance_hz: float | None = None,
             ring_response: str = "displacement", gear_side: str = "driving") -> Simulation:
    """Simulate acceleration at the machine's measurement points with one fault (or several).

    ``speed_rpm`` is the speed of the machine's driving shaft (its nominal speed
    when None). ``component`` names the faulty shaft, bearing, gear mesh, belt,
    rotor or motor (the first of its kind when None). ``also`` adds further
    faults present at the same time, as (fault, component, stage) triples, each
    with its own random stream; ``healthy_background=False`` gives a fault's
    contribution alone.

    ``resonance_hz`` fixes the structural resonance that impacts ring (by
    default drawn from 2.5-4.5 kHz and kept below 0.3 x ``fs_hz``);
    ``ring_response`` shapes each impact as a displacement-like decaying sine
    (the default) or as an accelerometer sees it (``acceleration``: little
    content below the resonance); ``gear_side`` puts a gear fault on the
    mesh's ``driving`` gear (default) or its ``driven`` gear.
    """
    kind = fault_of(fault)
    if stage not in STAGES:
        raise UsageError(f"stage must be 1 to 4, got {stage}")
    if ring_response not in RING_RESPONSES:
        raise UsageError(f"ring_response must be one of {', '.join(RING_RESPONSES)}, got {ring_response!r}")
    if gear_side not in GEAR_SIDES:
        raise UsageError(f"gear_side must be driving or driven, got {gear_side!r}")
    if resonance_hz is not None and not 0 < resonance_hz < fs_hz / 2:
        raise UsageError(f"resonance_hz must lie between 0 and half the sample rate, got {resonance_hz}")
    if not machine.points:
        raise UsageError(f"machine {machine.name!r} has no measurement points to simulate")
    unknown = [p for p in points or [] if p not in {q.id for q in machine.points}]
    if unknown or points == []:
        raise UsageError(f"no measurement point {', '.join(map(repr, unknown)) or 'given'}; points are "
                         f"{', '.join(p.id for p in machine.points)}")
    nominal_rpm = machine.shaft_speeds_hz[machine.driver_shaft] * 60
    speed_rpm = nominal_rpm if speed_rpm is None else float(speed_rpm)
    speeds = machine.speeds_at(speed_rpm)
    rng = np.random.default_rng(seed)
    n = int(round(duration_s * fs_hz))
    if kind.sits_on is not None and component is None:
        component = _default_component(machine, fault)
    if not runs_at(machine, fault, component, speed_rpm):
        raise UsageError(f"motor {component!r} at {speed_rpm:.0f} rpm is not running on its line frequency "
                         f"with a slip of 0-{MAX_LINE_FED_SLIP:.0%}: broken rotor bars have no pole pass "
                         "frequency to show there")
    fault_shafts = _component_shafts(machine, fault, component) if component else set()
    chosen = [p for p in machine.points if points is None or p.id in points]
    drawn_hz = min(rng.uniform(2500, 4500), 0.3 * fs_hz)   # drawn always: the same seed, the same stream
    resonance_hz = drawn_hz if resonance_hz is None else float(resonance_hz)
    scene = Scene(machine, speeds, rates_at(machine, speeds), fs_hz, n, rng, resonance_hz, ring_response,
                  gear_side, speed_rpm / nominal_rpm, frozenset(fault_shafts))

    # a component's own signal is made once, here; component is None only for a fault that sits on none,
    # whose maker ignores it
    part = kind.make(scene, cast(str, component), stage)
    channels = {}
    for p in chosen:
        x = background(scene, p) if healthy_background else np.zeros(n)
        part.add(x, p)
        channels[p.id] = x
    for i, (other, other_component, other_stage) in enumerate(also):
        more = simulate(machine, other, other_component, other_stage, speed_rpm, fs_hz, duration_s,
                        seed + 7919 * (i + 1), points, healthy_background=False,
                        resonance_hz=resonance_hz, ring_response=ring_response, gear_side=gear_side)
        for name in channels:
            channels[name] = channels[name] + more.channels[name]
    truth = Truth(fault, component, stage if fault != "healthy" else 0, speed_rpm, seed, fs_hz, duration_s,
                  tuple((f, c, st) for f, c, st in also))
    return Simulation(fs_hz, channels, {p.id: p for p in chosen}, truth, speed_rpm, dict(part.extra))
