"""Order tracking without a tach: the shaft's angle from a shaft-locked line of the record itself.

A loaded induction motor's speed is not constant: it fluctuates slowly with the load by a few
tenths of a percent. Cut at one constant speed, the revolutions of such a record slide against
each other, and their average smears what repeats once per turn (a damaged tooth's event) and the
mesh itself. Computed order tracking follows the shaft instead (Bonnardot, El Badaoui, Randall,
Daniere & Guillet 2005, "Use of the acceleration signal of a gearbox in order to perform angular
resampling (with limited speed fluctuation)", MSSP 19(4)): a line locked to the shaft, here a gear
mesh at order ``z`` of the shaft, is band-passed; the phase of its analytic signal, unwrapped and
divided by ``z``, is the shaft's angle. The band must hold the line's own frequency modulation and
keep out its neighbours (the mesh's sidebands, half a shaft speed away), so the phase is demodulated
in steps: each step moves the line to 0 Hz with the angle found so far and keeps a band of
``half_band_hz`` round it, so the next step sees a narrower modulation (the iteration Bonnardot et
al. make from a low harmonic to a higher one, done here on one line). The revolutions are then cut
where the angle passes whole turns (the pulse times a tach would give) and resampled between them
by a cubic spline of time against angle (Fyfe & Munck 1997, "Analysis of computed order tracking",
MSSP 11(2): a higher-order fit of the pulse times gives a smaller resampling error than a linear one).

``synchronous.py`` keeps the exact constant-speed path; ``result.py`` cuts the revolutions whose
once-per-turn events it reads this way only when the record's mesh line is smeared
(``line_spread``) and the angle found strays from one constant speed by more than
``WANDER_MESH_CYCLES`` of a mesh period.
"""

from __future__ import annotations

import numpy as np

from . import _fft as sfft
from .synchronous import resample_at

WANDER_SPREAD = 2.0           # a mesh line holding twice the power a steady line as tall would (a steady
                              # one holds 1 to 1.39 of it, ``line_spread``): the speed may wander, so
                              # its angle is measured; below it the line is steady and nothing is done
TRACK_STEPS = 4               # demodulation steps; the third changes the angle by well under 1e-4 turn
WIDE_STEPS = 2                # the first two in the wide band
PRE_BAND = 2.0                # the band moved to 0 Hz: twice the widest band kept
WANDER_MESH_CYCLES = 0.125    # an angle straying 1/8 of a mesh period (45 degrees of the mesh's phase)
                              # from one constant speed: the constant-speed average keeps cos 45 = 71 %
                              # of the mesh or less, and smears a once-per-turn event about one tooth
                              # pitch wide by a quarter of its width


def line_spread(freq_hz: np.ndarray, amplitude: np.ndarray, enbw_hz: float, carrier_hz: float,
                half_band_hz: float) -> float:
    """The power of a line's band over what one steady line as tall as its tallest bin would hold.

    A steady line holds, over its band, its amplitude squared times the window's equivalent
    noise bandwidth (Parseval); its tallest bin is between 0.85 and 1 of its amplitude (the
    Hann window's scalloping loss, 1.42 dB), so a steady line gives 1 to 1.39. A line whose
    frequency wanders spreads the same power over more bins and its tallest bin falls.

    Parameters
    ----------
    freq_hz : numpy.ndarray
        Line frequencies of an amplitude spectrum, Hz.
    amplitude : numpy.ndarray
        Its amplitudes, any unit (peak or RMS).
    enbw_hz : float
        The window's equivalent noise bandwidth, Hz.
    carrier_hz : float
        The line's nominal frequency, Hz.
    half_band_hz : float
        Half-width of its band, Hz.

    Returns
    -------
    float
        Dimensionless; 0 when the band holds no line.

    References
    ----------
    Harris (1978), "On the use of windows for harmonic analysis with the discrete Fourier
    transform", Proc. IEEE 66(1) (equivalent noise bandwidth, scalloping loss).

    Examples
    --------
    >>> from engine.analysis.spectrum import amplitude_spectrum
    >>> fs = 2048.0; t = np.arange(8192) / fs
    >>> steady = amplitude_spectrum(np.sin(2 * np.pi * 300.3 * t), fs)
    >>> wander = amplitude_spectrum(np.sin(2 * np.pi * 300.3 * t + 3 * np.sin(2 * np.pi * 0.5 * t)), fs)
    >>> s = [line_spread(p.freq_hz, p.amplitude, p.enbw_hz, 300.0, 5.0) for p in (steady, wander)]
    >>> 1.0 <= s[0] < 1.4, s[1] > 3
    (True, True)
    """
    lo, hi = np.searchsorted(freq_hz, [carrier_hz - half_band_hz, carrier_hz + half_band_hz])
    band = amplitude[lo:hi]
    if len(band) == 0:
        return 0.0
    top = float(np.max(band))
    if top <= 0:
        return 0.0
    df = float(freq_hz[1] - freq_hz[0])
    return float(np.sum(np.square(band / top)) * df / enbw_hz)


