"""A physically based simulator of machine vibration with known faults.

Every extractor and rule is tested against signals whose true answer is
known. The models follow the textbook mechanisms (Randall 2011, "Vibration-
based Condition Monitoring", Wiley, chapters 2 and 5; Randall & Antoni 2011
for bearings; McFadden & Smith 1984 for the bearing signal model):

- shaft faults are sums of shaft-order sinusoids; unbalance rises with the
  speed squared; angular misalignment is strong axial 1X and 2X; parallel
  (offset) misalignment is a radial 2X above 1X; rotating looseness is a
  truncated waveform rich in harmonics and half orders; structural looseness
  (a weak support direction) is a 1X several times stronger horizontally than
  vertically;
- a rolling-bearing defect is a train of impacts at the defect rate with
  1 % random slip, each ringing a structural resonance, amplitude-modulated by
  the load zone: at 1X for a rotating inner race, at FTF for a rolling
  element, not at all for a stationary outer race in the load zone;
- gears mesh at GMF with harmonics; eccentricity modulates the mesh at the
  gear's shaft speed; a local tooth fault adds a once-per-revolution impact;
  distributed wear raises GMF harmonics and spreads sideband families;
- belts add belt-pass harmonics, rotors vane or blade pass, induction motors
  twice line frequency and pole-pass sidebands around 1X.

All signals are acceleration in m/s^2. ``simulate`` returns channels for the
machine's measurement points plus the ground truth; ``write_simulation``
saves them as a reading file that ``load_reading`` reads, with the truth in
``<file>.truth.yaml``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np
import yaml

from ..common.errors import UsageError
from ..machine.kinematics import MAX_LINE_FED_SLIP, bearing_multiples, belt_pass_hz, mesh_rates, pole_pass_hz
from ..machine import Machine, Point
from ..common.outfile import check_target, staged, write_whole
from ..common.units import STANDARD_GRAVITY_M_S2

if TYPE_CHECKING:
    from ..readings import Reading

G = STANDARD_GRAVITY_M_S2
STAGES = (1, 2, 3, 4)

# which component each fault sits on; the fault ids are the rulebooks' own
FAULTS = {
    "healthy": None,
    "unbalance": "shaft",
    "misalignment-angular": "shaft",
    "misalignment-parallel": "shaft",
    "looseness-rotating": "shaft",
    "looseness-structural": "support",      # the support under a bearing: a loose foot or a weak base
    "outer-race": "bearing",
    "inner-race": "bearing",
    "rolling-element": "bearing",
    "cage": "bearing",
    "gear-eccentricity": "gear",
    "gear-tooth": "gear",
    "gear-wear": "gear",
    "belt": "belt",
    "vane-pass": "rotor",
    "stator": "motor",
    "rotor-bar": "motor",
}


@dataclass(frozen=True)
class Truth:
    fault: str
    component: str | None
    stage: int
    speed_rpm: float
    seed: int
    fs_hz: float
    duration_s: float
    also: tuple = ()        # further faults present at the same time: (fault, component, stage)

    def as_dict(self) -> dict:
        out = {k: getattr(self, k) for k in self.__dataclass_fields__}
        out["also"] = [list(x) for x in self.also]
        return out


@dataclass
class Simulation:
    fs_hz: float
    channels: dict[str, np.ndarray]          # acceleration, m/s^2
    points: dict[str, Point]                  # channel name -> measurement point
    truth: Truth
    speed_rpm: float
    extra: dict = field(default_factory=dict)  # model internals tests can check (impact times)


def _velocity_tone_accel(v_mm_s_rms: float, f_hz: float) -> float:
    """Acceleration amplitude (m/s^2 peak) of a tone of ``v_mm_s_rms`` velocity at ``f_hz``."""
    return v_mm_s_rms * 1e-3 * math.sqrt(2) * 2 * math.pi * f_hz


ROTOR_BAR_1X_MM_S = 1.2     # 1X the broken-bar model adds, mm/s RMS


def rotor_bar_sideband_db(stage: int) -> float:
    """First pole-pass sideband below 1X in dB: -23 dB at stage 1 rising 5 dB a stage.

    Amplitude modulation of depth m puts each sideband at m/2 of its carrier, so
    a sideband can never stand above -6 dB; broken bars modulate 1X by a few to
    some tens of percent (common practice), -23 to -8 dB over the four stages.
    """
    return -28.0 + 5.0 * stage


RING_RESPONSES = ("displacement", "acceleration")


def _resonance_ring(fs: float, f_res: float, damping: float, response: str = "displacement") -> np.ndarray:
    """One impact ringing a resonance of ``f_res`` Hz with ``damping`` ratio, peak about 1.

    ``displacement`` is the decaying sine of a single-degree-of-freedom system's
    displacement impulse response (flat below the resonance, at 2 x damping of
    its peak). ``acceleration`` is its second time derivative, as an
    accelerometer would see it: it falls as (f / f_res)^2 below the resonance,
    so an impact leaves little below it (accelerance = -omega^2 x receptance,
    the standard single-degree-of-freedom result; e.g. Ewins, "Modal Testing",
    ch. 2, from memory). The force of a real impact lasts a while: here a
    Hann pulse one resonance period long, so the response does not reach far
    above the resonance either.
    """
    t = np.arange(int(min(0.05, 8.0 / (damping * 2 * np.pi * f_res)) * fs) + 1) / fs
    ring = np.exp(-damping * 2 * np.pi * f_res * t) * np.sin(2 * np.pi * f_res * t)
    if response == "displacement":
        return ring
    accel = np.diff(np.concatenate([[0.0, 0.0], ring, [0.0]]), 2)  # includes the jump at t = 0
    pulse = np.hanning(max(3, int(round(fs / f_res)) + 2))[1:-1]
    accel = np.convolve(accel, pulse / pulse.sum())
    return accel * (np.max(np.abs(ring)) / np.max(np.abs(accel)))


def _impact_times(rate_hz: float, duration_s: float, rng, slip: float = 0.01) -> np.ndarray:
    """Impact instants at ``rate_hz`` with random slip: each interval jitters by ``slip`` (std)."""
    n = int(duration_s * rate_hz * 1.1) + 2
    intervals = (1.0 / rate_hz) * (1.0 + slip * rng.standard_normal(n))
    times = rng.uniform(0, 1.0 / rate_hz) + np.cumsum(intervals)
    return times[times < duration_s]


def _periodic_impact_signal(first_s: float, period_s: float, amplitude: float, fs: float, n: int,
                            ring: np.ndarray) -> np.ndarray:
    """Identical impacts exactly ``period_s`` apart from ``first_s``, at their true (sub-sample) instants.

    A strictly periodic train is synchronous: its spectrum holds lines at its
    harmonics only. Rounding each instant to a sample would add a repeating
    timing pattern (the period's fractional part in samples) that shows as
    non-synchronous lines once the synchronous part is taken out. The train is
    therefore built in the frequency domain, where the sum of the impacts'
    phase terms is a geometric series, and convolved with the ring there; the
    record is padded by the ring's length so that nothing wraps round.
    """
    count = int(np.floor((n / fs - first_s) / period_s)) + 1 if first_s < n / fs else 0
    m = n + len(ring)
    f = np.fft.rfftfreq(m, 1.0 / fs)
    z = np.exp(-2j * np.pi * f * period_s)
    near_one = np.abs(1 - z) < 1e-9
    series = np.where(near_one, count, (1 - z ** count) / np.where(near_one, 1, 1 - z))
    spectrum = amplitude * np.exp(-2j * np.pi * f * first_s) * series * np.fft.rfft(ring, m)
    return np.fft.irfft(spectrum, m)[:n]


def _impact_signal(times, amplitudes, fs, n, ring) -> np.ndarray:
    from scipy import signal

    impulses = np.zeros(n)
    idx = np.clip(np.rint(times * fs).astype(int), 0, n - 1)
    np.add.at(impulses, idx, amplitudes)
    return signal.fftconvolve(impulses, ring)[:n]


class _Model:
    """Builds the signal of each point for one simulation."""

    def __init__(self, machine: Machine, speeds: dict[str, float], fs: float, n: int, rng,
                 ring_response: str = "displacement"):
        self.machine, self.speeds, self.fs, self.n, self.rng = machine, speeds, fs, n, rng
        self.ring_response = ring_response
        self.t = np.arange(n) / fs
        self.nominal = machine.shaft_speeds_hz

    def shaft_tone(self, shaft: str, order: float, v_mm_s_rms: float, phase: float = 0.0) -> np.ndarray:
        f = order * self.speeds[shaft]
        if f >= self.fs / 2.2:
            return np.zeros(self.n)
        return _velocity_tone_accel(v_mm_s_rms, f) * np.sin(2 * np.pi * f * self.t + phase)

    def tone(self, f: float, accel_peak: float, phase: float = 0.0) -> np.ndarray:
        if f >= self.fs / 2.2:
            return np.zeros(self.n)
        return accel_peak * np.sin(2 * np.pi * f * self.t + phase)


def _direction_phase(direction: str) -> float:
    return {"horizontal": 0.0, "vertical": math.pi / 2, "axial": math.pi / 5}[direction]


def _healthy(m: _Model, point: Point, resonance_hz: float) -> np.ndarray:
    """Residual unbalance, a little 2X and 3X, broadband noise, a structural resonance."""
    from scipy import signal

    x = np.zeros(m.n)
    radial = point.direction != "axial"
    for shaft in m.speeds:
        near = 1.0 if shaft == point.shaft else 0.3
        ph = _direction_phase(point.direction) + m.rng.uniform(0, 2 * np.pi)
        x += near * m.shaft_tone(shaft, 1, 0.6 if radial else 0.3, ph)
        x += near * m.shaft_tone(shaft, 2, 0.2, 2 * ph + 0.3)
        x += near * m.shaft_tone(shaft, 3, 0.08, 3 * ph + 0.7)
    for g in m.machine.gears:
        gmf = mesh_rates(g, m.speeds).gmf_hz
        near = 1.0 if point.shaft in (g.driving_shaft, g.driven_shaft) else 0.3
        x += near * m.tone(gmf, 0.08 * G, m.rng.uniform(0, 6.3))
        x += near * m.tone(2 * gmf, 0.03 * G, m.rng.uniform(0, 6.3))
    for r in m.machine.rotors:
        near = 1.0 if point.shaft == r.shaft else 0.3
        x += near * m.shaft_tone(r.shaft, r.vanes, 0.3, m.rng.uniform(0, 6.3))
    for mot in m.machine.motors:
        x += 0.5 * m.tone(2 * mot.line_frequency_hz, _velocity_tone_accel(0.1, 2 * mot.line_frequency_hz))
    white = 0.004 * G * m.rng.standard_normal(m.n)
    b, a = signal.iirpeak(resonance_hz, Q=8, fs=m.fs)
    hump = 0.01 * G * signal.lfilter(b, a, m.rng.standard_normal(m.n)) * 3
    return x + white + hump


def _bearing_fault(m: _Model, fault: str, bearing_id: str, stage: int, resonance_hz: float) -> tuple[np.ndarray, dict]:
    b = next(bb for bb in m.machine.bearings if bb.id == bearing_id)
    fr = m.speeds[b.shaft]
    mult = bearing_multiples(b)
    duration = m.n / m.fs
    # impact size: stage 1 is visible only in the envelope; stage 4 dominates the waveform
    size = {1: 0.06, 2: 0.4, 3: 1.5, 4: 5.0}[stage] * G
    if fault == "outer-race":
        rate, mod_hz, depth = mult["bpfo"] * fr, None, 0.0
    elif fault == "inner-race":
        rate, mod_hz, depth = mult["bpfi"] * fr, fr, 0.8
    elif fault == "rolling-element":
        rate, mod_hz, depth = 2 * mult["bsf"] * fr, mult["ftf"] * fr, 0.8
        size *= 0.7
    else:  # cage: a weak impact once per cage turn, and the cage rate modulating 1X
        rate, mod_hz, depth = mult["ftf"] * fr, None, 0.0
        size *= 0.6
    times = _impact_times(rate, duration, m.rng)
    amplitudes = np.full(len(times), size)
    if mod_hz is not None:
        phase = m.rng.uniform(0, 2 * np.pi)
        load = 0.5 + 0.5 * np.cos(2 * np.pi * mod_hz * times + phase)
        amplitudes *= (1 - depth) + depth * load
    amplitudes *= 1 + 0.1 * m.rng.standard_normal(len(times))
    ring = _resonance_ring(m.fs, resonance_hz, damping=0.04, response=m.ring_response)
    x = _impact_signal(times, amplitudes, m.fs, m.n, ring)
    if fault == "cage":
        x += m.shaft_tone(b.shaft, 1, 0.8 * stage) * (1 + 0.5 * np.cos(2 * np.pi * mult["ftf"] * fr * m.t))
    if stage == 4:  # late stage: the noise floor rises and 1X harmonics appear
        x += 0.03 * G * m.rng.standard_normal(m.n)
        for k in range(1, 6):
            x += m.shaft_tone(b.shaft, k, 0.4 / k, m.rng.uniform(0, 6.3))
    return x, {"impact_times_s": times, "impact_rate_hz": rate, "modulation_hz": mod_hz}


def _gear_fault(m: _Model, fault: str, mesh_id: str, stage: int, resonance_hz: float,
                gear_side: str = "driving") -> tuple[np.ndarray, dict]:
    """A gear fault on the mesh's driving gear (the pinion), or on its driven gear."""
    from scipy import signal

    g = next(gg for gg in m.machine.gears if gg.id == mesh_id)
    f_in, f_out = m.speeds[g.driving_shaft], m.speeds[g.driven_shaft]
    gmf = mesh_rates(g, m.speeds).gmf_hz
    # the faulty gear's speed and tooth count
    f_gear, teeth = (f_in, g.driving_teeth) if gear_side == "driving" else (f_out, g.driven_teeth)
    t = m.t
    base = 0.15 * G
    x = np.zeros(m.n)
    if fault == "gear-eccentricity":
        # eccentric (or run-out) gear: the mesh is amplitude- and phase-modulated at its speed
        depth = 0.2 * stage
        am = 1 + depth * np.cos(2 * np.pi * f_gear * t)
        pm = 0.3 * stage * np.sin(2 * np.pi * f_gear * t)
        for k, a in ((1, 1.0), (2, 0.4)):
            if k * gmf < m.fs / 2.2:
                x += base * a * am * np.sin(2 * np.pi * k * gmf * t + k * pm)
        faulty_shaft = g.driving_shaft if gear_side == "driving" else g.driven_shaft
        x += m.shaft_tone(faulty_shaft, 1, 1.0 * stage)
        return x, {"modulation_hz": f_gear}
    if fault == "gear-tooth":
        # one damaged tooth: once per turn of its gear a short mesh impact, and the mesh
        # modulated while that tooth is in mesh, at the same angle
        first = m.rng.uniform(0, 1 / f_gear)
        times = np.arange(first, m.n / m.fs, 1 / f_gear)
        ring = _resonance_ring(m.fs, resonance_hz, damping=0.05, response=m.ring_response)
        x += _periodic_impact_signal(first, 1 / f_gear, {1: 0.5, 2: 1.5, 3: 3.0, 4: 6.0}[stage] * G, m.fs, m.n, ring)
        window = np.exp(-0.5 * ((((t - first) * f_gear + 0.5) % 1.0 - 0.5) / (0.5 / teeth)) ** 2)
        x += base * (1 + 0.8 * stage * window) * np.sin(2 * np.pi * gmf * t)
        return x, {"impact_times_s": times}
    if fault == "gear-wear":
        # distributed wear: GMF harmonics rise and random modulation at both shafts spreads sidebands
        mod = np.zeros(m.n)
        for shaft_hz in (f_in, f_out):
            for k in range(1, 7):
                mod += (0.12 * stage / k) * np.cos(2 * np.pi * k * shaft_hz * t + m.rng.uniform(0, 6.3))
        for k, a in ((1, 1.0), (2, 0.6 * stage), (3, 0.4 * stage)):
            if k * gmf < m.fs / 2.2:
                x += base * a * (1 + mod) * np.sin(2 * np.pi * k * gmf * t + m.rng.uniform(0, 6.3))
        b, a = signal.butter(2, [0.8 * gmf, min(1.2 * gmf, m.fs / 2.3)], btype="bandpass", fs=m.fs)
        x += 0.02 * G * stage * signal.lfilter(b, a, m.rng.standard_normal(m.n))
        return x, {}
    raise UsageError(f"unknown gear fault {fault!r}")


def _shaft_fault(m: _Model, fault: str, shaft: str, point: Point, stage: int, speed_scale: float) -> np.ndarray:
    radial = point.direction != "axial"
    ph = _direction_phase(point.direction)
    if fault == "unbalance":
        v = 2.0 * stage * speed_scale ** 2
        return m.shaft_tone(shaft, 1, v if radial else 0.15 * v, ph)
    if fault == "misalignment-angular":
        v = 1.5 * stage
        axial_gain = 1.6 if not radial else 1.0
        return (m.shaft_tone(shaft, 1, 0.6 * v * axial_gain, ph)
                + m.shaft_tone(shaft, 2, v * axial_gain, 2 * ph + 0.4)
                + m.shaft_tone(shaft, 3, 0.3 * v * axial_gain, 3 * ph + 0.9))
    if fault == "misalignment-parallel":
        v = 1.5 * stage
        gain = 1.0 if radial else 0.35
        return gain * (m.shaft_tone(shaft, 1, 0.5 * v, ph) + m.shaft_tone(shaft, 2, 1.2 * v, 2 * ph + 0.4)
                       + m.shaft_tone(shaft, 3, 0.25 * v, 3 * ph + 0.9))
    if fault == "looseness-structural":
        v = 1.4 * stage
        gain = {"horizontal": 1.0, "vertical": 0.12, "axial": 0.1}[point.direction]
        return gain * (m.shaft_tone(shaft, 1, v, ph) + m.shaft_tone(shaft, 2, 0.15 * v, 2 * ph + 0.2))
    if fault == "looseness-rotating":
        v = 1.0 * stage
        x = m.shaft_tone(shaft, 1, 2.0 * v, ph)
        for k in range(2, 11):
            x += m.shaft_tone(shaft, k, v * 0.9 ** k, k * ph + m.rng.uniform(0, 6.3))
        for k in (0.5, 1.5, 2.5, 3.5):
            x += m.shaft_tone(shaft, k, 0.35 * v, m.rng.uniform(0, 6.3))
        # rocking on a loose foot: the response is truncated on one side
        limit = 0.6 * np.max(x)
        x = np.minimum(x, limit)
        return x - x.mean()
    raise UsageError(f"unknown shaft fault {fault!r}")


def _default_component(machine: Machine, fault: str) -> str:
    kind = FAULTS[fault]
    pools = {"shaft": list(machine.shaft_speeds_hz), "bearing": [b.id for b in machine.bearings],
             "support": [b.id for b in machine.bearings],
             "gear": [g.id for g in machine.gears], "belt": [b.id for b in machine.belts],
             "rotor": [r.id for r in machine.rotors], "motor": [mm.id for mm in machine.motors]}
    pool = pools[kind]
    if not pool:
        raise UsageError(f"machine {machine.name!r} has no {kind} for a {fault} fault")
    return pool[0]


def _component_shafts(machine: Machine, fault: str, component: str) -> set[str]:
    kind = FAULTS[fault]
    if kind == "shaft":
        if component not in machine.shaft_speeds_hz:
            raise UsageError(f"no shaft {component!r} in {machine.name!r}")
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
    raise UsageError(f"no {kind} {component!r} in {machine.name!r}")


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
    if fault not in FAULTS:
        raise UsageError(f"unknown fault {fault!r}; expected one of {', '.join(FAULTS)}")
    if stage not in STAGES:
        raise UsageError(f"stage must be 1 to 4, got {stage}")
    if ring_response not in RING_RESPONSES:
        raise UsageError(f"ring_response must be one of {', '.join(RING_RESPONSES)}, got {ring_response!r}")
    if gear_side not in ("driving", "driven"):
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
    model = _Model(machine, speeds, fs_hz, n, rng, ring_response)
    if FAULTS[fault] is not None and component is None:
        component = _default_component(machine, fault)
    if not runs_at(machine, fault, component, speed_rpm):
        raise UsageError(f"motor {component!r} at {speed_rpm:.0f} rpm is not running on its line frequency "
                         f"with a slip of 0-{MAX_LINE_FED_SLIP:.0%}: broken rotor bars have no pole pass "
                         "frequency to show there")
    fault_shafts = _component_shafts(machine, fault, component) if component else set()
    chosen = [p for p in machine.points if points is None or p.id in points]
    drawn_hz = min(rng.uniform(2500, 4500), 0.3 * fs_hz)   # drawn always: the same seed, the same stream
    resonance_hz = drawn_hz if resonance_hz is None else float(resonance_hz)
    bearing_points = {p.at for p in machine.points}

    channels, extra = {}, {}
    fault_signal, fault_extra = None, {}
    if FAULTS[fault] == "bearing":
        fault_signal, fault_extra = _bearing_fault(model, fault, component, stage, resonance_hz)
    elif FAULTS[fault] == "gear":
        fault_signal, fault_extra = _gear_fault(model, fault, component, stage, resonance_hz, gear_side)
    extra.update(fault_extra)

    for p in chosen:
        x = _healthy(model, p, resonance_hz) if healthy_background else np.zeros(n)
        near = p.shaft in fault_shafts
        if FAULTS[fault] == "bearing":
            at_bearing = p.at == component or (component not in bearing_points and near)
            x += fault_signal * (1.0 if at_bearing else 0.15 if near else 0.03)
        elif FAULTS[fault] == "gear":
            x += fault_signal * (1.0 if near else 0.2)
        elif FAULTS[fault] == "shaft":
            scale = speed_rpm / nominal_rpm
            x += _shaft_fault(model, fault, component, p, stage, scale) * (1.0 if near else 0.25)
        elif FAULTS[fault] == "support":
            shaft = next(b.shaft for b in machine.bearings if b.id == component)
            x += _shaft_fault(model, fault, shaft, p, stage, 1.0) * (1.0 if p.at == component else 0.15)
        elif fault == "belt":
            belt = next(b for b in machine.belts if b.id == component)
            bpf = belt_pass_hz(belt, speeds)
            gain = 1.0 if near else 0.3
            for k, v in ((1, 1.2), (2, 2.0), (3, 0.8), (4, 0.4)):
                x += gain * stage * model.tone(k * bpf, _velocity_tone_accel(v, k * bpf), rng.uniform(0, 6.3))
            x += gain * model.shaft_tone(belt.driven_shaft, 1, 0.8 * stage)
        elif fault == "vane-pass":
            r = next(rr for rr in machine.rotors if rr.id == component)
            gain = 1.0 if near else 0.3
            x += gain * model.shaft_tone(r.shaft, r.vanes, 1.5 * stage, rng.uniform(0, 6.3))
            x += gain * model.shaft_tone(r.shaft, 2 * r.vanes, 0.6 * stage, rng.uniform(0, 6.3))
        elif fault in ("stator", "rotor-bar"):
            mot = next(mm for mm in machine.motors if mm.id == component)
            gain = 1.0 if near else 0.2
            if p.direction == "axial":
                gain *= 0.25        # magnetic forces act radially across the air gap (common practice)
            if fault == "stator":
                f2 = 2 * mot.line_frequency_hz
                x += gain * model.tone(f2, _velocity_tone_accel(1.5 * stage, f2))
            else:
                fr = speeds[mot.shaft]
                fp = pole_pass_hz(mot.line_frequency_hz, mot.poles, fr)
                if near:    # the magnetic pull raises 1X at the motor's own bearings; sidebands travel on
                    x += gain * model.shaft_tone(mot.shaft, 1, ROTOR_BAR_1X_MM_S)
                for k in (1, 2):
                    side_mm_s = ROTOR_BAR_1X_MM_S * 10 ** (rotor_bar_sideband_db(stage) / 20) / k
                    for sgn in (-1, 1):
                        f = fr + sgn * k * fp
                        x += gain * model.tone(f, _velocity_tone_accel(side_mm_s, f), rng.uniform(0, 6.3))
        channels[p.id] = x
    for i, (other, other_component, other_stage) in enumerate(also):
        part = simulate(machine, other, other_component, other_stage, speed_rpm, fs_hz, duration_s,
                        seed + 7919 * (i + 1), points, healthy_background=False,
                        resonance_hz=resonance_hz, ring_response=ring_response, gear_side=gear_side)
        for name in channels:
            channels[name] = channels[name] + part.channels[name]
    truth = Truth(fault, component, stage if fault != "healthy" else 0, speed_rpm, seed, fs_hz, duration_s,
                  tuple((f, c, st) for f, c, st in also))
    return Simulation(fs_hz, channels, {p.id: p for p in chosen}, truth, speed_rpm, extra)


def clip_channel(sim: Simulation, channel: str, fraction: float) -> Simulation:
    """The simulation as a recorder with too small an input range would store it: ``channel``
    cut off at ``fraction`` of its peak (for demos and tests of the quality gates)."""
    if channel not in sim.channels:
        raise UsageError(f"no channel {channel!r} to clip; channels are {', '.join(sim.channels)}")
    x = sim.channels[channel]
    limit = fraction * float(np.max(np.abs(x)))
    channels = dict(sim.channels) | {channel: np.clip(x, -limit, limit)}
    return Simulation(sim.fs_hz, channels, sim.points, sim.truth, sim.speed_rpm, sim.extra)


def as_reading(sim: Simulation, source: str = "simulated") -> "Reading":
    """The simulation as an in-memory Reading (acceleration channels, quality gates run)."""
    from ..readings import Channel, Reading
    from ..readings.quality import check_channel

    channels = tuple(Channel(name, x, "acceleration", "g", sim.points[name].id, sim.points[name].direction)
                     for name, x in sim.channels.items())
    quality = tuple(q for ch in channels for q in check_channel(ch, sim.fs_hz))
    return Reading(source, sim.fs_hz, channels, speed_rpm=sim.speed_rpm, quality=quality)


def write_simulation(sim: Simulation, path, inputs=(), timestamp: str | None = None) -> list[Path]:
    """Save a simulation as a reading (.wav float32 in g, .npz or .csv) with sidecar and truth;
    ``timestamp`` (ISO 8601), if given, goes into the sidecar as a logger would stamp it.

    Returns the files written. Each goes through ``engine.common.outfile.staged``
    (written to a temporary name, synced, renamed; never over one of
    ``inputs``), so an interrupted write leaves no half-written reading.
    """
    path = Path(path)
    suffix = path.suffix.lower()
    if suffix not in (".wav", ".npz", ".csv"):
        raise UsageError(f"cannot write {suffix!r}; use .wav, .npz or .csv")
    sidecar_file, truth_file = path.with_name(path.name + ".yaml"), path.with_name(path.name + ".truth.yaml")
    for target in (path, sidecar_file, truth_file):
        check_target(target, inputs)
    names = list(sim.channels)
    data_g = np.stack([sim.channels[c] / G for c in names], axis=1)
    sidecar = {"unit": "g", "speed_rpm": round(sim.speed_rpm, 3),
               "channels": [{"name": c, "point": sim.points[c].id, "direction": sim.points[c].direction}
                            for c in names]}
    if timestamp is not None:
        sidecar["timestamp"] = str(timestamp)
    with staged(path, inputs) as tmp:
        if suffix == ".wav":
            from scipy.io import wavfile
            wavfile.write(tmp, int(round(sim.fs_hz)), data_g.astype(np.float32))
            sidecar["sample_rate_hz"] = sim.fs_hz
        elif suffix == ".npz":
            with open(tmp, "wb") as fh:
                np.savez(fh, **{c: data_g[:, i] for i, c in enumerate(names)},
                         sample_rate_hz=sim.fs_hz, unit="g", speed_rpm=sim.speed_rpm)
        else:
            header = f"# sample_rate_hz: {sim.fs_hz}\n# unit: g\n" + ",".join(names) + "\n"
            body = "\n".join(",".join(f"{v:.7g}" for v in row) for row in data_g)
            tmp.write_text(header + body + "\n")
            sidecar["sample_rate_hz"] = sim.fs_hz
    written = [path]
    for target, content in ((sidecar_file, sidecar), (truth_file, sim.truth.as_dict())):
        written.append(write_whole(target, yaml.safe_dump(content, sort_keys=False), inputs))
    return written
