"""The analysis of one reading of one machine: everything computed on samples, once.

``analyse`` is the analysis stage's entry point. For each usable channel it
transforms the acceleration once and derives from that one FFT the Hann
spectrum, the velocity spectrum and the overall levels; it refines the
running speed from the spectra of all channels; then, at that speed, it
computes the prewhitened spectrum, the kurtogram and two squared envelope
views, the impact train of the envelope, and the once-per-revolution events
of each shaft; on a geared machine, also the impact train of the waveform
before its synchronous parts are taken out (a tooth struck once per turn is
one of them). The evidence extractors only read the result.

Values in SI units inside (m/s^2 for acceleration spectra), mm/s RMS for the
velocity spectrum, Hz everywhere.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from types import MappingProxyType

import numpy as np

from ..common.errors import ReadingError
from ..machine import Machine, Point
from ..machine.kinematics import ForcingFrequency, Rates, SpeedLimits, forcing_list, rates_at, speed_limits
from ..readings import Channel, QualityIssue, Reading, describe_issue
from ..readings.length import FMAX_FACTOR
from ..readings.quality import corrupted
from ._fft import next_fast_len, previous_fast_len
from .bands import spectrum_band_rms
from .envelope import band_from_spectrum, whitened_spectrum
from .impacts import ImpactTrain, impact_train
from .kurtogram import Kurtogram, kurtogram_of_spectrum
from .levels import OverallLevels, iso_velocities, levels_of
from .peaks import noise_floor, peak_near
from .separation import random_part_factor
from .spectrum import Spectrum, Transform, integrate
from .speed import HARMONICS, SpeedEstimate, half_and_double, one_x_line, refine_speeds, shaft_family, speed_from_tones
from .synchronous import SynchronousEvents, events_of_rows, revolution_rows, synchronous_part
from .tracking import (
    WANDER_MESH_CYCLES,
    WANDER_SPREAD,
    line_spread,
    pulse_times,
    shaft_angle,
    tracked_rows,
    wander_turns,
)

SPEED_SEARCH_FRACTION = 0.05   # a stated or nominal speed may be several percent off
ENVELOPE_HARMONICS = 5          # the SES shows this many harmonics of the fastest defect rate
EDGE_TRIM = 0.03                # whitening leaves edge effects: 3 % at each end is not used
BAND_TO_DEFECT = 3              # a demodulation band at least 3 x the fastest defect rate wide
                                # (Randall & Antoni 2011, section 3.2)
KURTOGRAM_LEVELS = 8
MIN_VELOCITY_HZ = 2.0
TSA_MIN_REVOLUTIONS = 10
TSA_MIN_SAMPLES_PER_REV = 64
TSA_MAX_SAMPLES_PER_REV = 4096
ABOVE_MESH = 2.5                # the waveform's impacts are read above the mesh's second harmonic (and its sidebands)
MESH_LINE_SNR = 10.0            # a mesh line this far above its floor times the averaging
LINE_HARMONICS = 20             # line-frequency harmonics kept out of the speed search
UNLISTED_DEFECT_ORDER = 13.0    # a machine file that lists no rolling bearing: its shafts' bearings are still there,
                                # and their fastest impact rate (BPFI) is looked for up to this order of the fastest
                                # shaft. BPFI = (Z/2)(1 + d/D cos phi) x 1X (handbook formula; Randall & Antoni 2011,
                                # eq. 1): with up to 20 rolling elements and d/D up to 0.3 (common practice for
                                # the bearings of pumps, fans, motors and gearboxes) it stays below 13 x 1X


@dataclass(frozen=True)
class EnvelopeView:
    """One squared envelope spectrum of a channel and the band it demodulates."""

    method: str                     # kurtogram or wide
    ses: Spectrum                   # (m/s^2)^2 peak, in the band's squared unit
    band_hz: tuple[float, float]
    band_kurtosis: float


@dataclass(frozen=True)
class ChannelAnalysis:
    """Everything computed on one channel."""

    channel: Channel
    point: Point | None
    fs_hz: float
    accel: np.ndarray                      # acceleration, m/s^2, mean removed (for plots)
    spectrum: Spectrum                     # acceleration, m/s^2 peak, Hann
    velocity: Spectrum                     # velocity, mm/s RMS, from the same FFT
    levels: OverallLevels
    kurtogram: Kurtogram | None
    envelopes: tuple[EnvelopeView, ...]    # the kurtogram band first, then the wide band
    envelope_signal: np.ndarray | None     # squared envelope of the kurtogram band, in time
    envelope_fs_hz: float | None
    impacts: ImpactTrain | None
    synchronous: Mapping[str, SynchronousEvents]   # by shaft id
    issues: tuple[QualityIssue, ...]
    # the impact train of the prewhitened waveform before the synchronous parts are taken out, at the shafts'
    # rates (``waveform_impacts``); None on a machine without gears, or when there is none
    waveform_impacts: ImpactTrain | None = None

    @property
    def envelope(self) -> Spectrum | None:
        """The squared envelope spectrum of the kurtogram band."""
        return self.envelopes[0].ses if self.envelopes else None

    @property
    def ring_band_rms_m_s2(self) -> float | None:
        """Acceleration RMS (m/s^2) in the kurtogram's band: the band where the impacts ring, as chosen on the
        prewhitened residual, measured on the acceleration spectrum itself (not whitened), so it grows with
        the impacts' energy; None without a kurtogram or when the band holds no line."""
        if self.kurtogram is None or not self.envelopes:
            return None
        return spectrum_band_rms(self.spectrum, [self.envelopes[0].band_hz])

    @property
    def name(self) -> str:
        """The channel's name."""
        return self.channel.name

    @property
    def direction(self) -> str | None:
        """The sensor's direction (horizontal, vertical or axial): the point's, else the channel's."""
        return self.point.direction if self.point else self.channel.direction

    @property
    def location(self) -> str | None:
        """The bearing or shaft the channel's point sits at; None without a point."""
        return self.point.at if self.point else None

    def base(self) -> dict:
        """The fields every fact about this channel carries."""
        return {"channel": self.name, "point": self.point.id if self.point else (self.channel.point or ""),
                "direction": self.direction or "", "location": self.location or "",
                "location_shaft": self.point.shaft if self.point else ""}


