"""Plain SVG line plots for the reports: axes, ticks, traces, marked frequencies, level lines.

The report's figures are simple: one or a few traces against a linear axis,
vertical marks at forcing frequencies, horizontal lines at limits. Drawing
them directly as SVG keeps a report self-contained, quick to make (no plotting
library to import) and sharp in print. Long traces are reduced to the
minimum and maximum of each pixel column, so a one-sample impact still shows.
Every text is XML-escaped here, whatever it holds.
"""

from __future__ import annotations

import math
import zlib
from dataclasses import dataclass, field
from xml.sax.saxutils import escape, quoteattr

import numpy as np

WIDTH = 760           # user units; the SVG scales to the page width
MARGIN_LEFT = 64
MARGIN_RIGHT = 16
MARGIN_TOP = 26
MARGIN_BOTTOM = 40
FONT = "font-family:Helvetica,Arial,sans-serif"
INK = "#1a1a1a"
GRID = "#dddddd"
MARK = "#8a2d2a"
MUTED = "#777777"
LABEL_ROWS = 4        # rows of staggered mark labels before labels are thinned
CHAR_PX = 5.6         # width of one character of a mark label (9.5 px font), for placing labels
TITLE_CHAR_PX = 6.8   # width of one character of the title (12 px bold), for wrapping it
LEGEND_CHAR_PX = 5.8  # width of one character of a legend entry (10 px font)
LEGEND_ROW = 14       # height of one row of the legend


@dataclass(frozen=True)
class Series:
    """One trace: x and y in the axes' units, and how it is drawn."""

    x: np.ndarray
    y: np.ndarray
    color: str = INK
    dashed: bool = False
    width: float = 0.8
    points: bool = False        # draw a dot at each point (short series such as a trend)
    fill_to: float | None = None   # fill the page colour down to this y, hiding what lies behind (a waterfall)
    label: str | None = None    # what the trace is, in words, for the legend (None: the plot's only trace)


@dataclass(frozen=True)
class Mark:
    """A vertical line at ``x`` with a short label (a forcing frequency, say)."""

    x: float
    label: str
    strong: bool = False        # a matched line: drawn solid, its label kept first
    group: str | None = None    # the source it belongs to, in words, for the legend ("bearing rates")
    color: str = MARK
    rank: int = 0               # labels of a lower rank find their row first (after the strong ones)


@dataclass(frozen=True)
class Level:
    """A horizontal line at ``y`` with a label (a zone boundary, an alarm limit)."""

    y: float
    label: str


@dataclass
class Plot:
    """One line plot: titles, traces, marks, level lines, optional axis limits, height in SVG user units."""

    title: str
    xlabel: str
    ylabel: str
    series: list[Series] = field(default_factory=list)
    marks: list[Mark] = field(default_factory=list)
    levels: list[Level] = field(default_factory=list)
    xlim: tuple[float, float] | None = None
    ylim: tuple[float, float] | None = None
    height: int = 230
    ytick_labels: list[tuple[float, str]] | None = None   # replaces the numeric y ticks


def nice_ticks(lo: float, hi: float, target: int = 6) -> list[float]:
    """Round tick values (1, 2 or 5 times a power of ten) covering [lo, hi]."""
    if not (math.isfinite(lo) and math.isfinite(hi)) or hi <= lo:
        return [lo]
    raw = (hi - lo) / max(target, 1)
    power = 10 ** math.floor(math.log10(raw))
    step = next(m * power for m in (1, 2, 2.5, 5, 10) if m * power >= raw)
    first = math.ceil(lo / step - 1e-9) * step
    ticks = []
    k = 0
    while first + k * step <= hi + 1e-9 * step:
        ticks.append(first + k * step)
        k += 1
    return ticks


def tick_text(value: float, step: float) -> str:
    """A tick label with as many decimals as the step needs, no exponent offset."""
    if value == 0:
        return "0"
    decimals = next((d for d in range(10) if abs(round(step, d) - step) <= 1e-9 * step), 9) if step > 0 else 0
    if step >= 1 and abs(value) >= 1e5:
        return f"{value:.3g}"
    return f"{value:.{decimals}f}"


