"""Overall levels and waveform statistics.

The overall velocity is the broadband RMS that ISO 20816-3:2022 evaluates:
10 Hz to 1000 Hz, or 2 Hz to 1000 Hz for machines running at 600 r/min or
below (ISO 20816-3:2022, clause 4.3 on the measurement band).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..common.units import STANDARD_GRAVITY_M_S2
from ..readings.band_rms import INTEGRATIONS_TO_VELOCITY, ISO_BAND_HZ, ISO_BAND_SLOW_HZ, ISO_SLOW_SPEED_RPM
from .spectrum import Transform


@dataclass(frozen=True)
class WaveformStats:
    """Statistics of one record, mean removed: RMS and peak in its unit; the ratios dimensionless."""

    rms: float
    peak: float          # largest |x - mean|
    crest_factor: float  # peak / RMS
    kurtosis: float      # Pearson: 3 for Gaussian, 1.5 for a sine
    skewness: float


def waveform_statistics(x) -> WaveformStats:
    """RMS, peak, crest factor, kurtosis and skewness of a record (mean removed).

    Kurtosis and skewness are the biased moment ratios m4 / m2^2 and
    m3 / m2^1.5, the same as ``scipy.stats.kurtosis(x, fisher=False)`` and
    ``scipy.stats.skew(x)`` (the tests hold them against scipy).

    Parameters
    ----------
    x : array_like
        Samples, any unit.

    Returns
    -------
    WaveformStats
        ``rms`` and ``peak`` in the unit of ``x``; crest factor, kurtosis
        (Pearson: 3 for Gaussian noise, 1.5 for a sine) and skewness dimensionless.

    References
    ----------
    Randall (2011), "Vibration-based Condition Monitoring", section 4.1 (crest
    factor and kurtosis as condition indicators); moment ratios as in
    ``scipy.stats``.

    Examples
    --------
    >>> t = np.arange(4000) / 4000.0
    >>> s = waveform_statistics(2.0 * np.sin(2 * np.pi * 10 * t))
    >>> [round(v, 4) for v in (s.rms, s.peak, s.crest_factor, s.kurtosis)]
    [1.4142, 2.0, 1.4142, 1.5]
    """
    x = np.asarray(x, dtype=float)
    ac = x - x.mean()
    sq = ac * ac
    m2 = float(sq.mean())
    rms = float(np.sqrt(m2))
    peak = float(np.max(np.abs(ac)))
    if m2 > 0:
        kurtosis = float(np.mean(sq * sq) / (m2 * m2))
        skewness = float(np.mean(sq * ac) / m2 ** 1.5)
    else:
        kurtosis = skewness = float("nan")
    return WaveformStats(rms=rms, peak=peak, crest_factor=peak / rms if rms > 0 else float("nan"),
                         kurtosis=kurtosis, skewness=skewness)


def iso_band_hz(speed_rpm: float | None) -> tuple[float, float]:
    """The ISO 20816-3 measurement band for a machine running at ``speed_rpm``.

    Parameters
    ----------
    speed_rpm : float or None
        Running speed in r/min (None: not known, the usual band).

    Returns
    -------
    tuple of float
        (low, high) in Hz.

    References
    ----------
    ISO 20816-3:2022, clause 4.3: 10 Hz to 1000 Hz, or 2 Hz to 1000 Hz for
    machines at 600 r/min or below.

    Examples
    --------
    >>> iso_band_hz(1485.0), iso_band_hz(300.0)
    ((10.0, 1000.0), (2.0, 1000.0))
    """
    if speed_rpm is not None and speed_rpm <= ISO_SLOW_SPEED_RPM:
        return ISO_BAND_SLOW_HZ
    return ISO_BAND_HZ


@dataclass(frozen=True)
class OverallLevels:
    """Overall levels of one channel: velocity in mm/s RMS (ISO 20816-3 band), acceleration in g, shape ratios."""

    velocity_rms_mm_s: float          # in the ISO 20816-3 band
    velocity_band_hz: tuple[float, float]
    band_truncated: bool              # Fmax below the band's top: the value reads low
    acceleration_rms_g: float | None  # None when the channel is not acceleration
    acceleration_peak_g: float | None
    crest_factor: float
    kurtosis: float
    skewness: float


def iso_velocities(transform: Transform, quantity: str) -> dict[tuple[float, float], float]:
    """Velocity RMS (m/s) in each ISO 20816-3 band, so the band can be picked once the speed is known.

    Parameters
    ----------
    transform : Transform
        The one FFT of the record (SI units of ``quantity``).
    quantity : str
        acceleration, velocity or displacement.

    Returns
    -------
    dict
        (low Hz, high Hz) -> velocity RMS in m/s, for both ISO bands.

    References
    ----------
    ISO 20816-3:2022, clause 4.3 (bands); the band RMS is
    ``engine.readings.band_rms.band_rms_of_fft`` (Hann periodogram, Heinzel et
    al. 2002), which the quality gates share.

    Examples
    --------
    >>> fs = 2048.0; t = np.arange(8192) / fs
    >>> v = iso_velocities(Transform.of(0.01 * np.sin(2 * np.pi * 64 * t), fs), "velocity")
    >>> round(v[(10.0, 1000.0)] * 1e3, 4)     # 10 mm/s peak is 7.0711 mm/s RMS
    7.0711
    """
    return {band: transform.band_rms(band[0], min(band[1], transform.fs_hz / 2),
                                     integrations=INTEGRATIONS_TO_VELOCITY[quantity])
            for band in (ISO_BAND_HZ, ISO_BAND_SLOW_HZ)}


def levels_of(x, velocities_m_s: dict, fs: float, quantity: str, speed_rpm: float | None = None) -> OverallLevels:
    """Overall levels of a record ``x`` (SI units of ``quantity``), given its ``iso_velocities``.

    Parameters
    ----------
    x : array_like
        Samples in the SI base of ``quantity`` (m/s^2, m/s or m).
    velocities_m_s : dict
        ``iso_velocities`` of the same record, m/s RMS per band.
    fs : float
        Sample rate in Hz.
    quantity : str
        acceleration, velocity or displacement.
    speed_rpm : float, optional
        Running speed in r/min of the shaft the sensor sits on (picks the band).

    Returns
    -------
    OverallLevels
        Velocity RMS in mm/s in the ISO band, the band and whether Fmax cuts it,
        acceleration RMS and peak in g (acceleration only), crest factor,
        kurtosis and skewness.

    References
    ----------
    ISO 20816-3:2022, clause 4.3; g = 9.80665 m/s^2 (ISO 80000-3).

    Examples
    --------
    >>> fs = 2048.0; x = 9.80665 * np.sin(2 * np.pi * 100 * np.arange(8192) / fs)
    >>> lv = levels_of(x, iso_velocities(Transform.of(x, fs), "acceleration"), fs, "acceleration", 1485.0)
    >>> round(lv.acceleration_peak_g, 4), round(lv.velocity_rms_mm_s, 2)    # 1 g at 100 Hz: 15.61 mm/s peak
    (1.0, 11.04)
    """
    lo, hi = iso_band_hz(speed_rpm)
    top = min(hi, fs / 2)
    velocity_m_s = velocities_m_s[(lo, hi)]
    st = waveform_statistics(x)
    is_accel = quantity == "acceleration"
    return OverallLevels(
        velocity_rms_mm_s=velocity_m_s * 1e3,
        velocity_band_hz=(lo, top),
        band_truncated=top < hi,
        acceleration_rms_g=st.rms / STANDARD_GRAVITY_M_S2 if is_accel else None,
        acceleration_peak_g=st.peak / STANDARD_GRAVITY_M_S2 if is_accel else None,
        crest_factor=st.crest_factor, kurtosis=st.kurtosis, skewness=st.skewness,
    )


def overall_levels(x, fs: float, quantity: str, speed_rpm: float | None = None) -> OverallLevels:
    """Overall levels of a channel whose samples are in the SI base of ``quantity``.

    Parameters
    ----------
    x : array_like
        Samples in the SI base of ``quantity``.
    fs : float
        Sample rate in Hz.
    quantity : str
        acceleration, velocity or displacement.
    speed_rpm : float, optional
        Running speed in r/min (picks the ISO band).

    Returns
    -------
    OverallLevels
        As ``levels_of``.

    References
    ----------
    ISO 20816-3:2022, clause 4.3.

    Examples
    --------
    >>> fs = 2048.0; x = 0.005 * np.sin(2 * np.pi * 50 * np.arange(8192) / fs)
    >>> round(overall_levels(x, fs, "velocity", 2970.0).velocity_rms_mm_s, 4)   # 5 mm/s peak
    3.5355
    """
    return levels_of(x, iso_velocities(Transform.of(x, fs), quantity), fs, quantity, speed_rpm)
