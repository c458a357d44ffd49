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


def _squared_envelope_spectrum_scipy(y, fs, band):
    """Reference: an ideal band-pass (FFT mask), ``scipy.signal.hilbert``, the squared magnitude's spectrum."""
    from scipy import signal

    n = len(y)
    spec = np.fft.rfft(y)
    f = np.fft.rfftfreq(n, 1 / fs)
    spec[(f < band[0]) | (f > band[1])] = 0
    squared = np.abs(signal.hilbert(np.fft.irfft(spec, n))) ** 2
    return f, np.abs(np.fft.rfft(squared - squared.mean())) * 2 / n


def test_taking_out_the_synchronous_part_puts_no_bearing_line_in_the_envelope():
    """A gear mesh with its harmonics up to 6 kHz and their 1X sidebands only, over white noise, no bearing
    fault, 610.5 samples per turn: the record less its synchronous part must leave the envelope of the noise
    alone. With scipy.signal.hilbert as reference (Randall & Antoni 2011, section 3: the squared envelope
    spectrum), the lines at an inner race's rate (BPFI = 9.252 orders, with its 1X sidebands and 2 x BPFI)
    stand no higher than in the noise's own envelope. Interpolating the revolutions by cubic convolution
    (Keys 1981) put them 300 to 9000 times higher: each turn starts at its own fraction of a sample, and
    near the Nyquist frequency the interpolation's error differs from turn to turn."""
    from engine.analysis.synchronous import synchronous_part

    fs, n, speed_hz, teeth = 12800.0, 51200, 1258 / 60, 19
    t = np.arange(n) / fs
    x = np.zeros(n)
    for k in range(1, 16):
        f = k * teeth * speed_hz
        x += np.sin(2 * np.pi * f * t + k)
        x += 0.3 * np.sin(2 * np.pi * (f - speed_hz) * t + 2 * k) + 0.3 * np.sin(2 * np.pi * (f + speed_hz) * t + 3 * k)
    noise = 0.01 * np.random.default_rng(7).standard_normal(n)
    band = (4300.0, 6300.0)
    bpfi = 9.252 * speed_hz
    rates = (bpfi - speed_hz, bpfi, bpfi + speed_hz, 2 * bpfi)

    def lines(y):
        f, ses = _squared_envelope_spectrum_scipy(y, fs, band)
        return np.array([ses[np.argmin(abs(f - hz)) - 2:np.argmin(abs(f - hz)) + 3].max() for hz in rates])

    rest = x + noise - synchronous_part(x + noise, fs, speed_hz)
    own = lines(noise)
    assert np.all(lines(rest) < 1.5 * own.max())
    # and the whole envelope spectrum is the noise's: its median within 10 %
    f, ses_rest = _squared_envelope_spectrum_scipy(rest, fs, band)
    _, ses_noise = _squared_envelope_spectrum_scipy(noise, fs, band)
    low = (f > 5) & (f < 500)
    assert np.median(ses_rest[low]) == pytest.approx(np.median(ses_noise[low]), rel=0.1)


def test_the_synchronous_part_is_the_record_s_lines_at_the_orders(rng):
    """The coefficients at the orders against a direct DFT (numpy as reference): a sum of orders is all
    synchronous (to the window's leakage, the record's whole turns end within half a sample), white noise
    keeps about 1 / count of its power (McFadden 1987: averaging N turns lowers noise by sqrt(N))."""
    from engine.analysis.synchronous import synchronous_part

    fs, speed_hz, n = 5000.0, 24.7, 50000
    t = np.arange(n) / fs
    x = np.sin(2 * np.pi * speed_hz * t + 0.3) + 0.5 * np.cos(2 * np.pi * 37 * speed_hz * t)
    assert np.max(np.abs(x - synchronous_part(x, fs, speed_hz))) < 2e-3
    noise = rng.standard_normal(n)
    count = int((n - 1) / fs * speed_hz)
    assert np.std(synchronous_part(noise, fs, speed_hz)) == pytest.approx(1 / np.sqrt(count), rel=0.15)
    assert not synchronous_part(np.ones(10), fs, speed_hz).any()          # less than one turn: nothing


