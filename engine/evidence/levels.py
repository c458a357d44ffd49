"""Overall levels, waveform statistics and direction ratios."""

from __future__ import annotations

from collections import defaultdict

import numpy as np

from ..analysis import Analysis
from ..common.units import STANDARD_GRAVITY_M_S2
from ..readings.quality import same_scale
from .matching import find_line
from .signs import SIGNS, match_fit, spectrum_line, waveform


def overall(rc: Analysis) -> list[dict]:
    """One ``overall`` fact per channel: ISO band velocity, acceleration, crest factor, kurtosis."""
    out = []
    for c in rc.channels:
        lv = c.levels
        out.append(c.base() | {
            "kind": "overall",
            "velocity_rms_mm_s": lv.velocity_rms_mm_s,
            "velocity_band_lo_hz": lv.velocity_band_hz[0], "velocity_band_hi_hz": lv.velocity_band_hz[1],
            "accel_rms_g": lv.acceleration_rms_g, "accel_peak_g": lv.acceleration_peak_g,
            "crest_factor": lv.crest_factor, "kurtosis": lv.kurtosis, "skewness": lv.skewness,
            "band_truncated": lv.band_truncated,
            "rms_frequency_hz": _rms_frequency_hz(lv.acceleration_rms_g, lv.velocity_rms_mm_s),
            **_ring_band(c),
            SIGNS: {waveform(c.name): 1.0},
        })
    return out


def _ring_band(c) -> dict:
    """The kurtogram's band of a channel (where the impacts ring), its acceleration RMS in g and its spectral
    kurtosis; zeros where the machine has no bearing rate to choose a band for."""
    rms = c.ring_band_rms_m_s2
    if rms is None:
        return {"ring_band_lo_hz": 0.0, "ring_band_hi_hz": 0.0, "ring_band_g": 0.0, "ring_band_kurtosis": 0.0}
    view = c.envelopes[0]
    return {"ring_band_lo_hz": view.band_hz[0], "ring_band_hi_hz": view.band_hz[1],
            "ring_band_g": rms / STANDARD_GRAVITY_M_S2, "ring_band_kurtosis": view.band_kurtosis}


def _rms_frequency_hz(accel_rms_g: float | None, velocity_rms_mm_s: float | None) -> float:
    """The frequency of one tone with both levels: acceleration RMS over 2 pi x the ISO band's velocity RMS.

    Low (tens of Hz) when the running-speed lines carry the vibration, high (kHz) when a broadband
    floor in the band where bearings ring does; no scale changes it. 0 when there is no velocity."""
    if not velocity_rms_mm_s or velocity_rms_mm_s <= 0 or accel_rms_g is None:
        return 0.0
    return float(accel_rms_g * STANDARD_GRAVITY_M_S2 * 1e3 / (2 * np.pi * velocity_rms_mm_s))


def _order_amplitude(c, speed_hz: float, order: int, tol: float) -> float:
    peak = find_line(c.velocity, order * speed_hz, tol)
    return peak.amplitude if peak else 0.0


def direction_ratio(rc: Analysis) -> list[dict]:
    """Axial against radial, horizontal against vertical, where one location has several channels."""
    by_location: defaultdict[str, dict] = defaultdict(dict)
    for c in rc.channels:
        if c.point is not None:
            by_location[c.point.at].setdefault(c.point.direction, c)
    out = []
    tol = 0.005 if rc.speed_estimate.refined else 0.02
    for location, dirs in by_location.items():
        radial = [dirs[d] for d in ("horizontal", "vertical") if d in dirs]
        if len(dirs) < 2 or not radial:
            continue
        if not same_scale(rc.quality, [c.name for c in dirs.values()]):
            # the channels' scales disagree (one doubted by the quality gates): no ratio between them is measured
            out.append({"kind": "direction_ratio", "location": location, "location_shaft": radial[0].point.shaft,
                        "channels": len(dirs), "axial_to_radial": None, "axial_1x_to_radial": None,
                        "axial_2x_to_radial": None, "horizontal_to_vertical": None})
            continue
        shaft = radial[0].point.shaft
        fr = rc.speeds_hz[shaft]
        fact = {"kind": "direction_ratio", "location": location, "location_shaft": shaft, "channels": len(dirs),
                "axial_to_radial": 0.0, "axial_1x_to_radial": 0.0, "axial_2x_to_radial": 0.0,
                "horizontal_to_vertical": 0.0}
        big = max(radial, key=lambda c: c.levels.velocity_rms_mm_s)
        if "axial" in dirs:
            ax = dirs["axial"]
            fact["axial_to_radial"] = ax.levels.velocity_rms_mm_s / big.levels.velocity_rms_mm_s
            signs = {}
            for order, key in ((1, "axial_1x_to_radial"), (2, "axial_2x_to_radial")):
                rad = max(_order_amplitude(c, fr, order, tol) for c in radial)
                line = find_line(ax.velocity, order * fr, tol)
                fact[key] = (line.amplitude if line else 0.0) / rad if rad > 0 else 0.0
                if line is not None:      # the axial lines are what an axial ratio rests on
                    signs[spectrum_line(ax.name, line.line)] = match_fit(line.freq_hz / (order * fr) - 1, tol)
            fact[SIGNS] = signs
        if "horizontal" in dirs and "vertical" in dirs:
            fact["horizontal_to_vertical"] = (dirs["horizontal"].levels.velocity_rms_mm_s
                                              / dirs["vertical"].levels.velocity_rms_mm_s)
        out.append(fact)
    return out

