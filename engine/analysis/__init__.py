"""Signal analysis: everything computed on samples, once per channel.

``analyse(reading, machine)`` is the stage's entry point; the other names are
plain functions of ``x`` (1-D samples) and ``fs`` (Hz) that it is built from.
"""

from .envelope import BandSignal, analytic_band, cepstral_prewhiten, squared_envelope_spectrum
from .impacts import ImpactTrain
from .kurtogram import Kurtogram, KurtogramBand, fast_kurtogram, spectral_kurtosis
from .levels import OverallLevels, WaveformStats, iso_band_hz, overall_levels, waveform_statistics
from .peaks import Peak, find_peaks, interpolate_line, noise_floor, peak_near
from .result import Analysis, ChannelAnalysis, EnvelopeView, analyse
from .spectrum import Spectrum, Transform, amplitude_spectrum, averaged_spectrum, band_rms, integrate
from .speed import SpeedEstimate, refine_running_speed
from .synchronous import Revolutions, SynchronousEvents, cut_revolutions, synchronous_average, tach_pulse_times
from .windows import WindowFactors, window_factors

__all__ = [
    "Analysis", "BandSignal", "ChannelAnalysis", "EnvelopeView", "ImpactTrain", "Kurtogram", "KurtogramBand",
    "OverallLevels", "Peak", "Revolutions", "Spectrum", "SpeedEstimate", "SynchronousEvents", "Transform",
    "WaveformStats", "WindowFactors",
    "amplitude_spectrum", "analyse", "analytic_band", "averaged_spectrum", "band_rms", "cepstral_prewhiten",
    "cut_revolutions", "fast_kurtogram", "find_peaks", "integrate", "interpolate_line", "iso_band_hz",
    "noise_floor", "overall_levels", "peak_near", "refine_running_speed", "spectral_kurtosis",
    "squared_envelope_spectrum", "synchronous_average", "tach_pulse_times", "waveform_statistics",
    "window_factors",
]
