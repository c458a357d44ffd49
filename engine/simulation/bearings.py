"""Rolling-bearing defects (Randall & Antoni 2011, "Rolling element bearing diagnostics - A
tutorial", MSSP 25; McFadden & Smith 1984 for the signal model).

A defect is a train of impacts at its rate with 1 % random slip, each ringing a
structural resonance, amplitude-modulated by the load zone: at 1X for a
rotating inner race, at FTF for a rolling element, not at all for a stationary
outer race in the load zone. A cage fault strikes weakly once per cage turn
and modulates 1X at the cage rate.
"""

from __future__ import annotations

import numpy as np

from ..machine import Point
from ..machine.kinematics import BearingRates, bearing_multiples
from .signal import G, Part, Scene, impact_signal, impact_times, resonance_ring

# impact size by stage: stage 1 is visible only in the envelope; stage 4 dominates the waveform.
# Stage 3 is the stage whose defect line stands in the ordinary velocity spectrum at a tenth of the
# bearing's 1X or more (rulebooks/advice/severity.yaml stages; bearing.stage.velocity-tone reads the
# line against the largest 1X at the bearing, a radial one). The background's radial 1X at a bearing
# is 0.6 mm/s RMS from its own shaft plus 0.18 from a coupled one at a random phase (healthy.py): 0.42
# to 0.78 mm/s. A race defect's line comes out at about 0.05 to 0.065 mm/s per g of impact on RW-2
# (an inner race's 1X load-zone modulation moves a share into its sidebands), so 1.5 g left stage-3
# inner races at 0.096 to 0.23 of the 1X, under a tenth at some seeds: the stage's own sign missing.
# 2.5 g puts the line above a tenth of the largest background 1X; stage 2's 0.4 g stays below a tenth
# of the smallest (its line stood at a tenth only against an axial channel's own, smaller 1X).
IMPACT_G = {1: 0.06, 2: 0.4, 3: 2.5, 4: 5.0}
# Stage 4: the damage has spread round the race, and the rolling elements run over rough metal all
# the way: a dense train of small impacts at random instants rings the same resonance. That is a
# raised broadband floor (the "haystack") in the band where bearings ring (each impact an
# acceleration-like ring, which carries nothing down at the running-speed lines); against it the
# spall's periodic impacts stand less clear and the waveform's kurtosis falls back towards 3, the
# Gaussian value. The clearance has grown, so 1X and its harmonics rise. (Common practice: the
# four-stage account of rolling-bearing wear.)
SPREAD_IMPACTS_PER_PASS = 200    # random impacts per defect pass at stage 4
SPREAD_SIZE = 0.16               # their RMS size, times the stage's impact size
# The grown clearance lets the shaft knock about radially: harmonics of 1X (2X to 5X) appear, and
# reach an axial sensor weakly (common practice: a radial bearing's looseness shows radially; axial
# above radial is misalignment's sign). 1X itself is left to the residual unbalance already there: a
# second 1X at a random phase would cancel it at some seeds, an artefact no bearing makes.
CLEARANCE_AXIAL_SHARE = 0.3
SHAFT_AWAY = 0.15    # at a point on the same shaft but another bearing
MACHINE_AWAY = 0.03  # at a point on another shaft


LOW_CUT_OF_RATE = 0.5    # the impacts' content is kept from half the defect rate up


def _below_rate_cut(x: np.ndarray, fs: float, rate_hz: float) -> np.ndarray:
    """``x`` with nothing below a quarter of the defect rate and all from half of it up (a raised-cosine
    edge one octave wide between).

    The rings are displacement-shaped: flat in acceleration below the resonance, as if the structure
    were mass-like down to 0 Hz. An accelerometer sees an impact's force far below the resonance
    (f / f_res)^2 weaker (accelerance = -omega^2 x receptance of a single degree of freedom; Ewins,
    Modal Testing, ch. 2, from memory): at the shaft orders a few kHz resonance leaves 1e-4 of the
    ring's level. Kept flat, the 1X-modulated train put its own 1X and 2X at a random phase into every
    direction alike, cancelling the residual 1X in one direction at some seeds: a stage-4 inner race read
    as angular misalignment (axial 1X above radial). An inner race's load zone shows instead as sidebands
    at BPFI +- 1X (McFadden & Smith 1984); the content is kept from half the defect rate up, where the
    defect line in the velocity spectrum (the stage-3 sign) and those sidebands stand.
    """
    edge_hz = LOW_CUT_OF_RATE * rate_hz
    if edge_hz <= 0:
        return x
    spectrum = np.fft.rfft(x)
    f = np.fft.rfftfreq(len(x), 1.0 / fs)
    gain = np.clip(np.log2(np.maximum(f, 1e-12) / (edge_hz / 2)), 0.0, 1.0)   # 0 below edge/2, 1 above edge
    spectrum *= 0.5 - 0.5 * np.cos(np.pi * gain)
    return np.fft.irfft(spectrum, len(x))


