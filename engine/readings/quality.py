"""Data-quality gates: what is wrong with a signal before anyone trusts it.

Each gate looks at one channel and returns ``QualityIssue`` values. They never
raise: a clipped or drifting reading is still a reading, and the report must
say why its conclusions are weak. Thresholds are common practice for
AC-coupled accelerometer data and are stated beside each gate.
"""

from __future__ import annotations

import numpy as np

from .model import Channel, QualityIssue

CLIP_FULL_SCALE_FRACTION = 0.999  # a sample at >= 99.9 % of the recorder's full scale is clipped
FLAT_TOP_MIN_RUN = 3              # equal consecutive samples at the extreme: flat-topped
DC_OFFSET_RATIO = 0.25            # |mean| above a quarter of the AC RMS: sensor bias suspect
DRIFT_SEGMENTS = 16
DRIFT_RATIO = 1.0                 # segment means spreading over one AC RMS: slow drift
DROPOUT_MIN_S = 0.005             # 5 ms of identical samples mid-signal: a dropout


def _runs(mask: np.ndarray) -> list[tuple[int, int]]:
    """Start and length of each run of True in ``mask``."""
    if not mask.any():
        return []
    padded = np.concatenate(([False], mask, [False]))
    edges = np.flatnonzero(np.diff(padded.astype(np.int8)))
    return [(int(a), int(b - a)) for a, b in zip(edges[::2], edges[1::2])]


def check_channel(ch: Channel, fs_hz: float) -> list[QualityIssue]:
    """Run every gate on one channel."""
    x = ch.samples
    finite = np.isfinite(x)
    n_bad = int(x.size - finite.sum())
    if n_bad:
        return [QualityIssue("nonfinite", ch.name,
                             f"{n_bad} NaN or infinite samples; the channel cannot be analysed",
                             float(n_bad), blocking=True)]
    ac = x - x.mean()
    ac_rms = float(np.sqrt(np.mean(ac ** 2)))
    if np.ptp(x) == 0.0:
        return [QualityIssue("dead", ch.name, "the signal is constant: sensor or cable dead",
                             0.0, blocking=True)]
    issues = []
    issues += _clipping(ch, x)
    mean = float(x.mean())
    if abs(mean) > DC_OFFSET_RATIO * ac_rms:
        issues.append(QualityIssue(
            "dc_offset", ch.name,
            f"mean is {abs(mean) / ac_rms:.2f} x the AC RMS: sensor bias or a DC-coupled input", abs(mean) / ac_rms))
    segments = np.array_split(ac, DRIFT_SEGMENTS)
    means = np.array([s.mean() for s in segments])
    spread = float((means.max() - means.min()) / ac_rms)
    if spread > DRIFT_RATIO:
        issues.append(QualityIssue(
            "drift", ch.name,
            f"slow drift: segment means spread over {spread:.2f} x the AC RMS (settling sensor or thermal drift)", spread))
    issues += _dropouts(ch, x, fs_hz)
    return issues


def _clipping(ch: Channel, x: np.ndarray) -> list[QualityIssue]:
    if ch.full_scale_si:
        n = int(np.count_nonzero(np.abs(x) >= CLIP_FULL_SCALE_FRACTION * ch.full_scale_si))
        if n:
            return [QualityIssue("clipping", ch.name,
                                 f"{n} samples at the recorder's full scale: clipped", float(n))]
        return []
    top, bottom = x.max(), x.min()
    runs = [r for r in _runs(x == top) + _runs(x == bottom) if r[1] >= FLAT_TOP_MIN_RUN]
    if len(runs) >= 2:
        n = sum(length for _, length in runs)
        return [QualityIssue("clipping", ch.name,
                             f"flat-topped: {len(runs)} runs of equal samples at the signal's extremes ({n} samples)",
                             float(n))]
    return []


def _dropouts(ch: Channel, x: np.ndarray, fs_hz: float) -> list[QualityIssue]:
    min_run = max(16, int(DROPOUT_MIN_S * fs_hz))
    same = np.concatenate(([False], np.diff(x) == 0))
    runs = [(a - 1, n + 1) for a, n in _runs(same) if n + 1 >= min_run]
    top, bottom = x.max(), x.min()
    runs = [r for r in runs if x[r[0]] not in (top, bottom)]
    if not runs:
        return []
    longest = max(n for _, n in runs) / fs_hz
    return [QualityIssue("dropout", ch.name,
                         f"{len(runs)} dropouts (signal held constant), longest {longest * 1e3:.1f} ms",
                         float(len(runs)))]


def check_resolution(duration_s: float, channel: str, resolution_hz: float) -> list[QualityIssue]:
    """A record of ``duration_s`` cannot resolve finer than 1/duration_s."""
    if duration_s * resolution_hz < 1.0:
        return [QualityIssue(
            "too_short", channel,
            f"record of {duration_s:.3f} s resolves {1 / duration_s:.3f} Hz at best; "
            f"{resolution_hz:.3f} Hz needs at least {1 / resolution_hz:.2f} s",
            duration_s)]
    return []
