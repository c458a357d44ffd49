"""A bearing whose defect rate lies within the speed search of a shaft's 1X makes a comb of lines with that
shaft's spacing: those lines do not measure the shaft's speed unless the bearing's own comb stands beside them.

The machine is the invented TH-1 of tests/machines/th1-slow-rake-12-97.yaml: a motor at 5 Hz (300 rpm) behind
a 12:97 stage, whose rake bearing's BPFO is 5.079 Hz, 1.6 % above the motor's 1X (BPFO = n fr/2 (1 - d/D cos
phi): handbook formula, Randall & Antoni 2011, MSSP 25(2)). Signals are invented (seeded noise); a record of
20 s has lines 0.05 Hz apart (fs / N), so the two combs part from their second harmonics on (0.16 Hz, 3.2 lines:
more than the Hann main lobe's 4 lines across, Harris 1978, Proc. IEEE 66(1)).
"""

from __future__ import annotations

import numpy as np

from engine.analysis.result import velocity_spectrum
from engine.analysis.spectrum import amplitude_spectrum
from engine.analysis.speed import refine_speeds, speed_from_tones

FS = 1024.0
N = 20480                                   # 20 s: lines 0.05 Hz apart
MOTOR_HZ = 5.0
OUT_HZ = MOTOR_HZ * 12 / 97                 # the rake shaft behind the 12:97 stage
BPFO_HZ = 19 / 2 * (1 - 20 / 145 * np.cos(np.radians(10))) * OUT_HZ     # 5.079 Hz
SHAFTS = {"motor": MOTOR_HZ, "out": OUT_HZ}
MESH = [(12 * MOTOR_HZ, 12)]                # the 12-tooth pinion's mesh line, 60 Hz
RIVALS = {"BPFO of out_brg": BPFO_HZ, "BPFO of motor_de": 3.0324 * MOTOR_HZ}


def velocity(*tones: tuple[float, float], seed: int = 0):
    """The velocity spectrum (zero below 2 Hz) of tones given as (Hz, acceleration amplitude m/s^2)."""
    t = np.arange(N) / FS
    rng = np.random.default_rng(seed)
    x = sum(a * np.sin(2 * np.pi * f * t + k) for k, (f, a) in enumerate(tones)) + 0.002 * rng.standard_normal(N)
    return velocity_spectrum(amplitude_spectrum(x, FS))


def bearing_comb(scale: float = 1.0):
    """An outer race's lines: BPFO and its harmonics to 60 Hz, at the motor's speed times ``scale``."""
    return [(k * BPFO_HZ * scale, 0.5) for k in range(1, 13)]


def shaft_family(scale: float = 1.0):
    """The motor's 1X to 3X and the mesh line, at the motor's speed times ``scale``."""
    return [(k * MOTOR_HZ * scale, 0.5 * k) for k in (1, 2, 3)] + [(60.0 * scale, 3.0)]


def test_the_bearing_comb_alone_would_read_as_the_motor_1_6_percent_fast():
    # the trap: without the bearing's rate, its comb is the motor's family at 1.016 times the stated speed
    e = refine_speeds(velocity(*bearing_comb()), SHAFTS, "motor", 0.05, synchronous=MESH)
    assert e.refined and abs(e.speed_hz / BPFO_HZ - 1) < 0.002


def test_a_comb_a_listed_bearing_explains_as_well_does_not_measure_the_speed():
    e = refine_speeds(velocity(*bearing_comb()), SHAFTS, "motor", 0.05, synchronous=MESH, rivals_hz=RIVALS)
    assert not e.refined and e.source == "stated" and e.speed_hz == MOTOR_HZ
    assert e.shared_with == "BPFO of out_brg"


def test_the_shaft_family_with_the_bearing_comb_beside_it_measures_the_speed():
    # the motor's point shows its own family; the rake bearing's point shows the BPFO comb, resolved from it
    # (from 2X on) where a bearing on a shaft at that speed puts it: the family is the motor's
    at_motor = velocity(*shaft_family(0.99))
    at_rake = velocity(*bearing_comb(0.99), seed=1)
    e = refine_speeds(at_motor, SHAFTS, "motor", 0.05, synchronous=MESH, rivals_hz=RIVALS, beside=[at_rake])
    assert e.refined and abs(e.speed_hz - 0.99 * MOTOR_HZ) < 0.05 / 12
    # the rake point's comb is the bearing's: its own comb would need a bearing comb 1.6 % above it
    e = refine_speeds(at_rake, SHAFTS, "motor", 0.05, synchronous=MESH, rivals_hz=RIVALS, beside=[at_motor])
    assert not e.refined and e.shared_with == "BPFO of out_brg"


def test_without_the_bearing_comb_beside_it_the_shaft_family_is_not_a_measurement_either():
    # lines at the motor's orders alone could be the bearing's comb at a speed 1.6 % lower, within the search:
    # the record cannot tell which (a tachometer can)
    e = refine_speeds(velocity(*shaft_family()), SHAFTS, "motor", 0.05, synchronous=MESH, rivals_hz=RIVALS)
    assert not e.refined and e.shared_with == "BPFO of out_brg"


def test_a_rate_far_from_every_shaft_s_1x_claims_nothing():
    # the motor bearing's BPFO (3.03 x 1X) lies within the search of no shaft's 1X: the family is measured
    e = refine_speeds(velocity(*shaft_family()), SHAFTS, "motor", 0.05, synchronous=MESH,
                      rivals_hz={"BPFO of motor_de": RIVALS["BPFO of motor_de"]})
    assert e.refined and abs(e.speed_hz - MOTOR_HZ) < 0.05 / 12 and e.shared_with == ""


def test_a_slow_shaft_s_harmonic_searched_across_the_2_hz_cut_does_not_hide_the_motor_s_family():
    # the rake shaft's 3X (1.86 Hz) is searched up to 1.95 Hz, next to the velocity spectrum's first line at
    # 2 Hz, whose floor is zeros: it must not outscore the motor's own 1X to 3X
    e = refine_speeds(velocity((MOTOR_HZ, 1.0), (2 * MOTOR_HZ, 1.0), (3 * MOTOR_HZ, 1.0)), SHAFTS, "motor", 0.05)
    assert e.refined and abs(e.speed_hz - MOTOR_HZ) < 0.05 / 3


def test_bearing_tones_that_are_every_third_line_of_a_slower_bearing_s_comb_give_no_speed():
    # the rake bearing's BPFO comb in the squared envelope spectrum holds the motor bearing's BPFO family
    # (15.16 Hz) at every third line, 0.5 % off: with the comb's lines between them standing, the family is
    # the rake bearing's, and the rake bearing's own rate is too fine to search at this resolution
    t = np.arange(N) / FS
    ses = amplitude_spectrum(sum(np.cos(2 * np.pi * k * BPFO_HZ * t) for k in range(1, 25)), FS)
    motor_de = RIVALS["BPFO of motor_de"]
    assert speed_from_tones(ses, [motor_de], MOTOR_HZ) is not None            # the trap, alone
    assert speed_from_tones(ses, [motor_de, BPFO_HZ], MOTOR_HZ) is None
