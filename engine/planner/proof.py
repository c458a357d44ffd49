"""Show it, not only tell it: simulate each fault, record it with each setting, look for its evidence.

For each target (a fault on a component) the simulator makes one physical
signal at a high rate (``engine.simulation``, stage 2, impacts shaped as an
accelerometer sees them, ringing at the geometric centre of the policy's
ringing band, about 4.5 kHz for 2-10 kHz). Each setting records that same signal
as an analyzer would: resampled to its sample rate (``scipy.signal.
resample_poly``), cut by an anti-alias low-pass at its Fmax (elliptic, 0.1 dB
ripple, 80 dB stop band, run forward and backward) and kept for its waveform
length. The evidence extractors then run on each record and the real
``Reasoner`` (one per plan, on the rulebooks the diagnosis loads, site
overlays included) reasons over the facts; ``shown`` reads whether the
fault's hypothesis appears. The verdict "these settings cannot show a
cracked tooth on the output shaft" is then a measurement made with the
diagnosis itself.

The simulator is clean (little background below the resonance, no process
noise), so a fault it shows may still hide in a real machine; a fault it
does not show is a strong sign the settings are at fault.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from fractions import Fraction

import numpy as np

from ..common.errors import ReadingError, TellwaveError, UsageError
from ..machine import Machine, Point
from ..readings.limits import FULL_LENGTH_CHANNELS, MAX_SAMPLES_PER_CHANNEL
from ..reasoning import Reasoner
from .check import CAN, CANNOT
from .policy import Policy
from .settings import Settings
from .shown import Reference, level_shown, reasoner_for, shown
from .targets import Target

STAGE = 2                    # an early but clear fault in the simulator's scale
SEED = 1
PHYSICAL_MIN_HZ = 51200.0    # the "physical" signal: at least this rate, and twice the fastest setting
PAD_S = 0.1                  # signal on each side of a record, so the filters start and end in signal
ANTI_ALIAS = dict(order=8, ripple_db=0.1, stop_db=80.0)
# the physical signal is at most as long as the samples of a whole reading (engine/readings/limits.py):
# with its resampled records and their analysis a proof then peaks near 1 GB (measured, README "Bad input")
MAX_PHYSICAL_SAMPLES = FULL_LENGTH_CHANNELS * MAX_SAMPLES_PER_CHANNEL


@dataclass(frozen=True)
class Trial:
    """One setting's record of a simulated fault: whether it showed it, the measure that decided, certainty, rules."""

    settings: Settings
    found: bool
    measure: str
    certainty: float | None = None   # of the fault's hypothesis, when the reasoning names it
    rules: tuple[str, ...] = ()      # the rules that concluded it


@dataclass(frozen=True)
class ProofItem:
    """The proof for one target at one point: one trial per settings label, and the check's verdict for each."""

    target: Target
    point: str
    trials: dict              # settings label -> Trial
    expected: dict            # settings label -> the check's verdict state

    def agrees(self, label: str) -> bool | None:
        """Whether the simulation agrees with the check for one setting (None: the check says 'may miss')."""
        state = self.expected.get(label)
        found = self.trials[label].found
        if state == CAN:
            return found
        if state == CANNOT:
            return not found
        return None


def physical_rate(settings: list[Settings]) -> float:
    """A rate that is a whole multiple of the fastest setting's and well above every one."""
    top = max(s.sample_rate_hz for s in settings)
    return top * math.ceil(max(PHYSICAL_MIN_HZ, 2 * top) / top)


def record(x: np.ndarray, fs_hz: float, settings: Settings, start_s: float = PAD_S) -> tuple[np.ndarray, float]:
    """``x`` (sampled at ``fs_hz``) as an analyzer with ``settings`` records it: (samples, their rate).

    The rate actually reached can differ from the asked one by the rational
    approximation of their ratio (one part in 10^5 or less).
    """
    from scipy import signal

    ratio = Fraction(settings.sample_rate_hz / fs_hz).limit_denominator(100000)
    y = signal.resample_poly(x, ratio.numerator, ratio.denominator) if ratio != 1 else np.asarray(x, float)
    fs = fs_hz * ratio.numerator / ratio.denominator
    if settings.fmax_hz < 0.499 * fs:
        sos = signal.ellip(ANTI_ALIAS["order"], ANTI_ALIAS["ripple_db"], ANTI_ALIAS["stop_db"],
                           settings.fmax_hz, btype="low", output="sos", fs=fs)
        if len(y) > 1:      # a record of a few samples (a very slow setting in a short window) is still one
            y = signal.sosfiltfilt(sos, y, padlen=min(3 * (2 * len(sos) + 1), len(y) - 1))
    first = int(round(start_s * fs))
    return y[first:first + settings.n_samples], fs


