"""The report's figures: which channel and shaft to show, and the SVG drawn from plain plot data.

The analysis stage hands over a ``PlotSet`` (``engine.analysis.plotdata``):
every channel seen from every shaft. ``focus`` picks the channel, shaft and
bearing of the top hypothesis's strongest evidence (or the loudest channel)
from the reasoning and the evidence's summaries; ``figures`` draws that view
with ``svg``. The envelope spectrum marks the harmonics of each defect family
the evidence found, solid, beside the dashed fundamentals of the bearing's rates.
"""

from __future__ import annotations

import numpy as np

from ..analysis.plotdata import PlotData, PlotSet
from ..common.units import ShownUnits
from ..evidence import Evidence
from ..machine import Machine
from ..reasoning import Reasoning
from . import svg

ENVELOPE_HARMONICS_MARKED = 5


def focus(reasoning: Reasoning, evidence: Evidence, machine: Machine) -> tuple[str, str, str | None]:
    """Channel, shaft and bearing the plots look at: those of the top hypothesis's strongest evidence."""
    channels = {lv.channel: lv for lv in evidence.levels}
    bearings = {b.id: b for b in machine.bearings}
    points = {p.id: p for p in machine.points}
    top = reasoning.top if not reasoning.withheld else None
    channel = bearing = None
    if top is not None:
        # a channel on the component itself first, else the first one the evidence names
        channel = next((c for c in top.channels if c in channels), None)
        bearing = top.component if top.component in bearings else None
    if channel is None:
        # the loudest channel with a trusted scale (a level that is not a measurement cannot be loudest)
        channel = max(channels.values(), key=lambda lv: (lv.velocity_rms_mm_s is not None,
                                                         lv.velocity_rms_mm_s or 0.0)).channel
    point = points.get(channels[channel].point)
    if bearing is not None:
        shaft = bearings[bearing].shaft
    elif top is not None and top.component in machine.shaft_speeds_hz:
        shaft = top.component
    elif point is not None:
        shaft = point.shaft
    else:
        shaft = machine.driver_shaft
    return channel, shaft, bearing


def shown(plots: PlotSet, reasoning: Reasoning, evidence: Evidence, machine: Machine) -> PlotData:
    """The view of ``plots`` the report's figures show (``focus``)."""
    return plots.view(*focus(reasoning, evidence, machine))


def _matched_harmonics(evidence: Evidence, pd: PlotData) -> list[svg.Mark]:
    """Solid marks at the harmonics of each defect family the evidence found in this channel's envelope.

    Only a family whose fundamental was found, and no other family explains
    better, is marked: a family known only by a stray harmonic would put solid
    marks where the spectrum shows nothing (the fact does not say which
    harmonics those were).
    """
    out = []
    for f in evidence.envelope_families:
        if (f.channel == pd.channel and f.band_method == "kurtogram" and f.fundamental_owned
                and (pd.bearing is None or f.bearing == pd.bearing)):
            # the ball spin's impacts come twice per spin: the k-th harmonic of 2xBSF is 2k x BSF
            per, name = (2, "BSF") if f.defect == "BSF" else (1, f.defect)
            found = min(f.harmonics_found, ENVELOPE_HARMONICS_MARKED)
            for k in range(1, found + 1):
                label = name if k * per == 1 else f"{k * per}x{name}"
                if k == 1 and pd.bearing is None:      # several bearings marked: say whose rate it is
                    label += f" {f.bearing}"
                out.append(svg.Mark(k * f.expected_hz, label, strong=True))
    return out


def figures(plots: PlotSet, evidence: Evidence, reasoning: Reasoning, machine: Machine,
            units: ShownUnits | None = None) -> list[tuple[str, str]]:
    """(title, SVG) of each figure of the view the report shows: waveform, revolutions, spectrum,
    squared envelope spectrum; frequencies and velocities in ``units`` (default Hz, mm/s RMS)."""
    return draw(shown(plots, reasoning, evidence, machine), evidence, units)


