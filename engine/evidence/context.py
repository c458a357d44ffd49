"""Everything the extractors read about one channel, computed once.

``build_contexts`` runs the signal analysis a reading needs for a machine:
the running speed refined from the spectra of all channels, the forcing
frequencies at that speed, and per channel the calibrated spectra, the
overall levels, the kurtogram band and its squared envelope. Extractors only
read these values; none of them recomputes a spectrum.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .. import analysis
from ..errors import ReadingError
from ..kinematics import ForcingFrequency, bearing_multiples, forcing_frequencies
from ..machine import Machine, Point
from ..readings import Channel, QualityIssue, Reading

SPEED_SEARCH_FRACTION = 0.04   # an induction motor's speed stays within 4 % of its nominal
MEASURED_SPEED_SEARCH = 0.01   # a measured speed is trusted to 1 %
ENVELOPE_HARMONICS = 5          # the SES shows this many harmonics of the fastest defect rate
EDGE_TRIM = 0.03                # whitening leaves edge effects: 3 % at each end is not used
BAND_TO_DEFECT = 3              # a demodulation band at least 3 x the fastest defect rate wide
                                # (Randall & Antoni 2011, section 3.2)
MIN_VELOCITY_HZ = 2.0


@dataclass(frozen=True)
class ChannelContext:
    channel: Channel
    point: Point | None
    fs_hz: float
    accel: np.ndarray                     # acceleration, m/s^2
    spectrum: analysis.Spectrum           # acceleration, m/s^2 peak, Hann
    velocity: analysis.Spectrum           # velocity, mm/s RMS, from the same FFT
    levels: analysis.OverallLevels
    kurtogram: analysis.Kurtogram | None
    envelopes: tuple               # EnvelopeView: the kurtogram band first, then the wide band
    envelope_signal: np.ndarray | None    # squared envelope in time, at envelope_fs_hz
    envelope_fs_hz: float | None
    issues: tuple[QualityIssue, ...]

    @property
    def envelope(self) -> analysis.Spectrum | None:
        """The squared envelope spectrum of the kurtogram band."""
        return self.envelopes[0].ses if self.envelopes else None

    @property
    def name(self) -> str:
        return self.channel.name

    @property
    def direction(self) -> str | None:
        return self.point.direction if self.point else self.channel.direction

    @property
    def location(self) -> str | None:
        return self.point.at if self.point else None

    def base(self) -> dict:
        """The fields every fact about this channel carries."""
        return {"channel": self.name, "point": self.point.id if self.point else (self.channel.point or ""),
                "direction": self.direction or "", "location": self.location or "",
                "location_shaft": self.point.shaft if self.point else ""}


@dataclass(frozen=True)
class ReadingContext:
    """The whole reading: shared speed and forcing frequencies, and each channel."""

    machine: Machine
    reading: Reading
    speeds_hz: dict[str, float]
    speed_estimate: analysis.SpeedEstimate
    speed_shaft: str
    forcing: tuple[ForcingFrequency, ...]
    channels: tuple[ChannelContext, ...]

    def defect_rates_hz(self) -> dict[tuple[str, str], float]:
        """(bearing id, BPFO|BPFI|BSF|FTF) -> frequency in Hz at the refined speed."""
        out = {}
        for b in self.machine.bearings:
            fr = self.speeds_hz[b.shaft]
            for key, mult in bearing_multiples(b).items():
                out[(b.id, key.upper())] = mult * fr
        return out


def _to_acceleration(ch: Channel, fs: float) -> np.ndarray:
    if ch.quantity == "acceleration":
        return ch.samples - ch.samples.mean()
    times = {"velocity": -1, "displacement": -2}[ch.quantity]
    return analysis.integrate(ch.samples, fs, f_low_hz=MIN_VELOCITY_HZ, times=times)


def velocity_spectrum(spec: analysis.Spectrum) -> analysis.Spectrum:
    """mm/s RMS from an acceleration spectrum in m/s^2 peak (divide each line by 2 pi f)."""
    f = spec.freq_hz
    v = np.zeros_like(spec.amplitude)
    ok = f >= MIN_VELOCITY_HZ
    v[ok] = spec.amplitude[ok] / (2 * np.pi * f[ok]) * 1e3 / np.sqrt(2)
    return analysis.Spectrum(f, v, "rms", spec.window, spec.resolution_hz, spec.enbw_hz, spec.averages)


@dataclass(frozen=True)
class EnvelopeView:
    """One squared envelope spectrum of a channel and the band it demodulates."""

    method: str                     # kurtogram or wide
    ses: analysis.Spectrum
    band_hz: tuple[float, float]
    band_kurtosis: float


def _ses(white: np.ndarray, fs: float, band, span: float):
    sig = analysis.analytic_band(white, fs, band, min_rate_hz=2 * span)
    cut = int(EDGE_TRIM * len(sig.samples))
    squared = np.abs(sig.samples[cut:len(sig.samples) - cut]) ** 2
    ses = analysis.amplitude_spectrum(squared, sig.fs_hz, scaling="peak")
    # The squared envelope of a band B wide holds nothing above B: lines
    # there would stand over an empty floor.
    keep = ses.freq_hz <= min(span * 1.2, band[1] - band[0])
    ses = analysis.Spectrum(ses.freq_hz[keep], ses.amplitude[keep], ses.scaling, ses.window,
                            ses.resolution_hz, ses.enbw_hz)
    return ses, squared, sig


def _envelope(accel: np.ndarray, fs: float, fastest_defect_hz: float | None):
    """The kurtogram band's envelope (Antoni 2007) and, beside it, the whole prewhitened signal
    above the defect harmonics (cepstral prewhitening then envelope: Smith & Randall's
    method 2). An impulsive band can be a single burst of noise; the wide view catches a
    defect the kurtogram's pick missed."""
    if fastest_defect_hz is None:
        return None, (), None, None
    white = analysis.cepstral_prewhiten(accel)
    span = ENVELOPE_HARMONICS * fastest_defect_hz
    kg = analysis.fast_kurtogram(white, fs, max_level=8, trim_fraction=EDGE_TRIM,
                                 min_bandwidth_hz=min(BAND_TO_DEFECT * fastest_defect_hz, fs / 4))
    band = (kg.best.f_lo_hz, kg.best.f_hi_hz)
    ses, squared, sig = _ses(white, fs, band, span)
    views = [EnvelopeView("kurtogram", ses, band, kg.best.kurtosis)]
    wide = (min(span, fs / 8), 0.45 * fs)
    wide_ses, _, wide_sig = _ses(white, fs, wide, span)
    z = np.abs(wide_sig.samples)
    spectral_kurtosis = float(np.mean(z ** 4) / np.mean(z ** 2) ** 2 - 2)   # Antoni 2006, complex envelope
    views.append(EnvelopeView("wide", wide_ses, wide, spectral_kurtosis))
    return kg, tuple(views), squared, sig.fs_hz


