"""Revolutions and time synchronous averaging."""

import numpy as np
import pytest

from engine.analysis import cut_revolutions, synchronous_average, tach_pulse_times


def test_tsa_keeps_the_synchronous_part_and_suppresses_noise(rng):
    # Source: McFadden (1987): averaging N revolutions lowers non-synchronous noise by sqrt(N).
    fs, speed = 10000.0, 24.7
    n = int(fs * 20)
    t = np.arange(n) / fs
    periodic = np.sin(2 * np.pi * speed * t) + 0.5 * np.sin(2 * np.pi * 7 * speed * t + 1)
    noise = rng.standard_normal(n)
    avg, count = synchronous_average(periodic + noise, fs, speed_hz=speed, samples_per_rev=512)
    clean, _ = synchronous_average(periodic, fs, speed_hz=speed, samples_per_rev=512)
    phase = np.arange(512) / 512
    expected = np.sin(2 * np.pi * phase) + 0.5 * np.sin(2 * np.pi * 7 * phase + 1)
    assert count == int((n - 1) / fs * speed)  # whole revolutions only
    assert np.allclose(clean, expected, atol=1e-3)
    residual = np.std(avg - expected)
    assert residual == pytest.approx(1.0 / np.sqrt(count), rel=0.25)


def test_tach_pulses_give_the_revolutions():
    fs, speed = 20000.0, 12.5
    n = int(fs * 4)
    t = np.arange(n) / fs
    tach = ((t * speed) % 1.0 < 0.1).astype(float) * 5.0  # one 5 V pulse per turn
    pulses = tach_pulse_times(tach, fs)
    assert np.allclose(np.diff(pulses), 1 / speed, atol=1 / fs)
    revs = cut_revolutions(np.sin(2 * np.pi * speed * t), fs, pulse_times=pulses)
    assert revs.speed_hz == pytest.approx(speed, rel=1e-4)
    assert revs.count == len(pulses) - 1
    # every revolution starts at the same shaft angle, so all rows agree
    assert np.max(np.std(revs.samples, axis=0)) < 1e-3


def test_less_than_one_revolution_is_an_error():
    with pytest.raises(ValueError, match="less than one revolution"):
        cut_revolutions(np.zeros(100), 1000.0, speed_hz=1.0)


def test_constant_speed_revolutions_match_spline_resampling(rng):
    # cubic convolution (Keys 1981) against scipy's cubic spline on a smooth, oversampled signal
    from scipy.interpolate import CubicSpline

    fs, speed, spr = 5000.0, 10.3, 512
    n = int(fs * 3)
    t = np.arange(n) / fs
    x = np.sin(2 * np.pi * speed * t) + 0.3 * np.cos(2 * np.pi * 9 * speed * t + 0.4)
    revs = cut_revolutions(x, fs, speed_hz=speed, samples_per_rev=spr)
    times = (np.arange(revs.count)[:, None] + np.arange(spr)[None, :] / spr) / speed
    reference = CubicSpline(t, x)(times)
    assert np.max(np.abs(revs.samples - reference)) < 2e-3