@dataclass(frozen=True)
class LeftOutChannel:
    """A channel left out of the analysis for a corrupting quality issue, kept for the report to show it as
    it is (its waveform shows the NaN, the clipping, the dead line): its samples as acceleration and, when
    every sample is a number within a sensor's range, its velocity spectrum; a velocity or displacement record
    with samples that are not numbers cannot be integrated or differentiated across its gaps, so its samples
    are kept as recorded instead (``recorded``, the quantity of ``channel``). No level, no evidence."""

    channel: Channel
    point: Point | None
    fs_hz: float
    accel: np.ndarray | None        # m/s^2, mean removed; NaN where the record holds none; None: not acceleration
    velocity: Spectrum | None       # mm/s RMS; None when a sample is not a number or out of any sensor's range
    issues: tuple[QualityIssue, ...]
    recorded: np.ndarray | None = None   # SI base of channel.quantity, mean of the numbers removed, NaN kept;
    #                                      set only when accel is None (a velocity or displacement record with NaN)
    envelope = None                 # no envelope is taken of it (read like a ChannelAnalysis by the plot data)

    @property
    def name(self) -> str:
        """The channel's name, as a ChannelAnalysis gives it."""
        return self.channel.name


def _left_out_channel(ch: Channel, point: Point | None, fs: float, issues: tuple[QualityIssue, ...]) -> LeftOutChannel:
    """What the report shows of a channel left out: its waveform as acceleration and its velocity spectrum,
    computed as an analysed channel's are, when its samples allow."""
    x = ch.samples
    finite = np.isfinite(x)
    sound = bool(finite.all()) and not any(q.kind == "out_of_range" for q in issues)
    if sound:
        accel = _to_acceleration(ch, fs)
        return LeftOutChannel(ch, point, fs, accel, velocity_spectrum(Transform.of(accel, fs).amplitude("peak")),
                              issues)
    if not finite.any() or not np.all(np.abs(x[finite]) < 1e100):
        return LeftOutChannel(ch, point, fs, None, None, issues)     # nothing to draw
    as_recorded = np.where(finite, x - float(np.mean(x[finite])), np.nan)
    if ch.quantity != "acceleration":   # integration or differentiation would spread its gaps over the record
        return LeftOutChannel(ch, point, fs, None, None, issues, recorded=as_recorded)
    return LeftOutChannel(ch, point, fs, as_recorded, None, issues)


@dataclass(frozen=True)
class Analysis:
    """The whole reading analysed: shared speed and rates, and each channel."""

    machine: Machine
    source: str
    fs_hz: float
    n_samples: int
    quality: tuple[QualityIssue, ...]
    speeds_hz: Mapping[str, float]
    speed_estimate: SpeedEstimate
    speed_shaft: str
    rates: Rates
    forcing: tuple[ForcingFrequency, ...]
    channels: tuple[ChannelAnalysis, ...]
    stated_rpm: float | None = None        # the speed the reading states (file, sidecar or option): the driver's
    nominal_rpm: float = 0.0               # the machine file's speed of the same shaft
    speed_check: Mapping[str, float] = field(default_factory=dict)   # lines at half and twice the speed
    speed_limits: SpeedLimits | None = None  # what the machine's drive allows the speed shaft, when it says
    phase_1x: tuple = ()                   # the reading's stated 1X phase readings (``PhaseReading``), handed on
    stated_shaft_rpm: float | None = None  # the stated driver's speed carried to the speed shaft by the ratios
    left_out: tuple[str, ...] = ()         # channels of the reading not analysed (a corrupting quality issue)
    channel_points: Mapping[str, str] = field(default_factory=dict)   # every channel of the reading -> its point
    left_out_channels: tuple[LeftOutChannel, ...] = ()   # the channels of ``left_out``, as the report shows them

    @property
    def duration_s(self) -> float:
        """Length of the record, s."""
        return self.n_samples / self.fs_hz


