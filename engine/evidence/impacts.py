"""Impacts in the waveform: repetition rate and regularity, and once-per-revolution events."""

from __future__ import annotations

from ..analysis import Analysis

MATCH_TOLERANCE = 0.03    # rate within 3 % of a forcing frequency (1-2 % slip plus resolution)


def _candidates(rc: Analysis):
    """Rates an impact train could match: bearing defect rates (the ball rate as 2 x BSF) and 1X."""
    out = [(defect, b.bearing, b.impact_rate_hz(defect)) for b in rc.rates.bearings
           for defect in ("BPFO", "BPFI", "BSF")]
    return out + [("1X", shaft, hz) for shaft, hz in rc.speeds_hz.items()]


def impact_train(rc: Analysis) -> list[dict]:
    """The impact train the analysis found in each channel's squared envelope, and what its rate matches."""
    candidates = _candidates(rc)
    out = []
    for c in rc.channels:
        train = c.impacts
        if train is None:
            continue
        rate = train.rate_hz
        name, component, err = "none", "none", 0.0
        best = min(candidates, key=lambda cand: abs(rate / cand[2] - 1))
        if abs(rate / best[2] - 1) <= MATCH_TOLERANCE:
            name, component, err = best[0], best[1], (rate / best[2] - 1) * 100
        shaft = c.point.shaft if c.point else rc.speed_shaft
        out.append(c.base() | {
            "kind": "impact_train", "rate_hz": rate, "spacing_ms": train.spacing_s * 1e3,
            "periodicity": train.periodicity, "count": train.count, "regularity_cv": train.regularity_cv,
            "impacts_per_rev": rate / rc.speeds_hz[shaft],
            "matched_name": name, "matched_component": component, "match_error_pct": err,
        })
    return out


def once_per_rev_event(rc: Analysis) -> list[dict]:
    """Per shaft: the TSA difference signal (FM4, Stewart 1977) and where its spike sits."""
    out = []
    for c in rc.channels:
        for shaft, events in c.synchronous.items():
            out.append(c.base() | {
                "kind": "once_per_rev_event", "shaft": shaft, "revolutions": events.revolutions,
                "fm4": events.fm4, "peak_to_rms": events.peak_to_rms, "peak_angle_deg": events.peak_angle_deg,
                "repeat_fraction": events.repeat_fraction,
            })
    return out