def direct_synchronous_part(x: np.ndarray, fs: float, speed_hz: float) -> np.ndarray:
    """The definition, summed with numpy as reference: the DFT of the record's whole turns at every order
    of the shaft below fs / 2, laid back on every sample."""
    n = len(x)
    count = int(np.floor((n - 1) / fs * speed_hz + 1e-9))
    whole = min(n, int(round(count * fs / speed_hz)))
    step = 2 * np.pi * speed_hz / fs
    j, t = np.arange(whole), np.arange(n)
    direct = np.zeros(n)
    for m in range(int(np.ceil(fs / 2 / speed_hz))):
        c = np.sum(x[:whole] * np.exp(-1j * ((step * m * j) % (2 * np.pi)))) * (2.0 / whole) * (0.5 if m == 0 else 1.0)
        direct += (c * np.exp(1j * ((step * m * t) % (2 * np.pi)))).real
    return direct


@pytest.mark.parametrize("n", [4000, 2 * 32768 + 5, 3 * 32768 + 17])
def test_the_synchronous_part_in_paired_slices_is_the_direct_sum(n, rng):
    """Two real slices share each complex chirp transform (an even and an odd count of slices, and one
    slice alone): the result is the direct sum of the record's DFT at the orders laid back on every
    sample (the definition, summed with numpy as reference), to 1.5e-8 of the record's scale (the chirp's phase,
    about step x j^2 / 2 at the end of a slice of up to 32k, is held to ~1e-8 rad by double precision)."""
    from engine.analysis.synchronous import synchronous_part

    fs, speed_hz = 2000.0, 31.3
    x = rng.standard_normal(n) + 2 * np.sin(2 * np.pi * 3 * speed_hz * np.arange(n) / fs)
    direct = direct_synchronous_part(x, fs, speed_hz)
    assert np.max(np.abs(synchronous_part(x, fs, speed_hz) - direct)) < 1.5e-8 * np.max(np.abs(x))


@pytest.mark.parametrize("length", [1, 2, 5, 1000, 32768, 32769])
def test_chirp_and_ramp_tables_are_the_phasors_they_stand_for(length):
    """exp(i c j^2) and exp(i a j) built from sqrt(length)-long tables against numpy's exp of the whole
    phase (as reference): equal to the rounding of the phase itself in double precision (about 1.1e-16 of
    its size; 2e-16 of it allowed, plus a few units of the last place from the products)."""
    from engine.analysis.synchronous import _chirp, _ramp

    j = np.arange(length, dtype=float)
    for c in (-0.5 * 2 * np.pi * 24.77 / 25600, 0.5 * 2 * np.pi * 31.3 / 2000, 0.3):
        phase = c * j * j
        assert np.max(np.abs(_chirp(c, length) - np.exp(1j * phase))) <= 2e-16 * np.max(np.abs(phase)) + 2e-15
        phase = c * j
        assert np.max(np.abs(_ramp(c, length) - np.exp(1j * phase))) <= 2e-16 * np.max(np.abs(phase)) + 2e-15
        assert len(_chirp(c, length)) == len(_ramp(c, length)) == length


def test_the_synchronous_part_of_a_slow_shaft_in_longer_slices_is_the_direct_sum(rng):
    """A shaft with many orders below fs / 2 (1112 at 0.9 Hz, 2 kHz) is done in slices of up to 16k samples,
    not 8k (a slice holds at least 4 x its 2223 sums): still the direct sum of the record's DFT at the orders
    laid back on every sample (numpy as reference), as for a fast shaft above."""
    from engine.analysis.synchronous import synchronous_part

    fs, speed_hz, n = 2000.0, 0.9, 20001          # two slices of 10001
    x = rng.standard_normal(n) + 2 * np.sin(2 * np.pi * 5 * speed_hz * np.arange(n) / fs)
    direct = direct_synchronous_part(x, fs, speed_hz)
    assert np.max(np.abs(synchronous_part(x, fs, speed_hz) - direct)) < 1.5e-8 * np.max(np.abs(x))
