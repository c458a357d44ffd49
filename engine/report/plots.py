"""SVG plots for the HTML report, drawn with matplotlib from the analysis already done.

Each function takes the channel's analysis context (computed once by the
evidence stage) and returns an SVG string; nothing here reads files or
recomputes a spectrum. The look is plain: black lines, grey markers, labels
where the eye needs them, readable in print.
"""

from __future__ import annotations

import io
import re

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402

from ..analysis import cut_revolutions  # noqa: E402
from ..analysis import Analysis as ReadingContext, ChannelAnalysis as ChannelContext  # noqa: E402
from ..units import STANDARD_GRAVITY_M_S2  # noqa: E402

STYLE = {
    "svg.fonttype": "none", "svg.hashsalt": "tellwave", "font.size": 8, "font.family": "sans-serif",
    "axes.spines.top": False, "axes.spines.right": False, "axes.grid": True, "grid.color": "#dddddd",
    "grid.linewidth": 0.5, "lines.linewidth": 0.7, "axes.edgecolor": "#444444",
}
LINE = "#1a1a1a"
MARK = "#b0413e"
MAX_MARKS = 14


def _svg(fig) -> str:
    buf = io.StringIO()
    fig.savefig(buf, format="svg", bbox_inches="tight", metadata={"Date": None})
    plt.close(fig)
    text = buf.getvalue()
    text = re.sub(r"<metadata>.*?</metadata>", "", text, flags=re.S)   # a self-contained report cites nothing
    return text[text.index("<svg"):]


def _figure(height=2.2):
    with plt.rc_context(STYLE):
        fig, ax = plt.subplots(figsize=(7.2, height), dpi=100)
    return fig, ax


def waveform(c: ChannelContext, seconds: float) -> str:
    """Acceleration waveform (g) of the first ``seconds`` of the record."""
    with plt.rc_context(STYLE):
        fig, ax = _figure()
        n = min(len(c.accel), int(seconds * c.fs_hz))
        t = np.arange(n) / c.fs_hz
        ax.plot(t * 1e3, c.accel[:n] / STANDARD_GRAVITY_M_S2, color=LINE)
        ax.set_xlabel("time, ms")
        ax.set_ylabel("acceleration, g")
        ax.set_title(f"Waveform, {c.name}", loc="left")
        return _svg(fig)


def revolutions(c: ChannelContext, shaft: str, speed_hz: float, count: int = 8) -> str | None:
    """The waveform cut into ``count`` revolutions of ``shaft``, one row per turn."""
    try:
        revs = cut_revolutions(c.accel, c.fs_hz, speed_hz)
    except ValueError:
        return None
    rows = revs.samples[:count] / STANDARD_GRAVITY_M_S2
    with plt.rc_context(STYLE):
        fig, ax = _figure(height=2.8)
        step = 2.2 * float(np.max(np.abs(rows))) or 1.0
        angle = np.linspace(0, 360, rows.shape[1], endpoint=False)
        for i, row in enumerate(rows):
            ax.plot(angle, row - i * step, color=LINE)
        ax.set_yticks([-i * step for i in range(len(rows))], [f"turn {i + 1}" for i in range(len(rows))])
        ax.set_xlabel(f"angle of {shaft}, degrees")
        ax.set_xlim(0, 360)
        ax.set_title(f"Waveform cut into revolutions of {shaft} ({speed_hz * 60:.0f} rpm), {c.name}", loc="left")
        return _svg(fig)


def _marks(ax, marks, top):
    for i, (freq, label) in enumerate(marks[:MAX_MARKS]):
        ax.axvline(freq, color=MARK, linewidth=0.6, linestyle=(0, (3, 2)))
        ax.text(freq, top * (0.97 - 0.08 * (i % 4)), f" {label}", color=MARK, fontsize=6.5, va="top", ha="left")


def spectrum(c: ChannelContext, fmax_hz: float, marks: list[tuple[float, str]]) -> str:
    """Velocity spectrum (mm/s RMS) up to ``fmax_hz`` with forcing frequencies marked."""
    v = c.velocity
    keep = v.freq_hz <= fmax_hz
    with plt.rc_context(STYLE):
        fig, ax = _figure(height=2.6)
        ax.plot(v.freq_hz[keep], v.amplitude[keep], color=LINE)
        top = float(np.max(v.amplitude[keep])) * 1.25 if keep.any() else 1.0
        ax.set_ylim(0, top)
        ax.set_xlim(0, fmax_hz)
        _marks(ax, [m for m in marks if m[0] <= fmax_hz], top)
        ax.set_xlabel("frequency, Hz")
        ax.set_ylabel("velocity, mm/s RMS")
        ax.set_title(f"Spectrum, {c.name} ({v.resolution_hz:.3f} Hz lines, Hann)", loc="left")
        return _svg(fig)


