"""Plain plot data for the report: arrays and marks, cut from the analysis of one channel.

The report draws what this module hands it and nothing else: the first
revolutions of the waveform, the waveform cut into turns of one shaft, the
velocity spectrum with the forcing frequencies that fall in it, and the
squared envelope spectrum with the defect rates of the shaft's bearings.
Arrays are plain numpy arrays in the unit named beside them.

The analysis stage hands over a ``PlotSet``: one view of every channel as
seen from every shaft, cut before anyone knows the diagnosis. The report
picks the view its figures show (``engine.report.plots``) and never goes
back to the analysis.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from ..common.units import STANDARD_GRAVITY_M_S2, from_si
from ..readings.quality import left_out_words
from .result import Analysis, ChannelAnalysis, LeftOutChannel
from .synchronous import default_samples_per_rev, revolution_rows

REVOLUTIONS_SHOWN = 8
WAVEFORM_REVOLUTIONS = 6
SPECTRUM_ORDERS = 12             # the spectrum shows at least 12 x 1X of the shaft of interest
SKIPPED_MARKS = {"slip", "pole pass", "HTF"}   # spacings, not lines of the spectrum
SENSOR_ORDERS = (2, 3)           # besides 1X, the harmonics of the shaft under the sensor that are marked


@dataclass(frozen=True)
class Mark:
    """A forcing frequency (Hz) to mark on a spectrum, with its label, family, component and name."""

    freq_hz: float
    label: str
    family: str          # shaft, bearing, gear, belt, rotor, electrical
    component: str
    name: str            # 1X, BPFO, 2xBSF, GMF, ...


@dataclass(frozen=True)
class PlotData:
    """One channel seen from one shaft: waveform (ms, g), turns (degrees, g), spectra and their marks."""

    channel: str
    shaft: str
    shaft_hz: float
    bearing: str | None
    waveform_t_ms: np.ndarray
    waveform_g: np.ndarray | None            # acceleration; None for a record kept as recorded (below)
    revolutions_deg: np.ndarray | None       # angle axis of each turn
    revolutions_g: np.ndarray | None         # (turns, samples), g
    spectrum_hz: np.ndarray
    spectrum_mm_s: np.ndarray                # velocity, mm/s RMS
    spectrum_resolution_hz: float
    spectrum_marks: tuple[Mark, ...]
    envelope_hz: np.ndarray | None
    envelope: np.ndarray | None              # squared envelope, (m/s^2)^2 peak
    envelope_band_hz: tuple[float, float] | None
    envelope_marks: tuple[Mark, ...]
    sensor_shaft: str | None = None          # the shaft under the channel's point (None: no point)
    left_out: str = ""                       # why the analysis left the channel out, in words ('' when analysed)
    # a velocity or displacement record left out with samples that are not numbers, drawn as recorded: one of
    # these instead of waveform_g (its gaps cannot be integrated or differentiated across)
    waveform_mm_s: np.ndarray | None = None  # velocity, mm/s (instantaneous)
    waveform_um: np.ndarray | None = None    # displacement, micrometres (instantaneous)


@dataclass(frozen=True)
class PlotSet:
    """The plot data of one analysis: a view of each channel from each shaft, all bearings marked."""

    views: tuple[PlotData, ...]

    def view(self, channel: str, shaft: str, bearing: str | None = None) -> PlotData:
        """``channel`` seen from ``shaft``; with ``bearing``, its envelope marks that bearing's rates only."""
        pd = next(v for v in self.views if v.channel == channel and v.shaft == shaft)
        if bearing is None:
            return pd
        return replace(pd, bearing=bearing, envelope_marks=tuple(m for m in pd.envelope_marks
                                                                  if m.component == bearing))


def plot_set(analysis: Analysis) -> PlotSet:
    """Every channel's plot data from every shaft (``plot_data`` of each pair); a channel left out for a
    corrupting issue too, as it is (no envelope), saying why."""
    views = []
    for c in analysis.channels:
        envelope = _envelope(c)        # one copy per channel, shared by its views from each shaft
        views += [plot_data(analysis, c.name, shaft, envelope=envelope) for shaft in analysis.speeds_hz]
    for lo in analysis.left_out_channels:
        if lo.accel is not None or lo.recorded is not None:
            views += [plot_data(analysis, lo.name, shaft) for shaft in analysis.speeds_hz]
    return PlotSet(tuple(views))


def _envelope(c: ChannelAnalysis):
    """(frequencies, squared envelope, band) of the channel's envelope spectrum from 1 Hz up, or Nones."""
    if c.envelope is None:
        return None, None, None
    keep = c.envelope.freq_hz >= 1.0
    return c.envelope.freq_hz[keep], c.envelope.amplitude[keep], c.envelopes[0].band_hz


def _channel(analysis: Analysis, name: str) -> ChannelAnalysis | LeftOutChannel:
    return next((c for c in analysis.channels if c.name == name), None) or next(
        c for c in analysis.left_out_channels if c.name == name)


