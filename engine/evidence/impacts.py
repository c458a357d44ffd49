"""Impacts in the waveform: repetition rate and regularity, and once-per-revolution events."""

from __future__ import annotations

import numpy as np
from scipy import signal, stats

from ..analysis import cut_revolutions
from .context import ReadingContext

MIN_PERIODICITY = 0.1     # a squared-envelope autocorrelation peak weaker than this is no train
MATCH_TOLERANCE = 0.03    # rate within 3 % of a forcing frequency (1-2 % slip plus resolution)
DETECTION_MADS = 8.0      # impacts: squared envelope above median + 8 MAD
MIN_REVOLUTIONS = 10
TSA_MAX_SAMPLES_PER_REV = 4096
REPEAT_WINDOW = 0.1       # +-36 degrees


def _candidates(rc: ReadingContext):
    """Rates an impact train could match: bearing defect rates (the ball rate as 2 x BSF) and 1X."""
    out = []
    for (bearing, defect), hz in rc.defect_rates_hz().items():
        if defect == "FTF":
            continue
        out.append((defect, bearing, 2 * hz if defect == "BSF" else hz))
    for shaft, hz in rc.speeds_hz.items():
        out.append(("1X", shaft, hz))
    return out


def impact_train(rc: ReadingContext) -> list[dict]:
    """Period of the squared envelope (autocorrelation), impacts detected, and what the rate matches."""
    candidates = _candidates(rc)
    rates = [hz for _, _, hz in candidates]
    out = []
    for c in rc.channels:
        if c.envelope_signal is None:
            continue
        env = c.envelope_signal - c.envelope_signal.mean()
        fs = c.envelope_fs_hz
        n = len(env)
        spectrum = np.fft.rfft(env, 2 * n)
        acf = np.fft.irfft(np.abs(spectrum) ** 2)[:n]
        if acf[0] <= 0:
            continue
        acf = acf / acf[0] / (1 - np.arange(n) / n)  # unbiased, normalised
        lo = max(2, int(fs / (1.3 * max(rates))))
        hi = min(n // 4, int(fs / (0.7 * min(rates))))
        if hi <= lo + 2:
            continue
        lags, props = signal.find_peaks(acf[lo:hi], height=MIN_PERIODICITY)
        if len(lags) == 0:
            continue
        heights = props["peak_heights"]
        first = int(lags[np.flatnonzero(heights >= 0.5 * heights.max())[0]]) + lo
        # refine the lag by a parabola through the peak and its neighbours
        y0, y1, y2 = acf[first - 1], acf[first], acf[first + 1]
        shift = 0.5 * (y0 - y2) / (y0 - 2 * y1 + y2) if (y0 - 2 * y1 + y2) != 0 else 0.0
        period_s = (first + shift) / fs
        rate = 1.0 / period_s
        mad = stats.median_abs_deviation(c.envelope_signal)
        threshold = np.median(c.envelope_signal) + DETECTION_MADS * max(mad, 1e-300)
        idx, _ = signal.find_peaks(c.envelope_signal, height=threshold, distance=max(1, int(0.5 * period_s * fs)))
        intervals = np.diff(idx) / fs
        near = intervals[(intervals > 0.7 * period_s) & (intervals < 1.3 * period_s)]
        cv = float(np.std(near) / np.mean(near)) if len(near) >= 3 else 1.0
        name, component, err = "none", "none", 0.0
        best = min(candidates, key=lambda cand: abs(rate / cand[2] - 1))
        if abs(rate / best[2] - 1) <= MATCH_TOLERANCE:
            name, component, err = best[0], best[1], (rate / best[2] - 1) * 100
        shaft = c.point.shaft if c.point else rc.speed_shaft
        out.append(c.base() | {
            "kind": "impact_train", "rate_hz": rate, "spacing_ms": period_s * 1e3,
            "periodicity": float(acf[first]), "count": int(len(idx)), "regularity_cv": cv,
            "impacts_per_rev": rate / rc.speeds_hz[shaft],
            "matched_name": name, "matched_component": component, "match_error_pct": err,
        })
    return out


def _difference_signal(tsa: np.ndarray, mesh_orders: list[int]) -> np.ndarray:
    """The TSA less its low shaft orders (0-3) and the mesh harmonics with their first sidebands."""
    spec = np.fft.rfft(tsa)
    drop = {0, 1, 2, 3}
    for z in mesh_orders:
        for k in range(1, len(spec) // z + 1):
            drop |= {k * z - 1, k * z, k * z + 1}
    keep = np.ones(len(spec), dtype=bool)
    keep[[o for o in drop if o < len(spec)]] = False
    return np.fft.irfft(spec * keep, len(tsa))


def once_per_rev_event(rc: ReadingContext) -> list[dict]:
    """Per shaft: the TSA's difference signal (FM4, Stewart 1977) and where its spike sits."""
    out = []
    duration = rc.reading.duration_s
    for c in rc.channels:
        for shaft, fr in rc.speeds_hz.items():
            if duration * fr < MIN_REVOLUTIONS or c.fs_hz / fr < 64:
                continue
            spr = int(min(TSA_MAX_SAMPLES_PER_REV, 2 ** np.ceil(np.log2(c.fs_hz / fr))))
            revs = cut_revolutions(c.accel, c.fs_hz, speed_hz=fr, samples_per_rev=spr)
            mesh_orders = [g.driving_teeth if g.driving_shaft == shaft else g.driven_teeth
                           for g in rc.machine.gears if shaft in (g.driving_shaft, g.driven_shaft)]
            diff = _difference_signal(revs.average(), mesh_orders)
            rms = float(np.sqrt(np.mean(diff ** 2)))
            if rms == 0:
                continue
            peak_at = int(np.argmax(np.abs(diff)))
            per_rev = np.array([_difference_signal(r, mesh_orders) for r in revs.samples])
            maxima = np.argmax(np.abs(per_rev), axis=1)
            distance = np.abs(((maxima - peak_at) / spr + 0.5) % 1.0 - 0.5)
            out.append(c.base() | {
                "kind": "once_per_rev_event", "shaft": shaft, "revolutions": revs.count,
                "fm4": float(stats.kurtosis(diff, fisher=False)),
                "peak_to_rms": float(np.max(np.abs(diff)) / rms),
                "peak_angle_deg": 360.0 * peak_at / spr,
                "repeat_fraction": float(np.mean(distance <= REPEAT_WINDOW)),
            })
    return out