def envelope(c: ChannelContext, marks: list[tuple[float, str]]) -> str | None:
    """Squared envelope spectrum of the kurtogram band with bearing defect rates marked."""
    ses = c.envelope
    if ses is None or c.kurtogram is None:
        return None
    keep = ses.freq_hz >= 1.0
    with plt.rc_context(STYLE):
        fig, ax = _figure(height=2.6)
        ax.plot(ses.freq_hz[keep], ses.amplitude[keep], color=LINE)
        top = float(np.max(ses.amplitude[keep])) * 1.25 if keep.any() else 1.0
        ax.set_ylim(0, top)
        ax.set_xlim(0, float(ses.freq_hz[-1]))
        _marks(ax, [m for m in marks if m[0] <= ses.freq_hz[-1]], top)
        band = c.kurtogram.best
        ax.set_xlabel("frequency, Hz")
        ax.set_ylabel("squared envelope, (m/s²)²")
        ax.set_title(f"Squared envelope spectrum, {c.name}, band {band.f_lo_hz:.0f}-{band.f_hi_hz:.0f} Hz", loc="left")
        return _svg(fig)


def _focus(rc: ReadingContext, reasoning) -> tuple[ChannelContext, str, str | None]:
    """Channel, shaft and bearing the plots look at: those of the top hypothesis's strongest evidence."""
    by_name = {c.name: c for c in rc.channels}
    bearings = {b.id: b for b in rc.machine.bearings}
    top = reasoning.top if not reasoning.withheld else None
    channel = bearing = None
    if top is not None:
        seen = [f for firing in top.support for _, f in firing.facts if f.get("channel") in by_name]
        # a channel on the component itself first, else the first one the evidence names
        at = [f for f in seen if top.component in (f.get("location"), f.get("location_shaft"))]
        if at or seen:
            channel = by_name[(at or seen)[0]["channel"]]
        bearing = top.component if top.component in bearings else None
    if channel is None:
        channel = max(rc.channels, key=lambda c: c.levels.velocity_rms_mm_s)
    if bearing is not None:
        shaft = bearings[bearing].shaft
    elif top is not None and top.component in rc.speeds_hz:
        shaft = top.component
    elif channel.point is not None:
        shaft = channel.point.shaft
    else:
        shaft = rc.speed_shaft
    return channel, shaft, bearing


def figures_for(rc: ReadingContext, reasoning) -> dict[str, str]:
    """The report's plots, by title: waveform, revolutions, spectrum, squared envelope."""
    if not rc.channels:
        return {}
    c, shaft, bearing = _focus(rc, reasoning)
    fr = rc.speeds_hz[shaft]
    out = {"Waveform": waveform(c, min(rc.duration_s, max(0.1, 6 / fr)))}
    revs = revolutions(c, shaft, fr)
    if revs:
        out["Revolutions"] = revs
    highest = max((f.frequency_hz for f in rc.forcing if f.family != "bearing"), default=10 * fr)
    fmax = min(c.velocity.fmax_hz, max(12 * fr, 1.3 * highest))
    strongest = sorted((f for f in rc.forcing if f.frequency_hz <= fmax and f.name not in ("slip", "pole pass", "HTF")),
                       key=lambda f: (f.family == "bearing", f.frequency_hz))
    marks = [(f.frequency_hz, f"{f.name} {f.component}" if f.family != "shaft" else f"1X {f.component}")
             for f in strongest]
    out["Spectrum"] = spectrum(c, fmax, marks)
    chosen = [bearing] if bearing else [b.id for b in rc.machine.bearings if b.shaft == shaft]
    env_marks = []
    for b in chosen:
        for defect in ("BPFO", "BPFI", "BSF", "FTF"):
            label = "2xBSF" if defect == "BSF" else defect
            env_marks.append((rc.rates.bearing(b).impact_rate_hz(defect), f"{label} {b}"))
    env = envelope(c, sorted(env_marks))
    if env:
        out["Squared envelope spectrum"] = env
    return out
