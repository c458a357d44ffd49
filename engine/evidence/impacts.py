"""Impacts in the waveform: repetition rate and regularity, and once-per-revolution events."""

from __future__ import annotations

import numpy as np

from ..analysis import Analysis
from .matching import SLIP_TOLERANCE, TIE, clear_lines
from .signs import SIGNS, envelope_line, impacts, match_fit, turns, waveform_impacts

MATCH_TOLERANCE = 0.03    # rate within 3 % of a forcing frequency (1-2 % slip plus resolution)


def _candidates(rc: Analysis):
    """Rates an impact train could match: bearing defect rates (the ball rate as 2 x BSF) and 1X."""
    out = [(defect, b.bearing, b.impact_rate_hz(defect)) for b in rc.rates.bearings
           for defect in ("BPFO", "BPFI", "BSF")]
    return out + [("1X", shaft, hz) for shaft, hz in rc.speeds_hz.items()]


def _comb_signs(c, rate_hz: float) -> dict[str, float]:
    """The envelope lines a train of impacts at ``rate_hz`` accounts for: those near its harmonics.

    Impacts repeating at a rate put lines at its harmonics in the squared
    envelope spectrum, spread by whatever modulates them; a line within the
    slip tolerance of a harmonic is the train's, the fit falling with the
    distance (``signs.match_fit``). A bearing family whose lines these are
    shares them with whatever cause explains the impacts.
    """
    out: dict = {}
    for view in c.envelopes:
        lines, freq, _ = clear_lines(view.ses)
        order = np.maximum(np.rint(freq / rate_hz), 1)
        error = freq / (order * rate_hz) - 1
        near = np.abs(error) <= SLIP_TOLERANCE
        out |= {envelope_line(c.name, view.method, line): match_fit(e, SLIP_TOLERANCE)
                for line, e in zip(lines[near], error[near])}
    return out


def _best_matches(candidates, rate_hz: float, location: str | None) -> list:
    """The candidates ``rate_hz`` matches best: among rates of the same defect within ``TIE`` of the best
    match (two bearings of one model on a shaft have the same rates, and slip alone moves a rate that much),
    the bearing under the sensor, since a bearing's impacts are strongest at its own housing and weaken on the
    way to the others (common practice; Randall (2011), Vibration-based Condition Monitoring, Wiley, ch. 5);
    with none under the sensor, every bearing of that rate and defect, since the sensor cannot tell them
    apart (the envelope evidence breaks the same tie the same way, ``envelope._owners``)."""
    best = min(candidates, key=lambda cand: abs(rate_hz / cand[2] - 1))
    if best[0] == "1X":
        return [best]
    error = abs(rate_hz / best[2] - 1)
    close = [cand for cand in candidates if cand[0] == best[0] and abs(rate_hz / cand[2] - 1) <= error + TIE]
    mine = [cand for cand in close if cand[1] == location]
    if mine:
        return [min(mine, key=lambda cand: abs(rate_hz / cand[2] - 1))]
    return close


SUBMULTIPLES = (2, 3, 4)


def _slower_than(candidates, rate_hz: float) -> tuple[str, str, int]:
    """For a train that matches no forcing frequency: the bearing defect rate it repeats at 1/k of (k 2 to 4,
    within ``MATCH_TOLERANCE``; the closest), as (defect, bearing, k), or ("none", "none", 0). A family at k
    times an unexplained train's rate may be every k-th line of the train's comb (a sample rate or speed
    stated wrong, or a part the machine file lacks), not a defect of its own."""
    near = [(abs(k * rate_hz / hz - 1), name, component, k) for name, component, hz in candidates
            if name != "1X" for k in SUBMULTIPLES if abs(k * rate_hz / hz - 1) <= MATCH_TOLERANCE]
    if not near:
        return "none", "none", 0
    _, name, component, k = min(near)
    return name, component, k


MULTIPLES = (2, 3)


