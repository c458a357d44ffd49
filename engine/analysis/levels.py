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
    """The ISO 20816-3 measurement band for a machine running at ``speed_rpm``."""
    if speed_rpm is not None and speed_rpm <= ISO_SLOW_SPEED_RPM:
        return ISO_BAND_SLOW_HZ
    return ISO_BAND_HZ


@dataclass(frozen=True)
class OverallLevels:
    velocity_rms_mm_s: float          # in the ISO 20816-3 band
    velocity_band_hz: tuple[float, float]
    band_truncated: bool              # Fmax below the band's top: the value reads low
    acceleration_rms_g: float | None  # None when the channel is not acceleration
    acceleration_peak_g: float | None
    crest_factor: float
    kurtosis: float
    skewness: float


def iso_velocities(transform: Transform, quantity: str) -> dict[tuple[float, float], float]:
    """Velocity RMS (m/s) in each ISO 20816-3 band, so the band can be picked once the speed is known."""
    return {band: transform.band_rms(band[0], min(band[1], transform.fs_hz / 2),
                                     integrations=INTEGRATIONS_TO_VELOCITY[quantity])
            for band in (ISO_BAND_HZ, ISO_BAND_SLOW_HZ)}


def levels_of(x, velocities_m_s: dict, fs: float, quantity: str, speed_rpm: float | None = None) -> OverallLevels:
    """Overall levels of a record ``x`` (SI units of ``quantity``), given its ``iso_velocities``."""
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
    """Overall levels of a channel whose samples are in the SI base of ``quantity``."""
    return levels_of(x, iso_velocities(Transform.of(x, fs), quantity), fs, quantity, speed_rpm)
