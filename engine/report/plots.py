"""The report's figures: which channel and shaft to show, and the SVG drawn from plain plot data.

The analysis stage hands over a ``PlotSet`` (``engine.analysis.plotdata``):
every channel seen from every shaft. ``focus`` picks the channel, shaft and
bearing of the top hypothesis's strongest evidence (or the loudest channel)
from the reasoning and the evidence's summaries; ``figures`` draws that view
with ``svg`` (or the channels the user chose, ``choose_channels``). The
spectrum's marks are grouped by their source (``GROUPS``: shaft orders, bearing
rates, gear mesh...), each group in its own colour and named in the legend;
rates that crowd the axis (``CROWDING``) are left out unless a hypothesis the
report shows is on their component. The envelope spectrum marks the harmonics
of each defect family the evidence found, solid, beside the dashed
fundamentals of the bearing's rates. The spectrum and envelope figures carry
their data (``Figure.data``) for the HTML report's zoom and cursors
(``templates/plots.js``).
"""

from __future__ import annotations

from collections.abc import Set as AbstractSet
from dataclasses import dataclass, replace

import numpy as np

from ..analysis.plotdata import PlotData, PlotSet
from ..common.errors import UsageError
from ..common.units import VELOCITY_UNITS, ShownUnits, convert
from ..evidence import Evidence
from ..machine import Machine
from ..reasoning import POSSIBLE, Reasoning
from . import svg

ENVELOPE_HARMONICS_MARKED = 5
# each forcing family's group on a plot: its name in the legend and its colour
GROUPS = {"shaft": ("shaft orders", "#1f4e9a"), "bearing": ("bearing rates", svg.MARK),
          "gear": ("gear mesh", "#2e7d32"), "belt": ("belt pass", "#7a5c00"),
          "rotor": ("vane/blade pass", "#6a3d9a"), "electrical": ("electrical", "#c25e00")}
FOUND = ("harmonics found in the evidence", svg.MARK)      # the envelope's matched defect harmonics
# the envelope's marks: one colour per bearing in view (the first in the bearing colour), each group named by it
BEARING_COLOURS = (svg.MARK, "#1f4e9a", "#2e7d32", "#6a3d9a", "#c25e00", "#7a5c00")
CROWDING = {"FTF", "rotor bar pass"}   # rates that crowd a spectrum: marked only when a hypothesis is on them
INTERACTIVE_POINTS = 32768             # at most this many points of a trace go to the HTML zoom
NOT_A_NUMBER_MARKS = 5                 # a left-out waveform marks the first few runs of samples that are not numbers


@dataclass(frozen=True)
class Figure:
    """One figure: its title, its SVG, and for a spectrum the data its HTML zoom and cursors redraw."""

    title: str
    svg: str
    data: dict | None = None


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


def _found_families(evidence: Evidence, pd: PlotData) -> list:
    """The defect families of this channel's envelope (kurtogram view) whose fundamental was found and no
    other family explains better, of the bearing in view (any bearing when none is)."""
    return [f for f in evidence.envelope_families
            if f.channel == pd.channel and f.band_method == "kurtogram" and f.fundamental_owned
            and (pd.bearing is None or f.bearing == pd.bearing)]


def _matched_harmonics(evidence: Evidence, pd: PlotData, colours: dict[str, str] | None = None) -> list[svg.Mark]:
    """Solid marks at the harmonics of each defect family the evidence found in this channel's envelope.

    Only a family whose fundamental was found, and no other family explains
    better, is marked: a family known only by a stray harmonic would put solid
    marks where the spectrum shows nothing (the fact does not say which
    harmonics those were). The fundamental's label and the group in the legend
    name the bearing, whether one bearing is in view or several; ``colours``
    gives each bearing's colour.
    """
    out = []
    for f in _found_families(evidence, pd):
        # the ball spin's impacts come twice per spin: the k-th harmonic of 2xBSF is 2k x BSF
        per, name = (2, "BSF") if f.defect == "BSF" else (1, f.defect)
        found = min(f.harmonics_found, ENVELOPE_HARMONICS_MARKED)
        for k in range(1, found + 1):
            label = name if k * per == 1 else f"{k * per}x{name}"
            if k == 1:                              # the fundamental says whose rate it is
                label += f" {f.bearing}"
            out.append(svg.Mark(k * f.expected_hz, label, strong=True, group=f"{FOUND[0]}, {f.bearing}",
                                color=(colours or {}).get(f.bearing, FOUND[1])))
    return out