def velocity_spectrum(spec: Spectrum) -> Spectrum:
    """mm/s RMS from an acceleration spectrum in m/s^2 peak (divide each line by 2 pi f).

    Parameters
    ----------
    spec : Spectrum
        Acceleration spectrum, m/s^2 peak.

    Returns
    -------
    Spectrum
        Velocity, mm/s RMS; lines below MIN_VELOCITY_HZ (2 Hz) are zero.

    References
    ----------
    Integration of a sine: v = a / (2 pi f) (handbook formula, e.g. Harris'
    Shock and Vibration Handbook, chapter 1); RMS = peak / sqrt 2.

    Examples
    --------
    >>> fs = 1024.0; a = 9.80665 * np.sin(2 * np.pi * 100 * np.arange(4096) / fs)
    >>> round(float(velocity_spectrum(Transform.of(a, fs).amplitude("peak")).amplitude.max()), 3)
    11.036
    """
    f = spec.freq_hz
    v = np.zeros_like(spec.amplitude)
    ok = f >= MIN_VELOCITY_HZ
    v[ok] = spec.amplitude[ok] / (2 * np.pi * f[ok]) * 1e3 / np.sqrt(2)
    return Spectrum(f, v, "rms", spec.window, spec.resolution_hz, spec.enbw_hz, spec.averages)


def _to_acceleration(ch: Channel, fs: float) -> np.ndarray:
    if ch.quantity == "acceleration":
        return ch.samples - ch.samples.mean()
    times = {"velocity": -1, "displacement": -2}[ch.quantity]
    return integrate(ch.samples, fs, f_low_hz=MIN_VELOCITY_HZ, times=times)


def fast_length_at_most(n: int) -> int:
    """The largest length at or below ``n`` whose FFT is fast (no prime factor above 5).

    Parameters
    ----------
    n : int
        Samples available.

    Returns
    -------
    int
        A 5-smooth length <= ``n``.

    References
    ----------
    Frigo & Johnson (2005), "The design and implementation of FFTW3", Proc. IEEE
    93(2) (lengths with small prime factors transform fastest);
    ``scipy.fft.next_fast_len``.

    Examples
    --------
    >>> fast_length_at_most(1000), fast_length_at_most(1031)
    (1000, 1024)
    """
    return previous_fast_len(n, real=True) if n > 1 else n


def _squared_envelope(white: np.ndarray, n: int, fs: float, band, span: float, spectrum_only: bool = False):
    """The squared envelope of one band (its edges trimmed) and its spectrum up to the band's reach.

    With ``spectrum_only`` the band signal is sampled just fast enough that
    the squared envelope's aliases stay above the spectrum kept (rate at
    least bandwidth + 1.2 x span, instead of twice the bandwidth): the
    spectrum is the same, the time signal is coarser and costs less.
    """
    if spectrum_only:
        sig = band_from_spectrum(white, n, fs, band, exact_rate_hz=(band[1] - band[0]) + 1.2 * span)
    else:
        sig = band_from_spectrum(white, n, fs, band, min_rate_hz=2 * span)
    cut = int(EDGE_TRIM * len(sig.samples))
    keep = fast_length_at_most(len(sig.samples) - 2 * cut)
    c = sig.samples[cut:cut + keep]
    squared = np.square(c.real)
    squared += np.square(c.imag)
    # The squared envelope of a band B wide holds nothing above B: lines
    # there would stand over an empty floor.
    ses = Transform.of(squared, sig.fs_hz).amplitude("peak").below(min(span * 1.2, band[1] - band[0]))
    return ses, squared, sig


def _random_white(accel: np.ndarray, fs: float) -> np.ndarray:
    """The prewhitened one-sided FFT of ``accel`` with its deterministic lines taken out."""
    white = whitened_spectrum(accel)
    white *= random_part_factor(accel, fs, len(white), len(accel))     # discrete/random separation
    return white