def _multiple_of(candidates, rate_hz: float) -> tuple[str, str, int]:
    """For a train that matches no forcing frequency: the bearing defect rate it repeats at k times (k 2 or 3,
    within ``MATCH_TOLERANCE``; the closest), as (defect, bearing, k), or ("none", "none", 0). The whole
    multiples the analysis reads a train faster than every rate at (``analysis.impacts.FRACTIONS``): a sample
    rate stated at k times its value, or a speed 1/k of the true one, puts a defect's impacts there."""
    near = [(abs(rate_hz / (k * hz) - 1), name, component, k) for name, component, hz in candidates
            if name != "1X" for k in MULTIPLES if abs(rate_hz / (k * hz) - 1) <= MATCH_TOLERANCE]
    if not near:
        return "none", "none", 0
    _, name, component, k = min(near)
    return name, component, k


def _lines_between(c, rate_hz: float, k: int) -> float:
    """The share of the harmonics j x ``rate_hz`` (j 1 to 2k, not a multiple of k) that show a clear line in one
    of the channel's envelope views (the best view counts): a train's own comb fills the places between the k-th
    lines a faster family would also have; impacts read at a fraction of a real defect's rate leave them empty."""
    between = [j for j in range(1, 2 * k + 1) if j % k]
    best = 0
    for view in c.envelopes:
        _, freq, _ = clear_lines(view.ses)
        if not len(freq):
            continue
        best = max(best, sum(1 for j in between if np.min(np.abs(freq / (j * rate_hz) - 1)) <= SLIP_TOLERANCE))
    return best / len(between)


def impact_train(rc: Analysis) -> list[dict]:
    """The impact train the analysis found in each channel's squared envelope, and what its rate matches
    (``read_from: residual``, the record less its synchronous parts, which the bearing rules read); then, on a
    geared machine, the train of each channel's waveform before those parts were taken out (``read_from:
    waveform``), where a gear tooth struck once per turn shows."""
    candidates = _candidates(rc)
    out: list[dict] = []
    for read_from in ("residual", "waveform"):       # the residual's first: their ids stay as they were
        for c in rc.channels:
            train = c.impacts if read_from == "residual" else c.waveform_impacts
            if train is None:
                continue
            rate = train.rate_hz
            matches = [(best[0], best[1], (rate / best[2] - 1) * 100)
                       for best in _best_matches(candidates, rate, c.location)
                       if abs(rate / best[2] - 1) <= MATCH_TOLERANCE] or [("none", "none", 0.0)]
            shaft = c.point.shaft if c.point else rc.speed_shaft
            slower = _slower_than(candidates, rate) if matches[0][0] == "none" else ("none", "none", 0)
            multiple = _multiple_of(candidates, rate) if matches[0][0] == "none" else ("none", "none", 0)
            # the residual's envelope lines at the train's harmonics are its signs; the waveform's train is
            # not that envelope's, and is a sign of its own
            signs = ({impacts(c.name): 1.0} | _comb_signs(c, rate) if read_from == "residual"
                     else {waveform_impacts(c.name): 1.0})
            out.extend(c.base() | {
                "kind": "impact_train", "read_from": read_from, "rate_hz": rate, "spacing_ms": train.spacing_s * 1e3,
                "periodicity": train.periodicity, "count": train.count, "regularity_cv": train.regularity_cv,
                "impacts_per_rev": rate / rc.speeds_hz[shaft],
                "matched_name": name, "matched_component": component, "match_error_pct": err,
                "slower_than_name": slower[0], "slower_than_component": slower[1], "slower_by": slower[2],
                "slower_lines_between": _lines_between(c, rate, slower[2]) if slower[2] else 0.0,
                "multiple_of_name": multiple[0], "multiple_of_component": multiple[1], "multiple_by": multiple[2],
                SIGNS: signs,
            } for name, component, err in matches)
    return out


def once_per_rev_event(rc: Analysis) -> list[dict]:
    """Per shaft: the TSA difference signal (FM4, Stewart 1977) and where its spike sits."""
    out = []
    for c in rc.channels:
        for shaft, events in c.synchronous.items():
            out.append(c.base() | {
                "kind": "once_per_rev_event", "shaft": shaft, "revolutions": events.revolutions,
                "fm4": events.fm4, "peak_to_rms": events.peak_to_rms, "peak_angle_deg": events.peak_angle_deg,
                "repeat_fraction": events.repeat_fraction, "order_tracked": events.order_tracked,
                SIGNS: {turns(c.name, shaft): 1.0},
            })
    return out