def build_contexts(reading: Reading, machine: Machine) -> ReadingContext:
    """Run the analysis of every usable channel of ``reading`` for ``machine``."""
    fs = reading.fs_hz
    points = {p.id: p for p in machine.points}
    usable = [ch for ch in reading.channels if not any(q.blocking for q in reading.issues_for(ch.name))]
    if not usable:
        why = "; ".join(f"{q.channel}: {q.message}" for q in reading.quality if q.blocking)
        raise ReadingError(f"no channel can be analysed ({why})", path=reading.source)
    accel = {ch.name: _to_acceleration(ch, fs) for ch in usable}
    spectra = {name: analysis.amplitude_spectrum(a, fs) for name, a in accel.items()}
    velocity = {name: velocity_spectrum(s) for name, s in spectra.items()}

    first_point = next((points[c.point] for c in usable if c.point in points), None)
    shaft = first_point.shaft if first_point else machine.driver_shaft
    if reading.speed_rpm:
        nominal_hz = machine.speeds_at(reading.speed_rpm)[shaft]
        search = MEASURED_SPEED_SEARCH
    else:
        nominal_hz = machine.shaft_speeds_hz[shaft]
        search = SPEED_SEARCH_FRACTION
    lines = [k * m.line_frequency_hz for m in machine.motors for k in range(1, 21)]
    estimates = [analysis.refine_running_speed(v, nominal_hz, search, exclude_hz=lines)
                 for v in velocity.values()]
    found = [e for e in estimates if e.refined]
    if found:
        best = max(found, key=lambda e: len(e.harmonics_found))
        speed = analysis.SpeedEstimate(float(np.median([e.speed_hz for e in found])), nominal_hz,
                                       best.harmonics_found, True)
    else:
        speed = analysis.SpeedEstimate(nominal_hz, nominal_hz, (), False)
    speeds = machine.speeds_at(speed.speed_hz * 60, shaft)
    forcing = tuple(forcing_frequencies(machine, speed.speed_hz * 60, shaft))
    defects = [f.frequency_hz * (2 if f.name == "BSF" else 1) for f in forcing
               if f.family == "bearing" and f.name in ("BPFI", "BPFO", "BSF")]
    fastest = max(defects) if defects else None

    contexts = []
    for ch in usable:
        a = accel[ch.name]
        kg, views, env_sig, env_fs = _envelope(a, fs, fastest)
        contexts.append(ChannelContext(
            channel=ch, point=points.get(ch.point), fs_hz=fs, accel=a,
            spectrum=spectra[ch.name], velocity=velocity[ch.name],
            levels=analysis.overall_levels(a, fs, "acceleration", speed.speed_hz * 60),
            kurtogram=kg, envelopes=views, envelope_signal=env_sig, envelope_fs_hz=env_fs,
            issues=tuple(reading.issues_for(ch.name)),
        ))
    return ReadingContext(machine, reading, speeds, speed, shaft, forcing, tuple(contexts))