def _envelopes(white: np.ndarray | None, n: int, fs: float, fastest_defect_hz: float | None):
    """The kurtogram band's envelope (Antoni 2007) and, beside it, the whole prewhitened signal
    above the defect harmonics (cepstral prewhitening then envelope: Smith & Randall's
    method 2). An impulsive band can be a single burst of noise; the wide view catches a
    defect the kurtogram's pick missed. Both start from the prewhitened spectrum with its
    deterministic lines taken out (discrete/random separation, the first step of Smith &
    Randall's benchmark method 3), so that a shaft, rig or electrical component whose
    harmonics beat at a defect's rate does not pass for a bearing."""
    if fastest_defect_hz is None or white is None:      # white is None exactly when there is no defect rate
        return None, (), None, None
    span = ENVELOPE_HARMONICS * fastest_defect_hz
    kg = kurtogram_of_spectrum(white, n, fs, max_level=KURTOGRAM_LEVELS, trim_fraction=EDGE_TRIM,
                               min_bandwidth_hz=min(BAND_TO_DEFECT * fastest_defect_hz, fs / 4),
                               fmax_hz=fs / FMAX_FACTOR)
    band = (kg.best.f_lo_hz, kg.best.f_hi_hz)
    ses, squared, sig = _squared_envelope(white, n, fs, band, span)
    squared_fs = sig.fs_hz
    del sig                         # the band signal itself is not kept: free it before the wide view
    views = [EnvelopeView("kurtogram", ses, band, kg.best.kurtosis)]
    wide = (min(span, fs / 8), 0.45 * fs)
    wide_ses, _, wide_sig = _squared_envelope(white, n, fs, wide, span, spectrum_only=True)
    power = np.square(wide_sig.samples.real)
    power += np.square(wide_sig.samples.imag)
    mean_power = float(power.mean())
    spectral_kurtosis = float(np.mean(np.square(power, out=power)) / mean_power ** 2 - 2)   # Antoni 2006
    views.append(EnvelopeView("wide", wide_ses, wide, spectral_kurtosis))
    return kg, tuple(views), squared, squared_fs


def _speed_from_mesh(spectrum: Spectrum, fr: float, orders: tuple[int, ...]) -> float:
    """A gear shaft's speed from its mesh line, ``orders`` times finer than from 1X.

    Averaging revolutions keeps a once-per-turn spike only while the record is
    cut at the true speed: an error of 1e-4 moves the spike by 1/200 of a turn
    over 50 turns and smears it. The mesh line (interpolated) gives the speed
    to the precision the averaging needs; ``fr`` itself when no mesh line stands out.
    """
    df = spectrum.resolution_hz
    best = None
    for z in orders:
        if z * fr * 1.002 >= spectrum.fmax_hz:
            continue
        peak = peak_near(spectrum, z * fr, max(1.5 * df, 0.002 * z * fr))
        if peak is None or peak.amplitude < MESH_LINE_SNR * noise_floor(spectrum, int(round(peak.freq_hz / df))):
            continue
        if best is None or z > best[0]:
            best = (z, peak.freq_hz / z)
    return best[1] if best else fr


def _mesh_half_bands_hz(rates: Rates, shafts: list[str], z: int) -> tuple[float, float]:
    """Half the spacing of the shaft-locked lines nearest a mesh line at order ``z`` of ``shafts`` (its
    sidebands at the slower shaft's speed of that mesh), and half the faster shaft's speed (its sidebands
    at the faster shaft's speed, usually the taller)."""
    pairs = [sorted((rates.shafts_hz[m.driving_shaft], rates.shafts_hz[m.driven_shaft]))
             for m in rates.meshes if any(m.teeth_on(s) == z for s in shafts)]
    return 0.5 * min(p[0] for p in pairs), 0.5 * min(p[1] for p in pairs)


def _wandering_angle(accel: np.ndarray, fs: float, spectrum: Spectrum, speed_hz: float, rates: Rates,
                     shafts: list[str], orders: tuple[int, ...]) -> np.ndarray | None:
    """The shafts' angle at every sample (turns) when their speed wanders during the record, else None.

    The highest mesh line that stands clear is looked at: a steady line (``line_spread`` at most
    ``WANDER_SPREAD``) leaves the constant-speed path as it is at the cost of a sum over its band;
    a smeared one has its phase tracked (``shaft_angle``), and the angle is used when it strays from
    one constant speed by more than ``WANDER_MESH_CYCLES`` of a mesh period.
    """
    for z in sorted(orders, reverse=True):
        carrier = z * speed_hz
        half, wide = _mesh_half_bands_hz(rates, shafts, z)
        if carrier + 2 * wide >= spectrum.fmax_hz:
            continue
        lo, hi = np.searchsorted(spectrum.freq_hz, [carrier - half, carrier + half])
        if hi <= lo:
            continue
        if line_spread(spectrum.freq_hz, spectrum.amplitude, spectrum.enbw_hz, carrier, half) <= WANDER_SPREAD:
            return None                 # a steady line (a band of noise alone spreads far more)
        top = lo + int(np.argmax(spectrum.amplitude[lo:hi]))
        # the floor beside the band: a wandering line spreads over the lines a floor at its own line would use
        beside = int(np.ceil(wide / spectrum.resolution_hz)) + Spectrum.FLOOR_LINES // 2
        floors = [noise_floor(spectrum, line) for line in (top - beside, top + beside)
                  if 0 <= line < len(spectrum.amplitude)]
        if not floors or spectrum.amplitude[top] < MESH_LINE_SNR * min(floors):
            continue
        turns = shaft_angle(accel, fs, carrier, z, half, wide)
        return turns if z * wander_turns(turns) > WANDER_MESH_CYCLES else None
    return None