def plot_data(analysis: Analysis, channel: str, shaft: str, bearing: str | None = None, *,
              envelope=None) -> PlotData:
    """What the report plots for ``channel``, looking at ``shaft`` and, if given, ``bearing``;
    ``envelope`` is the channel's ``_envelope``, when the caller has it already."""
    c = _channel(analysis, channel)
    recorded = c.recorded if isinstance(c, LeftOutChannel) and c.accel is None else None
    samples = c.accel if recorded is None else recorded
    if samples is None:
        raise ValueError(f"channel {channel} has no waveform to plot")     # plot_set never asks for one
    fr = analysis.speeds_hz[shaft]
    n = min(len(samples), int(min(analysis.duration_s, max(0.1, WAVEFORM_REVOLUTIONS / fr)) * c.fs_hz))
    # a channel left out with samples that are not numbers: its waveform starts a little before the first one
    bad = np.flatnonzero(~np.isfinite(samples)) if isinstance(c, LeftOutChannel) else np.zeros(0, dtype=int)
    start = min(max(0, int(bad[0]) - n // 4), len(samples) - n) if len(bad) else 0
    waveform_t = (start + np.arange(n)) / c.fs_hz * 1e3
    piece = samples[start:start + n]
    waveform = piece / STANDARD_GRAVITY_M_S2 if recorded is None else None
    quantity = c.channel.quantity if recorded is not None else "acceleration"
    waveform_mm_s = from_si(piece, "mm/s") if quantity == "velocity" else None
    waveform_um = from_si(piece, "um") if quantity == "displacement" else None

    revs_deg = revs_g = None
    if c.accel is not None and analysis.duration_s * fr >= 1 and bool(np.isfinite(c.accel).all()):
        spr = default_samples_per_rev(c.fs_hz, fr)
        shown = min(REVOLUTIONS_SHOWN, int(analysis.duration_s * fr))
        rows = revolution_rows(c.accel[:int(min(len(c.accel), (shown + 1) * c.fs_hz / fr + 4))], c.fs_hz, fr, spr)
        if len(rows):
            revs_g = rows[:REVOLUTIONS_SHOWN] / STANDARD_GRAVITY_M_S2
            revs_deg = np.arange(spr) * 360.0 / spr

    highest = max((f.frequency_hz for f in analysis.forcing if f.family != "bearing"), default=10 * fr)
    fmax = min(c.velocity.fmax_hz if c.velocity is not None else analysis.fs_hz / 2,
               max(SPECTRUM_ORDERS * fr, 1.3 * highest))
    if c.velocity is not None:
        spec = c.velocity.below(fmax)
        spec_hz, spec_mm_s, resolution_hz = spec.freq_hz, spec.amplitude, spec.resolution_hz
    else:                               # a channel left out with samples that are not numbers: no spectrum
        spec_hz, spec_mm_s, resolution_hz = np.zeros(0), np.zeros(0), analysis.fs_hz / analysis.n_samples
    marks = [Mark(f.frequency_hz, f"{f.name} {f.component}", f.family, f.component, f.name)
             for f in sorted(analysis.forcing, key=lambda f: (f.family == "bearing", f.frequency_hz))
             if f.frequency_hz <= fmax and f.name not in SKIPPED_MARKS]
    # 2X and 3X of the shaft under the sensor, beside every shaft's 1X (the forcing list has 1X only)
    sensor = c.point.shaft if c.point is not None and c.point.shaft in analysis.speeds_hz else None
    if sensor is not None:
        marks += [Mark(k * analysis.speeds_hz[sensor], f"{k}X {sensor}", "shaft", sensor, f"{k}X")
                  for k in SENSOR_ORDERS if k * analysis.speeds_hz[sensor] <= fmax]

    env_hz, env, band = (envelope if envelope is not None else _envelope(c) if isinstance(c, ChannelAnalysis)
                         else (None, None, None))
    env_marks: tuple[Mark, ...] = ()
    if c.envelope is not None:
        chosen = [bearing] if bearing else [b.bearing for b in analysis.rates.bearings if b.shaft == shaft]
        out = []
        for b in chosen:
            rates = analysis.rates.bearing(b)
            for defect in ("BPFO", "BPFI", "BSF", "FTF"):
                name = "2xBSF" if defect == "BSF" else defect
                out.append(Mark(rates.impact_rate_hz(defect), f"{name} {b}", "bearing", b, name))
        env_marks = tuple(sorted(out, key=lambda m: m.freq_hz))
    return PlotData(channel, shaft, fr, bearing, waveform_t, waveform, revs_deg, revs_g,
                    spec_hz, spec_mm_s, resolution_hz, tuple(marks), env_hz, env, band, env_marks,
                    sensor, left_out_words(c.issues) if isinstance(c, LeftOutChannel) else "",
                    waveform_mm_s, waveform_um)
