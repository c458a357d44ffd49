"""The plan's figures: one simulated impact, and the samples each setting takes of it.

For a gear tooth impact and a bearing impact, the simulated physical signal
is drawn as a line and each setting's recorded samples (after its anti-alias
filter) as dots, so the reader sees what a slow sample rate or a low Fmax
leaves of an impact.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from ..common.units import STANDARD_GRAVITY_M_S2 as G
from ..machine.kinematics import mesh_rates
from ..report import svg
from .proof import PAD_S, physical_rate, record, simulate_target

COLORS = ("#1f5fa8", "#c2571a", "#2f7d32")   # one per setting, in order
SIGNAL = "#9a9a9a"


def _window_s(machine, target, speeds) -> tuple[float, float]:
    """Time before and after an impact to show, s."""
    if target.purpose == "gear":
        g = next(gg for gg in machine.gears if gg.id == target.component)
        mesh_period = 1 / mesh_rates(g, speeds).gmf_hz
        return 2 * mesh_period, 4 * mesh_period
    return 0.5e-3, 4e-3


def impact_figure(machine, target, point, settings: dict, policy, speed_rpm=None, title: str = "") -> tuple[str, list]:
    """An SVG of one impact of ``target`` at ``point`` with the samples of each of ``settings``,
    and the legend as (color, text) pairs."""
    speeds = machine.speeds_at(speed_rpm)
    before, after = _window_s(machine, target, speeds)
    fs = physical_rate(list(settings.values()))
    length = 0.3 + 2 * PAD_S
    sim = simulate_target(machine, target, point, length, fs, policy, speed_rpm)
    x = sim.channels[point.id]
    times = [t for t in sim.extra.get("impact_times_s", ()) if t >= PAD_S + before and t + after <= length - PAD_S]
    t0 = times[0] if times else length / 2
    lo, hi = t0 - before, t0 + after
    keep = slice(int(lo * fs), int(hi * fs) + 1)
    t_phys = np.arange(len(x))[keep] / fs
    plot = svg.Plot(title or f"One impact of {target.label} at {point.id}", "time from the impact, ms",
                    "acceleration, g", height=240)
    plot.series.append(svg.Series((t_phys - t0) * 1e3, x[keep] / G, color=SIGNAL, width=0.7))
    legend = [(SIGNAL, f"the simulated signal ({fs:.0f} Hz)")]
    for (label, s), color in zip(settings.items(), COLORS):
        span = replace(s, duration_s=length - 2 * PAD_S)
        y, rate = record(x, fs, span)
        t_rec = PAD_S + np.arange(len(y)) / rate
        inside = (t_rec >= lo) & (t_rec <= hi)
        plot.series.append(svg.Series((t_rec[inside] - t0) * 1e3, y[inside] / G, color=color, width=1.0,
                                      points=True))
        legend.append((color, f"{label}: {s.sample_rate_hz:g} Hz, Fmax {s.fmax_hz:g} Hz, "
                              f"{int(inside.sum())} samples in this window"))
    return svg.render(plot), legend