def _synchronous(accel: np.ndarray, fs: float, rates: Rates, duration_s: float,
                 spectrum: Spectrum) -> tuple[dict[str, SynchronousEvents], np.ndarray]:
    """Once-per-revolution events of every shaft that turns often enough in the record, and the record
    less the synchronous average of each such shaft (what the bearing envelope analysis looks at).

    Shafts at one speed (a motor and the gear shaft it drives) are one set of
    revolutions, cut once at the speed their mesh line gives; each shaft's
    difference signal then leaves out its own meshes. The speeds are taken
    fastest first, each average from what the faster ones left. When the speed
    wanders (``_wandering_angle``) the revolutions whose events are read are cut
    at the angle a mesh line's phase gives; the part taken out before the
    envelope stays the exact constant-speed one (laid back at the tracked angle
    instead, it put 3 new bearing calls at 50 % or more on GC-1's wandering
    tooth readings and took 2 away: bench.wander, seeds 0-3).
    """
    groups: dict[float, list[str]] = {}
    for shaft, fr in rates.shafts_hz.items():
        if duration_s * fr >= TSA_MIN_REVOLUTIONS and fs / fr >= TSA_MIN_SAMPLES_PER_REV:
            groups.setdefault(round(fr, 9), []).append(shaft)
    out: dict[str, SynchronousEvents] = {}
    rest = accel
    for fr, shafts in sorted(groups.items(), reverse=True):
        orders = {shaft: tuple(sorted(rates.mesh_orders(shaft))) for shaft in shafts}
        every = tuple(sorted({z for zs in orders.values() for z in zs}))
        spr = min(TSA_MAX_SAMPLES_PER_REV, next_fast_len(int(np.ceil(fs / fr))))
        speed_hz = _speed_from_mesh(spectrum, fr, every)
        turns = _wandering_angle(accel, fs, spectrum, speed_hz, rates, shafts, every) if every else None
        rows = (revolution_rows(accel, fs, speed_hz, spr) if turns is None
                else tracked_rows(accel, fs, pulse_times(turns, fs), spr))
        done: dict[tuple[int, ...], SynchronousEvents | None] = {}
        for shaft in shafts:
            if orders[shaft] not in done:
                done[orders[shaft]] = events_of_rows(rows, list(orders[shaft]))
            events = done[orders[shaft]]
            if events is not None:
                out[shaft] = events if turns is None else replace(events, order_tracked=True)
        if len(rows):
            part = synchronous_part(rest, fs, speed_hz)
            rest = np.subtract(rest, part, out=part)      # rest - part, in part's memory
    return out, rest


def waveform_impacts(accel: np.ndarray, fs: float, shafts_hz: list[float], mesh_hz: list[float]) -> ImpactTrain | None:
    """The impact train of a record's waveform as it is, its synchronous parts kept, at the rates of ``shafts_hz``.

    A gear tooth that strikes once per turn is locked to its shaft: the
    synchronous average keeps it and the record less that average, where the
    bearing envelope looks, loses it (on a steady speed, wholly). An analyst
    sees it in the raw or high-passed waveform. Here the waveform is
    prewhitened (cepstral prewhitening: the mesh and shaft lines stand no
    higher than the floor, while an impact, broadband, keeps its shape),
    high-passed above the highest mesh's second harmonic and the fastest
    shaft's fifth (below them lie the synchronous lines and their sidebands,
    which a smooth once-per-turn modulation, eccentricity or wear, puts there
    too; a strike rings the structure far above them), at most from Fmax / 8
    up, and its squared envelope is searched for a train at the shafts' rates,
    as ``impact_train`` searches the bearing envelope.

    Parameters
    ----------
    accel : numpy.ndarray
        Acceleration, m/s^2 (any unit: the train is scale-free).
    fs : float
        Sample rate, Hz.
    shafts_hz : list of float
        The speeds of the machine's shafts, Hz: the rates looked for.
    mesh_hz : list of float
        The machine's gear mesh frequencies, Hz.

    Returns
    -------
    ImpactTrain or None
        As ``impact_train``; None when no train stands at those rates.

    References
    ----------
    Sawalhi & Randall (2011) and Borghesani et al. (2013), MSSP 36 (cepstral
    prewhitening keeps impulses and flattens discrete lines); Randall (2011),
    Vibration-based Condition Monitoring, Wiley, ch. 5 (a local tooth fault:
    an impulse once per turn of its gear in the time signal).

    Examples
    --------
    >>> fs = 12800.0; t = np.arange(51200) / fs; fr = 24.7                # a shaft at 24.7 Hz, a 23-tooth gear
    >>> x = np.sin(2 * np.pi * 23 * fr * t) + 0.05 * np.random.default_rng(0).standard_normal(len(t))
    >>> ring = np.exp(-t[:64] * 800) * np.sin(2 * np.pi * 3000 * t[:64])   # a tooth's strike rings at 3 kHz
    >>> for start in (np.arange(0, 4.0 - 0.01, 1 / fr) * fs).astype(int):
    ...     x[start:start + 64] += 2.0 * ring
    >>> round(float(waveform_impacts(x, fs, [fr, 10.0], [23 * fr]).rate_hz), 1)
    24.7
    """
    span = ENVELOPE_HARMONICS * max(shafts_hz)
    band = (min(max(span, ABOVE_MESH * max(mesh_hz, default=0.0)), fs / 8), 0.45 * fs)
    _, squared, sig = _squared_envelope(whitened_spectrum(accel), len(accel), fs, band, span)
    return impact_train(squared, sig.fs_hz, min(shafts_hz), max(shafts_hz))


