"""Simulator keywords the acquisition planner needs: a fixed resonance, an accelerometer-shaped
ring, a gear fault on the driven gear."""

import numpy as np
import pytest

from engine.analysis import amplitude_spectrum
from engine.common.errors import UsageError
from engine.machine import load_machine
from engine.simulation import simulate
from engine.simulation.signal import resonance_ring

from support import CASES

CT1 = CASES / "machines" / "ct1-cooling-tower-fan.yaml"


@pytest.fixture(scope="module")
def ct1():
    return load_machine(CT1)


def test_defaults_are_unchanged_by_the_new_keywords(ct1):
    a = simulate(ct1, "gear-tooth", "bevel_stage", 2, None, 6400.0, 1.0, 4, ["GINH"])
    b = simulate(ct1, "gear-tooth", "bevel_stage", 2, None, 6400.0, 1.0, 4, ["GINH"],
                 resonance_hz=None, ring_response="displacement", gear_side="driving")
    assert np.array_equal(a.channels["GINH"], b.channels["GINH"])


def test_acceleration_ring_falls_as_frequency_squared_below_the_resonance():
    # Source: single-degree-of-freedom frequency response (accelerance = -omega^2 x receptance;
    # e.g. Ewins, "Modal Testing", ch. 2, from memory): below the resonance the acceleration
    # response falls as (f / f_res)^2, while the displacement response stays flat.
    fs, f_res = 51200.0, 4000.0
    ring = resonance_ring(fs, f_res, 0.04, response="acceleration")
    flat = resonance_ring(fs, f_res, 0.04, response="displacement")
    n = 1 << 16
    acc = np.abs(np.fft.rfft(ring, n))
    disp = np.abs(np.fft.rfft(flat, n))
    f = np.fft.rfftfreq(n, 1 / fs)

    def ratio(spec, hz):
        return spec[np.argmin(np.abs(f - hz))]

    # an octave lower, 200 -> 100 Hz: the acceleration response drops by 4 (12 dB), the displacement not
    assert ratio(acc, 200) / ratio(acc, 100) == pytest.approx(4.0, rel=0.05)
    assert ratio(disp, 200) / ratio(disp, 100) == pytest.approx(1.0, rel=0.05)
    # both peak at the resonance
    assert f[np.argmax(acc)] == pytest.approx(f_res, rel=0.02)


def test_fixed_resonance_is_where_the_impacts_ring(ct1):
    sim = simulate(ct1, "outer-race", "input_front", 3, None, 25600.0, 2.0, 1, ["GINH"],
                   resonance_hz=6000.0, ring_response="acceleration")
    spec = amplitude_spectrum(sim.channels["GINH"], sim.fs_hz)
    band = spec.band(1000, 12000)
    assert spec.freq_hz[band][np.argmax(spec.amplitude[band])] == pytest.approx(6000, rel=0.03)


def test_tooth_fault_on_the_driven_gear_strikes_once_per_turn_of_its_shaft(ct1):
    sim = simulate(ct1, "gear-tooth", "bevel_stage", 2, None, 6400.0, 2.0, 0, ["GOUTH"], gear_side="driven")
    intervals = np.diff(sim.extra["impact_times_s"])
    assert np.allclose(intervals, 1 / ct1.shaft_speeds_hz["fan"])


@pytest.mark.parametrize("kwargs", [{"gear_side": "output"}, {"ring_response": "velocity"},
                                    {"resonance_hz": 4000.0}])
def test_bad_keywords_are_usage_errors(ct1, kwargs):
    with pytest.raises(UsageError):
        simulate(ct1, "gear-tooth", "bevel_stage", 2, None, 6400.0, 1.0, 0, ["GINH"], **kwargs)


def test_a_damaged_tooth_strikes_where_it_modulates_the_mesh(ct1):
    from scipy import signal

    sim = simulate(ct1, "gear-tooth", "bevel_stage", 2, None, 6400.0, 3.0, 2, ["GINH"])
    x = sim.channels["GINH"]
    f_in = ct1.shaft_speeds_hz["gear_input"]
    gmf = 23 * f_in
    b, a = signal.butter(4, [0.8 * gmf, 1.2 * gmf], btype="bandpass", fs=sim.fs_hz)
    envelope = np.abs(signal.hilbert(signal.filtfilt(b, a, x)))
    phase = (np.arange(len(x)) / sim.fs_hz * f_in) % 1.0
    bins = np.bincount((phase * 100).astype(int), weights=envelope, minlength=100)
    loudest = (np.argmax(bins) + 0.5) / 100
    impact = (sim.extra["impact_times_s"][0] * f_in) % 1.0
    assert abs((loudest - impact + 0.5) % 1.0 - 0.5) < 0.03      # within 11 degrees of shaft angle