def resonance_hz(policy: Policy) -> float:
    """Where the simulated impacts ring: the geometric centre of the policy's ringing band.

    A clean simulation still shows impacts through the flank of a resonance up to
    about an octave below it, so a resonance at the band's lower edge would make
    settings look better than they are on a machine with background below it.
    """
    lo, hi = policy.bearing_resonance_hz
    return math.sqrt(lo * hi)


def simulate_target(machine: Machine, target: Target, point: Point, duration_s: float, fs_hz: float,
                    policy: Policy, speed_rpm: float | None = None, seed: int = SEED):
    """The physical signal of ``target`` at ``point``: a Simulation at ``fs_hz`` of ``duration_s``."""
    from ..simulation import simulate

    return simulate(machine, target.fault, target.component, STAGE, speed_rpm, fs_hz, duration_s, seed,
                    [point.id], resonance_hz=resonance_hz(policy), ring_response="acceleration",
                    gear_side=target.gear_side)


def _reference(x, fs, machine, point, speed_rpm, policy) -> Reference:
    from ..analysis import overall_levels

    rpm = machine.speeds_at(speed_rpm)[point.shaft] * 60
    level = overall_levels(x, fs, "acceleration", rpm)
    return Reference(level.velocity_rms_mm_s, policy.severity_tolerance_pct)


def _facts(machine, sim, samples, fs):
    from ..evidence import extract_evidence
    from ..readings import MIN_SAMPLES
    from ..simulation import Simulation, as_reading

    if len(samples) < MIN_SAMPLES:      # what a reader refuses in a file, the proof refuses here
        raise ReadingError(f"holds only {len(samples)} samples; the analysis needs at least {MIN_SAMPLES}")
    rec = Simulation(fs, {name: samples for name in sim.channels}, sim.points, sim.truth, sim.speed_rpm, {})
    return extract_evidence(as_reading(rec, source="simulated record"), machine)


def prove(machine: Machine, target: Target, point: Point, settings: dict, policy: Policy,
          expected: dict | None = None, speed_rpm: float | None = None, seed: int = SEED,
          reasoner: Reasoner | None = None) -> ProofItem:
    """Record one simulated ``target`` at ``point`` with each of ``settings`` (label -> Settings), and ask
    ``reasoner`` (default: one on the shipped rulebooks) whether each record shows it."""
    reasoner = reasoner or reasoner_for(None)
    rates = list(settings.values())
    fs = physical_rate(rates)
    longest = max(s.duration_s for s in rates)
    physical = fs * (longest + 2 * PAD_S)
    if physical > MAX_PHYSICAL_SAMPLES:
        raise UsageError(f"the proof would simulate {physical:.4g} samples ({longest + 2 * PAD_S:g} s at {fs:g} Hz), "
                         f"more than {MAX_PHYSICAL_SAMPLES}; give --no-proof, or a shorter waveform or lower rate")
    sim = simulate_target(machine, target, point, longest + 2 * PAD_S, fs, policy, speed_rpm, seed)
    x = sim.channels[point.id]
    reference = None
    if target.signature == "severity":
        reference = _reference(x[int(PAD_S * fs):-int(PAD_S * fs)], fs, machine, point, speed_rpm, policy)
    trials = {}
    for label, s in settings.items():
        samples, rate = record(x, fs, s)
        try:
            facts = _facts(machine, sim, samples, rate)
        except TellwaveError as exc:
            trials[label] = Trial(s, False, f"the record cannot be analysed ({exc.problem})")
            continue
        if target.signature == "severity":
            outcome = level_shown(facts, target, reference)
        else:
            outcome = shown(reasoner.reason(facts), target)
        trials[label] = Trial(s, outcome.found, outcome.measure, outcome.certainty, outcome.rules)
    return ProofItem(target, point.id, trials, dict(expected or {}))