def _impact_candidates_hz(rates: Rates) -> list[float]:
    """Rates an impact train could repeat at: bearing defects (the ball rate as 2 x BSF) and 1X; with no bearing
    listed, up to the fastest defect rate an unlisted bearing could have (``unlisted_defect_hz``)."""
    out = [b.impact_rate_hz(d) for b in rates.bearings for d in ("BPFO", "BPFI", "BSF")] or [unlisted_defect_hz(rates)]
    return out + list(rates.shafts_hz.values())


def unlisted_defect_hz(rates: Rates) -> float:
    """The fastest defect rate (Hz) a rolling bearing the machine file does not list could have:
    ``UNLISTED_DEFECT_ORDER`` times the fastest shaft's speed.

    A machine file may list no bearing (its geometry unknown to the user, or left out), yet the bearings
    are there and a defect's impacts are the commonest thing an envelope shows; with this stand-in the
    envelope and the impact train are taken as for a listed bearing, and the rules read the impacts that
    no listed part explains (``reading.machine.unexplained-impacts``).

    Parameters
    ----------
    rates : Rates
        The machine's rates at the measured speed; only the shaft speeds (Hz) are read.

    Returns
    -------
    float
        Hz.

    References
    ----------
    Randall & Antoni (2011), "Rolling element bearing diagnostics - A tutorial", MSSP 25(2), eq. 1
    (BPFI = (Z/2) fr (1 + d/D cos phi)).

    Examples
    --------
    >>> from engine.machine.kinematics import Rates
    >>> unlisted_defect_hz(Rates({"shaft": 25.0}, (), (), (), (), ()))
    325.0
    """
    return UNLISTED_DEFECT_ORDER * max(rates.shafts_hz.values())


def _defect_rates(rates: Rates) -> dict[str, float]:
    """Every bearing's impact rates by name (``BPFO of out_brg``; the ball's as 2 x BSF), Hz."""
    return {f"{'2 x BSF' if d == 'BSF' else d} of {b.bearing}": b.impact_rate_hz(d)
            for b in rates.bearings for d in ("BPFO", "BPFI", "BSF")}


def _refined_speed(velocity: dict[str, Spectrum], reading: Reading, machine: Machine, shaft: str) -> SpeedEstimate:
    """The speed of ``shaft`` measured from every channel's shaft harmonics (the median over channels)."""
    shafts = machine.speeds_at(reading.speed_rpm) if reading.speed_rpm else dict(machine.shaft_speeds_hz)
    lines = [k * m.line_frequency_hz for m in machine.motors for k in range(1, LINE_HARMONICS + 1)]
    rates = rates_at(machine, shafts)
    locked = [(g.gmf_hz, round(g.gmf_hz / shafts[g.driving_shaft])) for g in rates.meshes]
    locked += [(r.pass_hz, round(r.pass_hz / shafts[r.shaft])) for r in rates.rotors]
    rivals = _defect_rates(rates)
    estimates = [refine_speeds(v, shafts, shaft, SPEED_SEARCH_FRACTION, exclude_hz=lines, synchronous=locked,
                               rivals_hz=rivals, beside=[w for w in velocity.values() if w is not v])
                 for v in velocity.values()]
    found = [e for e in estimates if e.refined]
    nominal_hz = shafts[shaft]
    if not found:
        shared = sorted({e.shared_with for e in estimates if e.shared_with})
        return SpeedEstimate(nominal_hz, nominal_hz, (), False, "stated", 0, ", ".join(shared))
    best = max(found, key=lambda e: (e.lines_found, len(e.harmonics_found)))
    return SpeedEstimate(float(np.median([e.speed_hz for e in found])), nominal_hz, best.harmonics_found, True,
                         "1X harmonics", best.lines_found)


