"""The signal making every fault family shares: tones, impacts ringing a resonance, the scene.

A ``Scene`` is one simulation's time axis, shaft speeds, rates (from
``engine.machine.kinematics``, never derived here), random stream and
structural resonance. A family function (``engine.simulation.FAULTS``) reads
it and returns a ``Part``: the fault's extra model values and what it adds to
the signal of each measurement point. All signals are acceleration in m/s^2.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

from ..common.units import STANDARD_GRAVITY_M_S2
from ..machine import Machine, Point
from ..machine.kinematics import Rates

G = STANDARD_GRAVITY_M_S2
RING_RESPONSES = ("displacement", "acceleration")


def velocity_tone_accel(v_mm_s_rms: float, f_hz: float) -> float:
    """Acceleration amplitude (m/s^2 peak) of a tone of ``v_mm_s_rms`` velocity at ``f_hz``."""
    return v_mm_s_rms * 1e-3 * math.sqrt(2) * 2 * math.pi * f_hz


def resonance_ring(fs: float, f_res: float, damping: float, response: str = "displacement") -> np.ndarray:
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


def impact_times(rate_hz: float, duration_s: float, rng, slip: float = 0.01) -> np.ndarray:
    """Impact instants at ``rate_hz`` with random slip: each interval jitters by ``slip`` (std)."""
    n = int(duration_s * rate_hz * 1.1) + 2
    intervals = (1.0 / rate_hz) * (1.0 + slip * rng.standard_normal(n))
    times = rng.uniform(0, 1.0 / rate_hz) + np.cumsum(intervals)
    return times[times < duration_s]


def periodic_impact_signal(first_s: float, period_s: float, amplitude: float, fs: float, n: int,
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


def impact_signal(times, amplitudes, fs, n, ring) -> np.ndarray:
    """Impacts of ``amplitudes`` at ``times`` (rounded to a sample), each ringing ``ring``."""
    from scipy import signal

    impulses = np.zeros(n)
    idx = np.clip(np.rint(times * fs).astype(int), 0, n - 1)
    np.add.at(impulses, idx, amplitudes)
    return signal.fftconvolve(impulses, ring)[:n]


def direction_phase(direction: str) -> float:
    """Phase (rad) of a shaft tone in a direction: horizontal 0, vertical pi/2, axial pi/5."""
    return {"horizontal": 0.0, "vertical": math.pi / 2, "axial": math.pi / 5}[direction]


@dataclass
class Scene:
    """One simulation's setting: what every family function reads."""

    machine: Machine
    speeds: dict[str, float]           # shaft id -> Hz
    rates: Rates                       # every rate at these speeds (engine.machine.kinematics)
    fs: float
    n: int
    rng: np.random.Generator
    resonance_hz: float
    ring_response: str = "displacement"
    gear_side: str = "driving"         # a gear fault sits on the mesh's driving or driven gear
    speed_scale: float = 1.0           # speed over the nominal speed
    fault_shafts: frozenset = frozenset()   # shafts of the faulty component
    t: np.ndarray = field(init=False)
    gear_signatures: dict = field(init=False, default_factory=dict)   # mesh id -> its gears' sound scatter

    def __post_init__(self):
        self.t = np.arange(self.n) / self.fs

    def near(self, point: Point) -> bool:
        """Whether ``point`` sits on a shaft of the faulty component."""
        return point.shaft in self.fault_shafts

    def velocity_tone(self, f: float, v_mm_s_rms: float, phase: float = 0.0) -> np.ndarray:
        """A tone of ``v_mm_s_rms`` velocity at ``f`` Hz, as acceleration (none near Nyquist)."""
        if f >= self.fs / 2.2:
            return np.zeros(self.n)
        return velocity_tone_accel(v_mm_s_rms, f) * np.sin(2 * np.pi * f * self.t + phase)

    def shaft_tone(self, shaft: str, order: float, v_mm_s_rms: float, phase: float = 0.0) -> np.ndarray:
        """A tone at ``order`` x the speed of ``shaft``."""
        return self.velocity_tone(order * self.speeds[shaft], v_mm_s_rms, phase)

    def tone(self, f: float, accel_peak: float, phase: float = 0.0) -> np.ndarray:
        """A tone of ``accel_peak`` m/s^2 peak at ``f`` Hz (none near Nyquist)."""
        if f >= self.fs / 2.2:
            return np.zeros(self.n)
        return accel_peak * np.sin(2 * np.pi * f * self.t + phase)


@dataclass(frozen=True)
class Part:
    """One fault's share of a simulation: ``add(x, point)`` adds its signal at ``point`` to ``x``
    in place; ``extra`` holds model values tests can check (impact times, rates)."""

    add: Callable[[np.ndarray, Point], None]
    extra: dict = field(default_factory=dict)


NOTHING = Part(lambda x, point: None)