def shaft_angle(x: np.ndarray, fs: float, carrier_hz: float, order: int, half_band_hz: float,
                wide_half_band_hz: float | None = None, steps: int = TRACK_STEPS) -> np.ndarray:
    """The shaft's angle at every sample, in turns, from the phase of a line locked to it.

    The line's band (``PRE_BAND`` times the widest band used, round it) is moved to 0 Hz and
    decimated straight from the record's FFT; each step then demodulates it with the angle found
    so far and keeps ``half_band_hz`` round 0 Hz (the first ``WIDE_STEPS`` steps keep
    ``wide_half_band_hz`` when given: room for a larger fluctuation at first, the narrow band then
    keeps out a slower shaft's sidebands). The angle is read back at every sample by a cubic spline.

    Parameters
    ----------
    x : numpy.ndarray
        Samples, any unit.
    fs : float
        Sample rate in Hz.
    carrier_hz : float
        The line's mean frequency, Hz (``order`` times the mean speed).
    order : int
        The line's order of the shaft (a gear's teeth for its mesh).
    half_band_hz : float
        Half-width of the band kept round the line, Hz (less than half the spacing of its
        nearest neighbours, and wide enough for the speed's fluctuation).
    wide_half_band_hz : float, optional
        Half-width of the first steps' band, Hz.
    steps : int
        Demodulation steps.

    Returns
    -------
    numpy.ndarray
        ``len(x)`` angles in turns of the shaft, increasing.

    References
    ----------
    Bonnardot, El Badaoui, Randall, Daniere & Guillet (2005), "Use of the acceleration signal
    of a gearbox in order to perform angular resampling (with limited speed fluctuation)",
    MSSP 19(4) (the mesh's phase as the shaft's angle, found in steps); the analytic signal as
    ``scipy.signal.hilbert`` forms it (Marple 1999, "Computing the discrete-time analytic signal
    via FFT", IEEE Trans. SP 47(9)).

    Examples
    --------
    >>> fs = 4096.0; t = np.arange(16384) / fs
    >>> turns = 10 * t + 0.02 * np.sin(2 * np.pi * 0.5 * t)            # 10 Hz, wandering
    >>> x = np.cos(2 * np.pi * 23 * turns) + 0.3 * np.cos(2 * np.pi * 22 * turns)
    >>> found = shaft_angle(x, fs, 230.0, 23, 4.0)
    >>> err = (found - found[0]) - (turns - turns[0])
    >>> bool(np.max(np.abs(err[400:-400])) < 1e-3)
    True
    """
    from scipy.interpolate import CubicSpline

    n = len(x)
    duration = n / fs
    wide = max(half_band_hz, wide_half_band_hz or 0.0)
    spectrum = sfft.rfft(x)
    centre = int(round(carrier_hz * duration))
    reach = int(np.ceil(PRE_BAND * wide * duration))
    lo, hi = max(1, centre - reach), min(len(spectrum), centre + reach + 1)
    m = sfft.next_fast_len(4 * (hi - lo))                  # decimated: four times the band's lines
    base_spec = np.zeros(m, dtype=complex)
    base_spec[np.arange(lo, hi) - centre] = spectrum[lo:hi]
    del spectrum
    rate = m / duration
    t = np.arange(m) / rate
    base = np.fft.ifft(base_spec) * (2.0 * m / n)          # the line's analytic signal less exp(i 2 pi centre t / T)
    f = np.fft.fftfreq(m, 1.0 / rate)
    offset = centre / duration / order                     # turns per second the shift took out
    turns = t * (carrier_hz / order - offset)              # relative to the shift
    for step in range(steps):
        half = wide if (wide_half_band_hz is not None and step < WIDE_STEPS) else half_band_hz
        low = np.fft.fft(base * np.exp(-2j * np.pi * order * turns))
        low[np.abs(f) > half] = 0.0
        turns = turns + np.unwrap(np.angle(np.fft.ifft(low))) / (2 * np.pi * order)
    every = np.arange(n) / fs
    return CubicSpline(t, turns)(every) + offset * every