def reduce_for_drawing(x: np.ndarray, y: np.ndarray, columns: int) -> tuple[np.ndarray, np.ndarray]:
    """At most two points per pixel column: the column's minimum and maximum, in x order.

    Keeps every impact and every peak visible while a trace of a million
    samples becomes a path of a few thousand points.
    """
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    if len(x) <= 2 * columns:
        return x, y
    edges = np.linspace(0, len(x), columns + 1).astype(int)
    starts = edges[:-1]
    lows = np.minimum.reduceat(y, starts)
    highs = np.maximum.reduceat(y, starts)
    idx_low = np.array([s + int(np.argmin(y[s:e])) for s, e in zip(starts, edges[1:])])
    idx_high = np.array([s + int(np.argmax(y[s:e])) for s, e in zip(starts, edges[1:])])
    first_low = idx_low <= idx_high
    xs = np.empty(2 * columns)
    ys = np.empty(2 * columns)
    xs[0::2] = np.where(first_low, x[idx_low], x[idx_high])
    ys[0::2] = np.where(first_low, lows, highs)
    xs[1::2] = np.where(first_low, x[idx_high], x[idx_low])
    ys[1::2] = np.where(first_low, highs, lows)
    return xs, ys


def _limits(values: list[np.ndarray], given, pad: float) -> tuple[float, float]:
    if given is not None:
        return float(given[0]), float(given[1])
    finite = [v[np.isfinite(v)] for v in values if len(v)]
    finite = [v for v in finite if len(v)]
    if not finite:
        return 0.0, 1.0
    lo = min(float(v.min()) for v in finite)
    hi = max(float(v.max()) for v in finite)
    if hi == lo:
        return lo - 1.0, hi + 1.0
    span = hi - lo
    return lo - pad * span, hi + pad * span


def _label_rows(marks: list[Mark], to_px, char_px: float, right_edge: float = math.inf
                ) -> list[tuple[Mark, int, bool]]:
    """Give each label a row so that no two labels in a row overlap; drop what does not fit.

    Strong marks (matched lines) are placed first, then the others by rank,
    left to right; a label that would run past ``right_edge`` is written to the left
    of its line instead (the third value, True), so no label is cut off. A
    label that finds no free row is left out (its line still shows, and its
    group is in the legend).
    """
    rows: list[list[tuple[float, float]]] = [[] for _ in range(LABEL_ROWS)]
    placed = []
    for m in sorted(marks, key=lambda m: (not m.strong, m.rank, m.x)):
        width = char_px * len(m.label)
        left = to_px(m.x) + 2
        flipped = left + width > right_edge
        if flipped:
            left = to_px(m.x) - 2 - width
        right = left + width
        for r in range(LABEL_ROWS):
            if all(right + 4 < a or left > b + 4 for a, b in rows[r]):
                rows[r].append((left, right))
                placed.append((m, r, flipped))
                break
    return placed


def wrap(text: str, chars: int) -> list[str]:
    """``text`` in lines of at most ``chars`` characters, broken between words (a longer word stands alone)."""
    lines: list[str] = []
    for word in text.split():
        if lines and len(lines[-1]) + 1 + len(word) <= chars:
            lines[-1] += " " + word
        else:
            lines.append(word)
    return lines or [""]


def legend_entries(plot: Plot) -> list[tuple[str, str, bool, str]]:
    """(label, colour, dashed, shape) of each legend entry: every labelled trace ("trace"), then every
    group of marks ("mark"), in the order they first appear."""
    out: list[tuple[str, str, bool, str]] = []
    for s in plot.series:
        if s.label and not any(e[0] == s.label for e in out):
            out.append((s.label, s.color, s.dashed, "trace"))
    for m in plot.marks:
        if m.group and not any(e[0] == m.group for e in out):
            solid = any(x.strong for x in plot.marks if x.group == m.group)   # drawn solid if any of them is
            out.append((m.group, m.color, not solid, "mark"))
    return out