def _axes(pd: PlotData, units: ShownUnits | None) -> tuple[float, str, float, str]:
    """The factor from Hz to the frequency axis and its label; from mm/s RMS to the velocity axis
    (a spectrum's lines: peak is sqrt(2) x RMS) and its label."""
    units = units or ShownUnits()
    fx = units.frequency_value(1.0, pd.shaft_hz)
    if fx is None:                  # orders, but no speed of the shaft in view: stay in Hz
        fx, fname = 1.0, "Hz"
    else:
        fname = {"hz": "Hz", "cpm": "CPM", "orders": f"orders of {pd.shaft}"}[units.frequency]
    return fx, f"frequency, {fname}", units.velocity_value(1.0, line=True), f"velocity, {units.velocity_label(True)}"


def draw(pd: PlotData, evidence: Evidence, units: ShownUnits | None = None) -> list[tuple[str, str]]:
    """(title, SVG) of each figure of one view."""
    fx, xlabel, vy, ylabel = _axes(pd, units)
    out = []
    # a channel whose scale is not trusted is drawn as stated, and its level axes say so
    stated = " as stated (scale not trusted)" if pd.channel in {lv.channel for lv in evidence.scale_doubted} else ""
    title = f"Waveform, {pd.channel}"
    out.append((title, svg.render(svg.Plot(title, "time, ms", "acceleration, g" + stated,
                                           [svg.Series(pd.waveform_t_ms, pd.waveform_g)]))))
    if pd.revolutions_g is not None and pd.revolutions_deg is not None and len(pd.revolutions_g):
        rows = pd.revolutions_g
        step = 2.2 * float(np.max(np.abs(rows))) or 1.0
        series = [svg.Series(pd.revolutions_deg, row - i * step) for i, row in enumerate(rows)]
        ticks = [(-i * step, f"turn {i + 1}") for i in range(len(rows))]
        title = f"Waveform cut into turns of {pd.shaft} ({pd.shaft_hz * 60:.0f} rpm), {pd.channel}"
        out.append((title, svg.render(svg.Plot(title, f"angle of {pd.shaft}, degrees", "acceleration, one row per turn",
                                               series, xlim=(0.0, 360.0), ytick_labels=ticks,
                                               height=60 + 30 * len(rows)))))
    marks = [svg.Mark(m.freq_hz * fx, m.label) for m in pd.spectrum_marks]
    title = f"Spectrum, {pd.channel} ({pd.spectrum_resolution_hz:.3g} Hz resolution, Hann)"
    top = float(np.max(pd.spectrum_mm_s)) * 1.1 if len(pd.spectrum_mm_s) else 1.0
    out.append((title, svg.render(svg.Plot(title, xlabel, ylabel + stated,
                                           [svg.Series(pd.spectrum_hz * fx, pd.spectrum_mm_s * vy)], marks,
                                           xlim=(0.0, float(pd.spectrum_hz[-1]) * fx), ylim=(0.0, top * vy),
                                           height=260))))
    # the envelope, its frequencies and its band are there together (plotdata._envelope), or none of them
    if pd.envelope is not None and pd.envelope_hz is not None and pd.envelope_band_hz is not None:
        matched = _matched_harmonics(evidence, pd)
        marks = matched + [svg.Mark(m.freq_hz, m.label) for m in pd.envelope_marks
                           if not any(abs(m.freq_hz - x.x) < 1e-6 for x in matched)]
        marks = [svg.Mark(m.x * fx, m.label, strong=m.strong) for m in marks]
        lo, hi = pd.envelope_band_hz
        # the envelope of a prewhitened signal has no physical unit: show it against its own median
        median = float(np.median(pd.envelope)) if len(pd.envelope) else 0.0
        relative = pd.envelope / median if median > 0 else pd.envelope
        top = float(np.max(relative)) * 1.1 if len(relative) else 1.0
        title = f"Squared envelope spectrum, {pd.channel}, band {lo:.0f}-{hi:.0f} Hz"
        out.append((title, svg.render(svg.Plot(title, xlabel, "squared envelope, times its median",
                                               [svg.Series(pd.envelope_hz * fx, relative)], marks,
                                               xlim=(0.0, float(pd.envelope_hz[-1]) * fx), ylim=(0.0, top),
                                               height=260))))
    return out