def wander_turns(turns: np.ndarray) -> float:
    """The largest departure of an angle from one constant speed (the least-squares line), in turns.

    Parameters
    ----------
    turns : numpy.ndarray
        Angle at every sample, turns.

    Returns
    -------
    float
        Turns.

    References
    ----------
    Common practice (a speed's fluctuation as the angle's departure from a constant speed);
    Fyfe & Munck (1997), "Analysis of computed order tracking", MSSP 11(2).

    Examples
    --------
    >>> t = np.arange(1000) / 100.0
    >>> round(wander_turns(5 * t + 0.01 * np.sin(2 * np.pi * 0.5 * t)), 2)
    0.01
    """
    i = np.arange(len(turns), dtype=float)
    slope, offset = np.polyfit(i, turns, 1)
    return float(np.max(np.abs(turns - (slope * i + offset))))


def pulse_times(turns: np.ndarray, fs: float) -> np.ndarray:
    """The times the angle passes whole turns: the pulses a once-per-turn tach would give.

    Parameters
    ----------
    turns : numpy.ndarray
        Angle at every sample, turns (increasing).
    fs : float
        Sample rate in Hz.

    Returns
    -------
    numpy.ndarray
        Times in s, one per whole turn within the record.

    References
    ----------
    Fyfe & Munck (1997), "Analysis of computed order tracking", MSSP 11(2).

    Examples
    --------
    >>> np.round(pulse_times(np.arange(10) * 0.25 + 0.1, 1.0), 9).tolist()      # a turn every 4 samples
    [3.6, 7.6]
    """
    turns = np.maximum.accumulate(turns)          # np.interp needs the angle never to fall back
    whole = np.arange(np.ceil(turns[0]), np.floor(turns[-1]) + 1)
    return np.interp(whole, turns, np.arange(len(turns)) / fs)


def tracked_rows(x: np.ndarray, fs: float, pulses: np.ndarray, samples_per_rev: int) -> np.ndarray:
    """The revolutions between successive pulses, one per row, ``samples_per_rev`` equal angles each.

    Time against angle is a cubic spline through the pulses; ``x`` is read there by cubic
    convolution, as the constant-speed rows are.

    Parameters
    ----------
    x : numpy.ndarray
        Samples, any unit.
    fs : float
        Sample rate in Hz.
    pulses : numpy.ndarray
        One time per turn, s (``pulse_times``).
    samples_per_rev : int
        Samples per row.

    Returns
    -------
    numpy.ndarray
        (len(pulses) - 1, samples_per_rev), in the unit of ``x``.

    References
    ----------
    Fyfe & Munck (1997), "Analysis of computed order tracking", MSSP 11(2) (spline fit of the
    pulse times); Keys (1981), IEEE Trans. ASSP 29(6) (cubic convolution).

    Examples
    --------
    >>> fs = 1000.0; t = np.arange(2000) / fs
    >>> turns = 10 * t + 0.05 * np.sin(2 * np.pi * 0.5 * t)
    >>> rows = tracked_rows(np.sin(2 * np.pi * turns), fs, pulse_times(turns, fs), 64)
    >>> rows.shape, bool(np.max(np.abs(rows - np.sin(2 * np.pi * np.arange(64) / 64))) < 1e-3)
    ((19, 64), True)
    """
    from scipy.interpolate import CubicSpline

    count = len(pulses) - 1
    if count < 1:
        return np.empty((0, samples_per_rev))
    spline = CubicSpline(np.arange(len(pulses), dtype=float), pulses) if count > 1 else None
    angles = np.arange(count)[:, None] + np.arange(samples_per_rev)[None, :] / samples_per_rev
    times = spline(angles) if spline is not None else pulses[0] + angles * (pulses[1] - pulses[0])
    return resample_at(x, times * fs)