def _legend_rows(entries, x0: float, x1: float) -> list[list[tuple[float, tuple]]]:
    """The legend entries laid out left to right in rows that fit between ``x0`` and ``x1``."""
    rows: list[list[tuple[float, tuple]]] = []
    x = math.inf
    for e in entries:
        w = 26 + LEGEND_CHAR_PX * len(e[0]) + 14
        if x + w > x1:
            rows.append([])
            x = x0
        rows[-1].append((x, e))
        x += w
    return rows


def render(plot: Plot, width: int = WIDTH) -> str:
    """The plot as an SVG element that scales to the width of its container.

    A title too long for the width is wrapped; a legend under the axes names
    every labelled trace and every group of marks in words.
    """
    x0, x1 = MARGIN_LEFT, width - MARGIN_RIGHT
    title_lines = wrap(plot.title, int((width - x0) / TITLE_CHAR_PX))
    top = MARGIN_TOP + 14 * (len(title_lines) - 1)
    legend = _legend_rows(legend_entries(plot), x0, x1)
    h = plot.height + 14 * (len(title_lines) - 1)
    total_h = h + LEGEND_ROW * len(legend) + (4 if legend else 0)
    label_band = 12 * min(LABEL_ROWS, max(1, len(plot.marks))) if plot.marks else 0
    y0, y1 = h - MARGIN_BOTTOM, top + label_band
    xs = [np.asarray(s.x, dtype=float) for s in plot.series]
    ys = [np.asarray(s.y, dtype=float) for s in plot.series]
    xlo, xhi = _limits(xs, plot.xlim, 0.0)
    level_values = [np.array([lv.y]) for lv in plot.levels]
    ylo, yhi = _limits(ys + level_values, plot.ylim, 0.05)

    def px(v):
        return x0 + (v - xlo) / (xhi - xlo) * (x1 - x0)

    def py(v):
        return y0 - (v - ylo) / (yhi - ylo) * (y0 - y1)

    out = [f'<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 {width} {total_h}" width="100%" '
           f'preserveAspectRatio="xMidYMid meet" role="img" aria-label={quoteattr(plot.title)} '
           f'style="{FONT};font-size:11px">']
    for i, line in enumerate(title_lines):
        out.append(f'<text x="{x0}" y="{14 + 14 * i}" font-size="12" font-weight="bold" fill="{INK}">'
                   f'{escape(line)}</text>')
    # grid and ticks
    if plot.ytick_labels is None:
        yt = nice_ticks(ylo, yhi)
        ystep = yt[1] - yt[0] if len(yt) > 1 else 1.0
        ylabels = [(v, tick_text(v, ystep)) for v in yt]
    else:
        ylabels = [(v, t) for v, t in plot.ytick_labels if ylo <= v <= yhi]
    for v, text in ylabels:
        y = py(v)
        out.append(f'<line x1="{x0}" y1="{y:.1f}" x2="{x1}" y2="{y:.1f}" stroke="{GRID}" stroke-width="0.6"/>')
        out.append(f'<text x="{x0 - 4}" y="{y + 3.5:.1f}" text-anchor="end" fill="{INK}">{escape(text)}</text>')
    xt = nice_ticks(xlo, xhi, target=8)
    xstep = xt[1] - xt[0] if len(xt) > 1 else 1.0
    for v in xt:
        x = px(v)
        out.append(f'<line x1="{x:.1f}" y1="{y0}" x2="{x:.1f}" y2="{y1}" stroke="{GRID}" stroke-width="0.6"/>')
        out.append(f'<text x="{x:.1f}" y="{y0 + 14}" text-anchor="middle" fill="{INK}">'
                   f'{escape(tick_text(v, xstep))}</text>')
    out.append(f'<rect x="{x0}" y="{y1}" width="{x1 - x0}" height="{y0 - y1}" fill="none" stroke="#444444" '
               'stroke-width="0.8"/>')
    out.append(f'<text x="{(x0 + x1) / 2:.1f}" y="{h - 6}" text-anchor="middle" fill="{INK}">'
               f'{escape(plot.xlabel)}</text>')
    out.append(f'<text transform="translate(12,{(y0 + y1) / 2:.1f}) rotate(-90)" text-anchor="middle" '
               f'fill="{INK}">{escape(plot.ylabel)}</text>')
    # clip traces to the axes
    clip = f"c{zlib.crc32(f'{plot.title}|{width}|{h}|{len(plot.series)}'.encode()):08x}"
    out.append(f'<clipPath id="{clip}"><rect x="{x0}" y="{y1}" width="{x1 - x0}" height="{y0 - y1}"/></clipPath>')
    for lv in plot.levels:
        if ylo <= lv.y <= yhi:
            y = py(lv.y)
            out.append(f'<line x1="{x0}" y1="{y:.1f}" x2="{x1}" y2="{y:.1f}" stroke="{MUTED}" '
                       f'stroke-width="0.8" stroke-dasharray="5 3"/>')
            below = y - 14 < y1          # no room above the line inside the axes: write it below
            out.append(f'<text x="{x1 - 3}" y="{y + 11 if below else y - 3:.1f}" text-anchor="end" '
                       f'font-size="10" fill="{MUTED}">{escape(lv.label)}</text>')
    marks = [m for m in plot.marks if xlo <= m.x <= xhi]
    for m in marks:
        x = px(m.x)
        dash = "" if m.strong else ' stroke-dasharray="3 2"'
        out.append(f'<line x1="{x:.1f}" y1="{y0}" x2="{x:.1f}" y2="{y1}" stroke="{escape(m.color)}" '
                   f'stroke-width="{0.9 if m.strong else 0.6}"{dash}><title>{escape(m.label)}</title></line>')
    for m, row, flipped in _label_rows(marks, px, CHAR_PX, right_edge=width - 2):
        anchor = f'{px(m.x) - 2:.1f}" text-anchor="end' if flipped else f"{px(m.x) + 2:.1f}"
        out.append(f'<text x="{anchor}" y="{top + 9 + 12 * row}" font-size="9.5" '
                   f'fill="{escape(m.color)}">{escape(m.label)}</text>')
    for s, x, y in zip(plot.series, xs, ys):
        keep = np.isfinite(x) & np.isfinite(y)
        x, y = reduce_for_drawing(x[keep], y[keep], int(x1 - x0))
        if len(x) == 0:
            continue
        path = " ".join(f"{px(a):.1f},{py(b):.1f}" for a, b in zip(x, y))
        if s.fill_to is not None:
            floor = py(s.fill_to)
            out.append(f'<polygon clip-path="url(#{clip})" fill="#ffffff" stroke="none" '
                       f'points="{px(x[0]):.1f},{floor:.1f} {path} {px(x[-1]):.1f},{floor:.1f}"/>')
        dash = ' stroke-dasharray="4 3"' if s.dashed else ""
        out.append(f'<polyline clip-path="url(#{clip})" fill="none" stroke="{escape(s.color)}" '
                   f'stroke-width="{s.width}"{dash} stroke-linejoin="round" points="{path}"/>')
        if s.points:
            out += [f'<circle cx="{px(a):.1f}" cy="{py(b):.1f}" r="2" fill="{escape(s.color)}"/>' for a, b in zip(x, y)]
    for r, entries in enumerate(legend):
        y = h + 4 + LEGEND_ROW * r + 7
        for x, (label, color, dashed, shape) in entries:
            dash = ' stroke-dasharray="4 3"' if dashed else ""
            if shape == "mark":
                out.append(f'<line x1="{x + 11:.1f}" y1="{y - 6:.1f}" x2="{x + 11:.1f}" y2="{y + 5:.1f}" '
                           f'stroke="{escape(color)}" stroke-width="1.2"{dash}/>')
            else:
                out.append(f'<line x1="{x:.1f}" y1="{y:.1f}" x2="{x + 22:.1f}" y2="{y:.1f}" '
                           f'stroke="{escape(color)}" stroke-width="1.4"{dash}/>')
            out.append(f'<text x="{x + 26:.1f}" y="{y + 3.5:.1f}" font-size="10" fill="{INK}">'
                       f'{escape(label)}</text>')
    out.append("</svg>")
    return "\n".join(out)
