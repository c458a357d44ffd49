"""Bearing defect tones in the squared envelope spectrum, and their load-zone modulation.

The SES is computed in ``context`` from the cepstrum-prewhitened signal in
the band the kurtogram chose (Randall & Antoni 2011). A defect rate slips by
1-2 % in a real bearing, so each harmonic k is looked for within 2 % of k
times the expected rate, and its height is judged against the median of the
SES within 15 % of it.
"""

from __future__ import annotations

from ._match import SLIP_TOLERANCE, db, find_line, tolerance_hz
from .context import ReadingContext

HARMONICS = {"BPFO": 5, "BPFI": 5, "BSF": 5, "FTF": 3}
# A spall on a rolling element strikes both races once per spin turn, so its
# impacts repeat at twice the ball spin frequency (the "ball defect rate").
RATE_MULTIPLE = {"BPFO": 1, "BPFI": 1, "BSF": 2, "FTF": 1}
MODULATION_ORDERS = 3
SHAFT_ORDER_TOLERANCE = 0.003


def _defects(rc: ReadingContext):
    rates = rc.defect_rates_hz()
    for b in rc.machine.bearings:
        for defect in HARMONICS:
            yield b, defect, RATE_MULTIPLE[defect] * rates[(b.id, defect)]


def _harmonics(ses, rate_hz, n, shaft_hz):
    """Harmonics of ``rate_hz`` in the SES, leaving out lines at whole orders of the shaft.

    Shaft orders appear in an envelope whenever anything modulates at 1X; a
    defect rate is not a whole order, so a line at one is not its evidence
    (unless the defect's own harmonic falls on that order too).
    """
    found = {}
    for k in range(1, n + 1):
        peak = find_line(ses, k * rate_hz, SLIP_TOLERANCE, wide_floor=True)
        if peak is None:
            continue
        if _on_shaft_order(ses, peak.freq_hz, shaft_hz) and not _on_shaft_order(ses, k * rate_hz, shaft_hz):
            continue
        found[k] = peak
    return found


def _on_shaft_order(ses, freq_hz, shaft_hz) -> bool:
    order = round(freq_hz / shaft_hz)
    return order >= 1 and abs(freq_hz - order * shaft_hz) <= tolerance_hz(ses, freq_hz, SHAFT_ORDER_TOLERANCE)


def envelope_tone(rc: ReadingContext) -> list[dict]:
    """One fact per bearing defect whose rate or harmonics stand out in a channel's SES
    (for each envelope view: the kurtogram band, and the wide prewhitened band)."""
    out = []
    for c in rc.channels:
        for view in c.envelopes:
            ses = view.ses
            for b, defect, rate in _defects(rc):
                found = _harmonics(ses, rate, HARMONICS[defect], rc.speeds_hz[b.shaft])
                checked = sum(1 for k in range(1, HARMONICS[defect] + 1) if k * rate <= ses.fmax_hz * 0.98)
                if not found:
                    continue
                first = found.get(1)
                out.append(c.base() | {
                    "kind": "envelope_tone", "defect": defect, "component": b.id, "shaft": b.shaft,
                    "expected_hz": rate, "freq_hz": first.freq_hz if first else 0.0,
                    "deviation_pct": (first.freq_hz / rate - 1) * 100 if first else 0.0,
                    "harmonics_found": len(found), "harmonics_checked": checked,
                    "first_snr_db": db(first.snr) if first else 0.0,
                    "max_snr_db": max(db(p.snr) for p in found.values()),
                    "band_method": view.method, "band_lo_hz": view.band_hz[0], "band_hi_hz": view.band_hz[1],
                    "band_kurtosis": view.band_kurtosis,
                })
    return out


def load_zone_modulation(rc: ReadingContext) -> list[dict]:
    """Envelope sidebands at defect harmonics +- 1X and +- FTF, and the depth they imply.

    A defect passing through the load zone once per turn of the rotating part
    that carries it modulates its impacts: an inner-race spall at 1X, a
    rolling element at FTF; a stationary outer-race spall is not modulated
    (Randall & Antoni 2011, section 2.1). For sinusoidal modulation of depth m
    each sideband is m/2 of its carrier, so depth = (lower + upper) / carrier.
    """
    rates = rc.defect_rates_hz()
    out = []
    for c in rc.channels:
        for view in c.envelopes:
            ses = view.ses
            for b, defect, rate in _defects(rc):
                if defect == "FTF":
                    continue
                found = _harmonics(ses, rate, MODULATION_ORDERS, rc.speeds_hz[b.shaft])
                if not found:
                    continue
                for modulation, mod_hz in (("1X", rc.speeds_hz[b.shaft]), ("FTF", rates[(b.id, "FTF")])):
                    count, depths = 0, []
                    for k, carrier in found.items():
                        sides = []
                        for sign in (-1, 1):
                            peak = find_line(ses, carrier.freq_hz + sign * mod_hz, 0.003, wide_floor=True)
                            sides.append(peak.amplitude if peak else 0.0)
                            count += peak is not None
                        depths.append(sum(sides) / carrier.amplitude)
                    line = find_line(ses, mod_hz, 0.005, wide_floor=True)
                    out.append(c.base() | {
                        "kind": "load_zone_modulation", "defect": defect, "component": b.id,
                        "band_method": view.method, "modulation": modulation, "modulation_hz": mod_hz,
                        "sideband_count": count, "depth": max(depths), "line_snr_db": db(line.snr) if line else 0.0,
                    })
    return out