def _defect(s: Scene, bearing: str, stage: int, rate_hz: float, mod_hz: float | None, depth: float,
            size_factor: float = 1.0, then=None) -> Part:
    """Impacts at ``rate_hz`` modulated to ``depth`` at ``mod_hz``; ``then(rates, x)`` adds more."""
    rates = s.rates.bearing(bearing)
    duration = s.n / s.fs
    size = IMPACT_G[stage] * G
    if size_factor != 1.0:
        size *= size_factor
    times = impact_times(rate_hz, duration, s.rng)
    amplitudes = np.full(len(times), size)
    if mod_hz is not None:
        phase = s.rng.uniform(0, 2 * np.pi)
        load = 0.5 + 0.5 * np.cos(2 * np.pi * mod_hz * times + phase)
        amplitudes *= (1 - depth) + depth * load
    amplitudes *= 1 + 0.1 * s.rng.standard_normal(len(times))
    ring = resonance_ring(s.fs, s.resonance_hz, damping=0.04, response=s.ring_response)
    x = _below_rate_cut(impact_signal(times, amplitudes, s.fs, s.n, ring), s.fs, rate_hz)
    if then is not None:
        x += then(rates)
    if stage == 4:  # late stage: damage spread round the race, the floor rises (1X harmonics below)
        spread = np.sort(s.rng.uniform(0, duration, s.rng.poisson(SPREAD_IMPACTS_PER_PASS * rate_hz * duration)))
        rough = resonance_ring(s.fs, s.resonance_hz, damping=0.04, response="acceleration")
        x += impact_signal(spread, SPREAD_SIZE * size * s.rng.standard_normal(len(spread)), s.fs, s.n, rough)
        x += 0.03 * G * s.rng.standard_normal(s.n)
    clearance = np.zeros(s.n)
    if stage == 4:
        for k in range(2, 6):
            clearance += s.shaft_tone(rates.shaft, k, 0.4 / k, s.rng.uniform(0, 6.3))
    points_at = {p.at for p in s.machine.points}

    def add(out: np.ndarray, point: Point) -> None:
        near = s.near(point)
        at_bearing = point.at == bearing or (bearing not in points_at and near)
        share = CLEARANCE_AXIAL_SHARE if point.direction == "axial" else 1.0
        out += (x + share * clearance) * (1.0 if at_bearing else SHAFT_AWAY if near else MACHINE_AWAY)
    return Part(add, {"impact_times_s": times, "impact_rate_hz": rate_hz, "modulation_hz": mod_hz})


def outer_race(s: Scene, bearing: str, stage: int) -> Part:
    """Impacts at BPFO, not modulated: a stationary outer race in the load zone."""
    return _defect(s, bearing, stage, s.rates.bearing(bearing).bpfo_hz, None, 0.0)


def inner_race(s: Scene, bearing: str, stage: int) -> Part:
    """Impacts at BPFI, modulated 80 % deep at 1X as the defect turns through the load zone."""
    rates = s.rates.bearing(bearing)
    return _defect(s, bearing, stage, rates.bpfi_hz, rates.shaft_hz, 0.8)


def rolling_element(s: Scene, bearing: str, stage: int) -> Part:
    """Impacts at 2 x BSF, modulated 80 % deep at FTF, 0.7 times a race defect's size."""
    rates = s.rates.bearing(bearing)
    return _defect(s, bearing, stage, rates.impact_rate_hz("BSF"), rates.ftf_hz, 0.8, size_factor=0.7)


def cage(s: Scene, bearing: str, stage: int) -> Part:
    """A weak impact once per cage turn, and the cage rate modulating 1X."""
    def modulated_1x(rates: BearingRates) -> np.ndarray:
        # the cage's order of the shaft speed, as kinematics gives it
        ftf_order = bearing_multiples(next(b for b in s.machine.bearings if b.id == bearing))["ftf"]
        return (s.shaft_tone(rates.shaft, 1, 0.8 * stage)
                * (1 + 0.5 * np.cos(2 * np.pi * ftf_order * rates.shaft_hz * s.t)))
    return _defect(s, bearing, stage, s.rates.bearing(bearing).ftf_hz, None, 0.0, size_factor=0.6,
                   then=modulated_1x)