def _speed_from_envelopes(channels: list, rates: Rates, speed: SpeedEstimate) -> SpeedEstimate:
    """When no shaft line gave the speed, the sharpest bearing-tone family of any envelope may."""
    scale_to_ref = speed.speed_hz
    candidates = [b.impact_rate_hz(d) / scale_to_ref for b in rates.bearings for d in ("BPFO", "BPFI", "BSF")]
    best = None
    for views in channels:
        for view in views:
            found = speed_from_tones(view.ses, [c * scale_to_ref for c in candidates], speed.nominal_hz,
                                     SPEED_SEARCH_FRACTION)
            if found is not None and (best is None or found.lines_found > best.lines_found):
                best = found
    if best is None:
        return speed
    return SpeedEstimate(best.speed_hz * scale_to_ref / speed.nominal_hz, speed.nominal_hz, (), False,
                         "bearing tones", best.lines_found)


def _explained_lines(machine: Machine, rates: Rates, shaft: str) -> list[float]:
    """Lines the machine itself puts near the half orders and harmonics of twice the speed of
    ``shaft``: other shafts' harmonics, line frequency harmonics, mesh, pass and belt frequencies."""
    own = rates.shafts_hz[shaft]
    lines = [k * hz for hz in rates.shafts_hz.values() if abs(hz - own) > 1e-9 * own
             for k in range(1, HARMONICS + 1)]
    lines += [k * m.line_frequency_hz for m in machine.motors for k in range(1, LINE_HARMONICS + 1)]
    lines += [g.gmf_hz for g in rates.meshes] + [r.pass_hz for r in rates.rotors]
    return lines + [b.belt_pass_hz for b in rates.belts]


