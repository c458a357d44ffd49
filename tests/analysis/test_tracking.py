"""Order tracking from the record itself: the shaft's angle from a mesh line's phase, revolutions cut at it.

The test signals are made with a known shaft angle (a speed that rises and wanders), so the angle
found is checked against the true one; scipy's band-pass and ``scipy.signal.hilbert`` are the reference
for the phase of a band-passed line.
"""

import numpy as np
import pytest

from engine.analysis.spectrum import amplitude_spectrum
from engine.analysis.synchronous import events_of_rows, revolution_rows
from engine.analysis.tracking import line_spread, pulse_times, shaft_angle, tracked_rows, wander_turns

FS = 8192.0
TEETH = 23


def _true_turns(n, fs, speed_hz=16.0, rise=0.004, wander=0.01, wander_hz=0.5):
    """A shaft angle in turns: ``speed_hz`` rising by ``rise`` over the record (a chirp) and fluctuating
    by +-``wander`` of the speed at ``wander_hz``; its instantaneous speed is known in closed form."""
    t = np.arange(n) / fs
    duration = n / fs
    return speed_hz * (t + rise * t * t / (2 * duration) + wander * np.sin(2 * np.pi * wander_hz * t)
                       / (2 * np.pi * wander_hz))


def _gear_record(turns, rng, noise=0.3):
    """A mesh at order 23 with 1X sidebands, a 1X, and white noise (known angle ``turns``)."""
    mesh = np.cos(2 * np.pi * TEETH * turns)
    sidebands = 0.3 * np.cos(2 * np.pi * (TEETH - 1) * turns) + 0.2 * np.cos(2 * np.pi * (TEETH + 1) * turns + 1)
    return mesh + sidebands + 0.5 * np.sin(2 * np.pi * turns) + noise * rng.standard_normal(len(turns))


@pytest.mark.parametrize("wander", [0.0, 0.005, 0.01])
def test_the_angle_found_is_the_true_angle(rng, wander):
    # Known answer: the signal is made from the angle (a chirp of +0.4 % and a +-wander fluctuation); the
    # angle from the mesh's phase (Bonnardot et al. 2005, MSSP 19(4)) must follow it to 1/100 of a tooth
    # pitch away from the record's ends (2e-3 turn at its ends, where the band's filter wraps); the noise in
    # the band sets the floor (0.1 RMS white noise: about 4e-5 turn of phase noise RMS)
    n = int(FS * 4)
    truth = _true_turns(n, FS, wander=wander)
    found = shaft_angle(_gear_record(truth, rng, noise=0.1), FS, TEETH * 16.0, TEETH, 6.0, 8.0)
    err = (found - truth) - np.median(found - truth)
    inner = slice(n // 20, -n // 20)
    assert np.max(np.abs(err[inner])) < 0.01 / TEETH
    assert np.max(np.abs(err)) < 2e-3
    # its departure from one constant speed is the true one (the chirp's and the fluctuation's)
    assert wander_turns(found) == pytest.approx(wander_turns(truth), abs=2e-3)


def test_the_phase_agrees_with_scipy_hilbert_of_the_band_passed_line(rng):
    # Reference: a zero-phase Butterworth band-pass round the mesh (scipy.signal.sosfiltfilt) and the phase
    # of scipy.signal.hilbert's analytic signal, unwrapped and divided by the order (Bonnardot et al. 2005)
    from scipy import signal

    n = int(FS * 4)
    truth = _true_turns(n, FS, wander=0.004)
    x = _gear_record(truth, rng, noise=0.1)
    carrier = TEETH * 16.0
    sos = signal.butter(4, [carrier - 8.0, carrier + 8.0], btype="bandpass", fs=FS, output="sos")
    reference = np.unwrap(np.angle(signal.hilbert(signal.sosfiltfilt(sos, x)))) / (2 * np.pi * TEETH)
    found = shaft_angle(x, FS, carrier, TEETH, 8.0, 8.0)
    diff = (found - reference)[n // 10:-n // 10]
    assert np.ptp(diff) < 2e-3                 # the same angle, up to a constant (the filter's edges left out)


def test_a_steady_line_is_not_spread_and_a_wandering_one_is(rng):
    # Harris (1978): a steady line's power over its band is its amplitude squared times the window's ENBW,
    # its tallest bin 0.85 to 1 of its amplitude (Hann scalloping), so line_spread is 1 to 1.39
    n = int(FS * 4)
    for speed in (16.0, 16.03, 16.11):                   # on a line and between lines
        steady = amplitude_spectrum(_gear_record(_true_turns(n, FS, speed_hz=speed, rise=0, wander=0), rng), FS)
        assert 1.0 <= line_spread(steady.freq_hz, steady.amplitude, steady.enbw_hz, TEETH * speed, 8.0) < 1.39
    wandering = amplitude_spectrum(_gear_record(_true_turns(n, FS, rise=0, wander=0.005), rng), FS)
    assert line_spread(wandering.freq_hz, wandering.amplitude, wandering.enbw_hz, TEETH * 16.0, 8.0) > 2.0


def test_tracked_revolutions_keep_a_once_per_turn_event_that_constant_speed_smears(rng):
    # Known answer: a spike at a quarter turn of every revolution of a shaft whose speed wanders +-0.5 %.
    # Cut at the mesh's angle, every revolution holds it at 90 degrees (FM4 far above 3: Stewart 1977);
    # cut at the mean speed, the revolutions slide by up to 0.05 turn and the average smears it.
    n = int(FS * 4)
    truth = _true_turns(n, FS, rise=0, wander=0.005)
    x = _gear_record(truth, rng, noise=0.05)
    frac = truth - np.floor(truth)
    x[np.flatnonzero((frac[1:] >= 0.25) & (frac[:-1] < 0.25)) + 1] += 5.0
    found = shaft_angle(x, FS, TEETH * 16.0, TEETH, 8.0, 8.0)
    found -= np.interp(0.0, np.arange(n) / FS, found) - truth[0]     # the phase's origin is the mesh's, not the spike's
    rows = tracked_rows(x, FS, pulse_times(found, FS), 512)
    tracked = events_of_rows(rows, [TEETH])
    constant = events_of_rows(revolution_rows(x, FS, 16.0, 512), [TEETH])
    assert tracked.repeat_fraction == 1.0
    assert tracked.fm4 > 2 * constant.fm4
    assert tracked.peak_to_rms > constant.peak_to_rms


def test_pulse_times_follow_the_angle():
    # Known answer: a shaft at 2 turns per second from turn 0.5: a pulse at each whole turn
    fs = 100.0
    turns = 0.5 + 2.0 * np.arange(400) / fs
    assert pulse_times(turns, fs) == pytest.approx((np.arange(1, 9) - 0.5) / 2.0)
