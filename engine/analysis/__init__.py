"""Signal analysis: plain functions of ``x`` (1-D samples) and ``fs`` (Hz)."""

from .envelope import BandSignal, analytic_band, cepstral_prewhiten, squared_envelope_spectrum
from .kurtogram import Kurtogram, KurtogramBand, fast_kurtogram, spectral_kurtosis
from .levels import OverallLevels, WaveformStats, iso_band_hz, overall_levels, waveform_statistics
from .peaks import Peak, find_peaks, interpolate_line, noise_floor, peak_near
from .speed import SpeedEstimate, refine_running_speed
from .spectrum import Spectrum, amplitude_spectrum, averaged_spectrum, band_rms, integrate
from .synchronous import Revolutions, cut_revolutions, synchronous_average, tach_pulse_times
from .windows import WindowFactors, window_factors

__all__ = [
    "BandSignal", "Kurtogram", "KurtogramBand", "OverallLevels", "Peak", "Revolutions",
    "Spectrum", "SpeedEstimate", "WaveformStats", "WindowFactors",
    "amplitude_spectrum", "analytic_band", "cepstral_prewhiten", "averaged_spectrum", "band_rms", "cut_revolutions",
    "fast_kurtogram", "find_peaks", "integrate", "interpolate_line", "iso_band_hz", "noise_floor",
    "overall_levels", "peak_near", "refine_running_speed", "spectral_kurtosis",
    "squared_envelope_spectrum", "synchronous_average", "tach_pulse_times", "waveform_statistics",
    "window_factors",
]