def analyse(reading: Reading, machine: Machine) -> Analysis:
    """Analyse every usable channel of ``reading`` for ``machine``.

    Raises ReadingError when no channel passed the blocking quality gates.

    Parameters
    ----------
    reading : Reading
        The channels in SI units, their sample rate and quality notes.
    machine : Machine
        The machine's kinematics and measurement points.

    Returns
    -------
    Analysis
        Speeds (Hz), rates, forcing frequencies, and per channel the Hann
        spectrum (m/s^2 peak), the velocity spectrum (mm/s RMS), overall levels,
        the kurtogram and envelope views, the impact train and the
        once-per-revolution events of each shaft.

    References
    ----------
    ISO 20816-3:2022 (levels); Antoni (2007) (kurtogram); Randall & Antoni
    (2011) (envelope); McFadden (1987) (synchronous averaging); the module
    docstrings cite each step.

    Examples
    --------
    >>> from engine.common.paths import CASES
    >>> from engine.machine import load_machine
    >>> from engine.simulation import as_reading, simulate
    >>> machine = load_machine(CASES / "machines" / "rw2-raw-water-pump.yaml")   # the demo pump, 1486 r/min
    >>> reading = as_reading(simulate(machine, "unbalance", None, 2, None, 5120.0, 4.0, 1, ["P1H"]))
    >>> a = analyse(reading, machine)
    >>> abs(a.speed_estimate.speed_hz * 60 - 1486) < 2, a.channels[0].levels.velocity_band_hz
    (True, (10.0, 1000.0))
    """
    fs = reading.fs_hz
    points: dict[str | None, Point] = {p.id: p for p in machine.points}   # looked up by a channel's point, or None
    analysable = [ch for ch in reading.channels if not any(q.blocking for q in reading.issues_for(ch.name))]
    if not analysable:
        why = "; ".join(f"{q.channel}: {describe_issue(q)}" for q in reading.quality if q.blocking)
        raise ReadingError(f"no channel can be analysed ({why})", path=reading.source)
    # a clipped channel or one with dropouts is left out while another channel is free of every corrupting
    # issue, so one bad sensor does not spoil the rest of the reading (readings/quality.py, CORRUPTING_ISSUES)
    usable = [ch for ch in analysable if not corrupted(reading.issues_for(ch.name))] or analysable
    left_out = [ch for ch in reading.channels if ch.name not in {c.name for c in usable}]
    accel = {ch.name: _to_acceleration(ch, fs) for ch in usable}
    spectra, iso = {}, {}
    for name, a in accel.items():          # each FFT is dropped as soon as its spectrum and levels are out
        transform = Transform.of(a, fs)
        spectra[name] = transform.amplitude("peak")
        iso[name] = iso_velocities(transform, "acceleration")
        del transform
    velocity = {name: velocity_spectrum(s) for name, s in spectra.items()}

    first_point = next((points[c.point] for c in usable if c.point in points), None)
    shaft = first_point.shaft if first_point else machine.driver_shaft
    speed = _refined_speed(velocity, reading, machine, shaft)
    speeds = machine.speeds_at(speed.speed_hz * 60, shaft)
    rates = rates_at(machine, speeds)
    defects = [b.impact_rate_hz(d) for b in rates.bearings for d in ("BPFO", "BPFI", "BSF")]
    fastest = max(defects) if defects else unlisted_defect_hz(rates)
    synchronous, envelopes = {}, {}
    for ch in usable:               # each channel's record less its synchronous parts is dropped once whitened
        synchronous[ch.name], rest = _synchronous(accel[ch.name], fs, rates, reading.duration_s, spectra[ch.name])
        white = _random_white(rest, fs) if fastest is not None else None
        del rest
        envelopes[ch.name] = _envelopes(white, reading.n_samples, fs, fastest)
        del white
    if not speed.refined and defects:
        speed = _speed_from_envelopes([e[1] for e in envelopes.values()], rates, speed)
        speeds = machine.speeds_at(speed.speed_hz * 60, shaft)
        rates = rates_at(machine, speeds)
        synchronous = {ch.name: _synchronous(accel[ch.name], fs, rates, reading.duration_s, spectra[ch.name])[0]
                       for ch in usable}
    candidates = _impact_candidates_hz(rates)
    # the speed shaft's own lines stand clearest at its own points (a slow shaft's harmonics can
    # hide its 1X at another shaft's sensor): the loudest channel there, else the loudest of all
    own = [ch.name for ch in usable if (p := points.get(ch.point)) is None
           or abs(speeds[p.shaft] - speeds[shaft]) <= 1e-9 * speeds[shaft]]
    loudest = max(own or velocity, key=lambda name: float(np.sum(velocity[name].amplitude ** 2)))
    check = half_and_double(velocity[loudest], speed.speed_hz, _explained_lines(machine, rates, shaft))
    # the 1X line of the other channels on the shaft: a short record's noisier lines can bury a weak 1X in
    # the loudest channel while another sensor on the same shaft shows it clear
    check["one_x_elsewhere_db"] = max((one_x_line(velocity[name], speed.speed_hz)[1] for name in own
                                       if name != loudest), default=0.0)
    # the strongest shaft family near the stated speed and beyond it: a wrong stated speed or sample rate
    # puts the machine's own harmonic family away from the stated 1X
    stated = machine.speeds_at(reading.speed_rpm) if reading.speed_rpm else dict(machine.shaft_speeds_hz)
    others = [hz for hz in stated.values() if abs(hz - stated[shaft]) > 1e-9 * stated[shaft]]
    mains = [k * m.line_frequency_hz for m in machine.motors for k in range(1, LINE_HARMONICS + 1)]
    check.update(shaft_family(velocity[loudest], stated[shaft], mains, others))

    channels = []
    for ch in usable:
        a = accel[ch.name]
        point = points.get(ch.point)
        # ISO 20816-3 picks its band by the speed of the shaft the sensor sits on
        own_rpm = speeds[point.shaft] * 60 if point is not None else speed.speed_hz * 60
        kg, views, env_sig, env_fs = envelopes[ch.name]
        # a train faster than every listed rate is read at its own rate (a part the file lacks, a rate stated
        # off by a factor); the waveform's train is looked for at the shafts' own rates only
        impacts = (impact_train(env_sig, env_fs, min(candidates), max(candidates), faster=True)
                   if env_sig is not None else None)
        # a gear tooth's once-per-turn impacts leave with the synchronous part: they are read from the waveform
        geared = (waveform_impacts(a, fs, list(rates.shafts_hz.values()), [g.gmf_hz for g in rates.meshes])
                  if rates.meshes else None)
        channels.append(ChannelAnalysis(
            channel=ch, point=point, fs_hz=fs, accel=a,
            spectrum=spectra[ch.name], velocity=velocity[ch.name],
            levels=levels_of(a, iso[ch.name], fs, "acceleration", own_rpm),
            kurtogram=kg, envelopes=views, envelope_signal=env_sig, envelope_fs_hz=env_fs, impacts=impacts,
            synchronous=MappingProxyType(synchronous[ch.name]),
            issues=tuple(reading.issues_for(ch.name)), waveform_impacts=geared,
        ))
    return Analysis(machine, reading.source, fs, reading.n_samples, tuple(reading.quality),
                    MappingProxyType(speeds), speed, shaft, rates, tuple(forcing_list(rates)), tuple(channels),
                    reading.speed_rpm, machine.shaft_speeds_hz[shaft] * 60, MappingProxyType(check),
                    speed_limits(machine, shaft), tuple(reading.phase_1x),
                    stated[shaft] * 60 if reading.speed_rpm else None,
                    tuple(ch.name for ch in left_out),
                    MappingProxyType({ch.name: ch.point or "" for ch in reading.channels}),
                    tuple(_left_out_channel(ch, points.get(ch.point), fs, tuple(reading.issues_for(ch.name)))
                          for ch in left_out))