def _envelope_marks(evidence: Evidence, pd: PlotData) -> list[svg.Mark]:
    """The envelope's marks: each defect family found (solid, ``_matched_harmonics``), then each bearing's
    rates (dashed) where no solid mark stands; every group names its bearing, in the bearing's own colour."""
    bearings = dict.fromkeys([*(f.bearing for f in _found_families(evidence, pd)),
                              *(m.component for m in pd.envelope_marks)])
    colours = {b: BEARING_COLOURS[i % len(BEARING_COLOURS)] for i, b in enumerate(bearings)}
    matched = _matched_harmonics(evidence, pd, colours)
    return matched + [svg.Mark(m.freq_hz, m.label, group=f"rates of {m.component}", color=colours[m.component])
                      for m in pd.envelope_marks if not any(abs(m.freq_hz - x.x) < 1e-6 for x in matched)]


def choose_channels(text: str | None, available) -> tuple[str, ...] | None:
    """The channels ``--plots`` names, checked against ``available``: None for the default (the focus
    alone), ("all",) for every channel; a UsageError naming an unknown channel and the known ones."""
    if text is None or not text.strip():
        return None
    names = [n.strip() for n in text.split(",") if n.strip()]
    if names == ["all"]:
        return ("all",)
    known = list(available)
    unknown = [n for n in names if n not in known]
    if unknown:
        raise UsageError(f"--plots: no channel {unknown[0]!r} in the reading; its channels are "
                         f"{', '.join(known)} (or give all)")
    return tuple(dict.fromkeys(names))


def used_components(reasoning: Reasoning) -> set[str]:
    """The components of the hypotheses the report shows, at POSSIBLE or more (their crowding rates are
    marked)."""
    return {h.component for h in reasoning.hypotheses if h.certainty >= POSSIBLE}


def figures(plots: PlotSet, evidence: Evidence, reasoning: Reasoning, machine: Machine,
            channels: tuple[str, ...] | None = None, units: ShownUnits | None = None) -> list[Figure]:
    """Each figure of the view the report shows: waveform, revolutions, spectrum, squared envelope
    spectrum. ``channels`` (``choose_channels``): those channels' figures instead, each seen from the
    shaft under its point; ("all",): the view shown, then the spectrum of every other channel.
    Frequencies and velocities in ``units`` (default Hz, mm/s RMS)."""
    used = used_components(reasoning)
    channel, shaft, bearing = focus(reasoning, evidence, machine)
    # a channel left out for corruption is shown as it is after the view, waveform first: what is wrong with it
    left_out = dict.fromkeys(v.channel for v in plots.views if v.left_out)
    if channels is None:
        return draw(plots.view(channel, shaft, bearing), evidence, used, units) + [
            f for c in left_out for f in _draw_own(plots, c, channel, shaft, bearing, evidence, used, units)]
    if channels == ("all",):
        out = draw(plots.view(channel, shaft, bearing), evidence, used, units)
        others = dict.fromkeys(v.channel for v in plots.views if v.channel != channel and not v.left_out)
        return out + [f for c in others for f in _draw_own(plots, c, channel, shaft, bearing, evidence, used, units)
                      if f.data is not None and f.title.startswith("Spectrum")] + [
            f for c in left_out for f in _draw_own(plots, c, channel, shaft, bearing, evidence, used, units)]
    return [f for c in channels for f in _draw_own(plots, c, channel, shaft, bearing, evidence, used, units)]


def _draw_own(plots: PlotSet, channel: str, focus_channel: str, shaft: str, bearing: str | None,
              evidence: Evidence, used: AbstractSet[str], units: ShownUnits | None) -> list[Figure]:
    """The figures of ``channel`` as the report would show it: the focus view for the focus channel, else
    seen from the shaft under its point (the focus shaft when it has none); a channel left out for a
    corrupting issue is drawn as it is, its titles saying why (a velocity or displacement record with samples
    that are not numbers: its waveform as recorded); none for one with nothing to draw."""
    if channel == focus_channel:
        return draw(plots.view(channel, shaft, bearing), evidence, used, units)
    any_view = next((v for v in plots.views if v.channel == channel), None)
    if any_view is None:
        return []
    return draw(plots.view(channel, any_view.sensor_shaft or shaft), evidence, used, units)


def spectrum_marks(pd: PlotData, used: AbstractSet[str] = frozenset()) -> list[svg.Mark]:
    """The spectrum's marks, grouped by source; a crowding rate only when ``used`` holds its component."""
    out = []
    for m in pd.spectrum_marks:
        if m.name in CROWDING and m.component not in used:
            continue
        group, color = GROUPS.get(m.family, (m.family, svg.MARK))
        out.append(svg.Mark(m.freq_hz, m.label, strong=m.family == "shaft" and m.component == pd.sensor_shaft,
                            group=group, color=color, rank=int(m.family == "bearing")))
    return out


def spectrum_top_hz(pd: PlotData, marks: list[svg.Mark]) -> float:
    """The highest frequency the spectrum figure draws at first: 12 orders of the view's shaft or 1.3 times
    the highest mark shown that is not a bearing rate, within the data (the zoom reaches the rest)."""
    highest = max((m.x for m in marks if m.group != GROUPS["bearing"][0]), default=0.0)
    wanted = max(12 * pd.shaft_hz, 1.3 * highest)
    return min(float(pd.spectrum_hz[-1]), wanted) if len(pd.spectrum_hz) else wanted


def _data(title: str, x: np.ndarray, y: np.ndarray, marks: list[svg.Mark], xlim, xlabel: str, ylabel: str,
          spacing: float) -> dict:
    """What the HTML zoom and cursors redraw: the trace (at most INTERACTIVE_POINTS, peaks kept), the
    marks, the first view, the sideband cursor's first spacing (1X) and the axis words, frequencies in
    the axis's unit (``xlabel`` after its comma), 5 significant digits."""
    x, y = svg.reduce_for_drawing(x, y, INTERACTIVE_POINTS // 2)
    keep = np.isfinite(x) & np.isfinite(y)

    def r(v):
        return [float(f"{a:.5g}") for a in v]

    return {"title": title, "unit": xlabel.split(", ", 1)[-1], "xlabel": xlabel, "ylabel": ylabel,
            "x": r(x[keep]), "y": r(y[keep]), "xlim": [float(xlim[0]), float(xlim[1])],
            "spacing": float(f"{spacing:.6g}"),
            "marks": [{"x": float(f"{m.x:.6g}"), "label": m.label, "group": m.group or "", "color": m.color,
                       "strong": m.strong, "rank": m.rank} for m in marks]}


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


def _waveform(pd: PlotData, units: ShownUnits) -> tuple[np.ndarray, str]:
    """The waveform's values and its axis words: acceleration in g, or a velocity or displacement record
    left out with samples that are not numbers as recorded (velocity in the length unit of ``units``:
    instantaneous values, neither RMS nor peak)."""
    if pd.waveform_mm_s is not None:
        length = VELOCITY_UNITS[units.velocity][0]
        return convert(pd.waveform_mm_s, "mm/s", length), f"velocity as recorded, {length}"
    if pd.waveform_um is not None:
        return pd.waveform_um, "displacement as recorded, um"
    if pd.waveform_g is None:
        raise ValueError(f"view of {pd.channel} has no waveform")     # plot_data always sets one
    return pd.waveform_g, "acceleration, g"


def draw(pd: PlotData, evidence: Evidence, used: AbstractSet[str] = frozenset(),
         units: ShownUnits | None = None) -> list[Figure]:
    """Each figure of one view; ``used``: the components whose crowding rates are marked; frequencies
    and velocities in ``units`` (default Hz, mm/s RMS)."""
    fx, xlabel, vy, ylabel = _axes(pd, units)
    out = []
    # a channel whose scale is not trusted is drawn as stated, and its level axes say so
    stated = " as stated (scale not trusted)" if pd.channel in {lv.channel for lv in evidence.scale_doubted} else ""
    # a channel left out is drawn as it is, so the analyst sees what is wrong; its titles say it was not analysed
    why = f" - LEFT OUT ({pd.left_out})" if pd.left_out else ""
    title = f"Waveform, {pd.channel}{why}"
    # samples that are not numbers cannot be drawn: a mark stands at the start of each run of them (the first few)
    values, axis = _waveform(pd, units or ShownUnits())
    bad = ~np.isfinite(values)
    starts = np.flatnonzero(bad & ~np.concatenate(([False], bad[:-1])))[:NOT_A_NUMBER_MARKS]
    gaps = [svg.Mark(float(pd.waveform_t_ms[i]), "not a number", strong=True, group="samples that are not numbers")
            for i in starts]
    out.append(Figure(title, svg.render(svg.Plot(title, "time, ms", axis + stated,
                                                 [svg.Series(pd.waveform_t_ms, values)], gaps))))
    if pd.revolutions_g is not None and pd.revolutions_deg is not None and len(pd.revolutions_g):
        rows = pd.revolutions_g
        step = 2.2 * float(np.max(np.abs(rows))) or 1.0
        series = [svg.Series(pd.revolutions_deg, row - i * step) for i, row in enumerate(rows)]
        ticks = [(-i * step, f"turn {i + 1}") for i in range(len(rows))]
        title = f"Waveform cut into turns of {pd.shaft} ({pd.shaft_hz * 60:.0f} rpm), {pd.channel}{why}"
        out.append(Figure(title, svg.render(svg.Plot(title, f"angle of {pd.shaft}, degrees",
                                                     "acceleration, one row per turn", series, xlim=(0.0, 360.0),
                                                     ytick_labels=ticks, height=60 + 30 * len(rows)))))
    if not len(pd.spectrum_hz):         # a channel left out with samples that are not numbers has no spectrum
        return out
    marks = spectrum_marks(pd, used)
    resolution = xlabel.split(", ", 1)[-1]
    title = f"Spectrum, {pd.channel} ({pd.spectrum_resolution_hz * fx:.3g} {resolution} resolution, Hann){why}"
    top_hz = spectrum_top_hz(pd, marks)
    shown = pd.spectrum_hz <= top_hz
    top = (float(np.max(pd.spectrum_mm_s[shown])) * 1.1 if shown.any() else 0.0) or 1.0   # a dead channel: all 0
    marks = [replace(m, x=m.x * fx) for m in marks]
    xlim = (0.0, top_hz * fx)
    ylabel += stated
    out.append(Figure(title, svg.render(svg.Plot(title, xlabel, ylabel,
                                                 [svg.Series(pd.spectrum_hz * fx, pd.spectrum_mm_s * vy)], marks,
                                                 xlim=xlim, ylim=(0.0, top * vy), height=260)),
                      _data(title, pd.spectrum_hz * fx, pd.spectrum_mm_s * vy, marks, xlim, xlabel, ylabel,
                            pd.shaft_hz * fx)))
    # the envelope, its frequencies and its band are there together (plotdata._envelope), or none of them
    if pd.envelope is not None and pd.envelope_hz is not None and pd.envelope_band_hz is not None:
        marks = [replace(m, x=m.x * fx) for m in _envelope_marks(evidence, pd)]
        lo, hi = pd.envelope_band_hz
        # the envelope of a prewhitened signal has no physical unit: show it against its own median
        median = float(np.median(pd.envelope)) if len(pd.envelope) else 0.0
        relative = pd.envelope / median if median > 0 else pd.envelope
        top = float(np.max(relative)) * 1.1 if len(relative) else 1.0
        band = (units or ShownUnits()).frequency_range_text(lo, hi, pd.shaft_hz)    # in the axis's unit
        title = f"Squared envelope spectrum, {pd.channel}, band {band}"
        xlim = (0.0, float(pd.envelope_hz[-1]) * fx)
        elabel = "squared envelope, times its median"
        out.append(Figure(title, svg.render(svg.Plot(title, xlabel, elabel,
                                                     [svg.Series(pd.envelope_hz * fx, relative)], marks,
                                                     xlim=xlim, ylim=(0.0, top), height=260)),
                          _data(title, pd.envelope_hz * fx, relative, marks, xlim, xlabel, elabel, pd.shaft_hz * fx)))
    return out
