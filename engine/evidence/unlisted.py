"""A family of envelope lines on a machine file that lists no rolling bearing.

Every rotating machine runs on bearings, but a machine file may list none (their
geometry unknown to the user, or left out). The analysis then takes the envelope
all the same (``engine.analysis.result.unlisted_defect_hz``), and this extractor
reports the strongest harmonic family of each channel's squared envelope spectrum
whose fundamental lies where an unlisted bearing's defect rates can lie and which
no forcing frequency of the file explains. A defect's impacts show in the envelope
spectrum as a line at their rate with its harmonics (Randall & Antoni 2011, MSSP
25(2), section 2); on a file that lists the bearings, the envelope extractor
(``envelope_tone``) looks at their own rates instead, so this one reports nothing.
"""

from __future__ import annotations

import numpy as np

from ..analysis import Analysis
from ..analysis.result import UNLISTED_DEFECT_ORDER
from .matching import SLIP_TOLERANCE, clear_lines, db, explained_frequencies, tolerance_hz
from .signs import SIGNS, envelope_line, match_fit

FAMILY_HARMONICS = 5        # the harmonics looked at, as for a listed bearing's defect family (envelope.HARMONICS)
UNLISTED_SLOWEST_ORDER = 2.0   # BPFO = (Z/2)(1 - d/D cos phi) x 1X and 2 x BSF = (D/d)(1 - (d/D cos phi)^2) x 1X
#                                (Randall & Antoni 2011, eq. 1): above 2 x 1X for 6 or more rolling elements and
#                                d/D up to 0.3 (common practice); the cage rate, below 1X, is not looked for
SUBHARMONICS = (2, 3)       # a family is reported at its lowest rate: one at a half or a third of it is preferred
FAMILY_RANKED = 3           # families of this many harmonics or more are ranked by their fundamental's height alone:
#                             every k-th line of a family is a family too, with as many harmonics when the
#                             spectrum reaches far enough, and the true one has the tallest fundamental


def _family(freq: np.ndarray, f0: float, fmax_hz: float) -> list[tuple[int, int]]:
    """(harmonic, index into ``freq``) of the lines at the harmonics 1 to ``FAMILY_HARMONICS`` of ``f0`` (each
    the nearest line, within the slip tolerance of its harmonic), in order; harmonics above ``fmax_hz`` are
    not looked for."""
    out = []
    for k in range(1, FAMILY_HARMONICS + 1):
        if k * f0 > fmax_hz:
            break
        error = np.abs(freq / (k * f0) - 1)
        i = int(np.argmin(error))
        if error[i] <= SLIP_TOLERANCE:
            out.append((k, i))
    return out


def _explained(f0: float, explained: np.ndarray, ses) -> bool:
    """Whether ``f0`` lies on a frequency a part of the file gives (within the larger of 1.5 lines and 1 %)."""
    return bool(len(explained)) and bool(np.min(np.abs(explained - f0)) <= tolerance_hz(ses, f0, 0.01))


def _best_family(ses, lo_hz: float, hi_hz: float, explained: np.ndarray) -> tuple[float, list, tuple] | None:
    """The strongest family of ``ses`` with its fundamental between ``lo_hz`` and ``hi_hz``: the most harmonics
    (up to ``FAMILY_RANKED``), then the tallest fundamental; reported at a half or a third of its rate when a
    family there has as many harmonics. (fundamental Hz, its family as ``_family`` gives it, ``clear_lines`` of
    ``ses``) or None."""
    lines, freq, snr = clear_lines(ses)
    fmax = ses.fmax_hz * 0.98
    best = None
    for i, f0 in enumerate(freq):
        if f0 < lo_hz or f0 > hi_hz or _explained(f0, explained, ses):
            continue
        members = _family(freq, f0, fmax)
        if not members or members[0] != (1, i):
            continue
        key = (min(len(members), FAMILY_RANKED), snr[i])
        if best is None or key > best[0]:
            best = (key, float(f0), members)
    if best is None:
        return None
    _, f0, members = best
    for k in SUBHARMONICS:
        lower = _family(freq, f0 / k, fmax)
        if (f0 / k >= lo_hz and lower and lower[0][0] == 1 and len(lower) >= len(members)
                and not _explained(freq[lower[0][1]], explained, ses)):
            f0, members = float(freq[lower[0][1]]), lower
            break
    return f0, members, (lines, freq, snr)


def envelope_family(rc: Analysis) -> list[dict]:
    """On a machine file that lists no rolling bearing: per channel, the strongest family of lines in its
    squared envelope spectra (the view whose family has the most harmonics, up to ``FAMILY_RANKED``, then the
    tallest fundamental), at a
    rate between ``UNLISTED_SLOWEST_ORDER`` times the slowest shaft and ``UNLISTED_DEFECT_ORDER`` times the
    fastest, not on a forcing frequency, a shaft harmonic or a half order of the file."""
    if rc.rates.bearings or not rc.speeds_hz:
        return []
    lo = UNLISTED_SLOWEST_ORDER * min(rc.speeds_hz.values())
    hi = UNLISTED_DEFECT_ORDER * max(rc.speeds_hz.values())
    explained = explained_frequencies(rc)
    whole = [k * fr for fr in rc.speeds_hz.values() for k in range(1, int(hi / fr) + 2)]
    out = []
    for c in rc.channels:
        best = None
        for view in c.envelopes:
            ses = view.ses
            shaft_lines = np.array([f for f in whole if f <= ses.fmax_hz])
            near_shaft = np.concatenate([explained, shaft_lines])
            found = _best_family(ses, lo, hi, near_shaft)
            if found is None:
                continue
            f0, members, (lines, freq, snr) = found
            key = (min(len(members), FAMILY_RANKED), snr[members[0][1]])
            if best is None or key > best[0]:
                best = (key, view, f0, members, lines, freq, snr)
        if best is None:
            continue
        _, view, f0, members, lines, freq, snr = best
        shaft = c.point.shaft if c.point else rc.speed_shaft
        out.append(c.base() | {
            "kind": "envelope_family", "rate_hz": f0, "per_rev": f0 / rc.speeds_hz[shaft],
            "harmonics_found": len(members),
            "harmonics_checked": sum(1 for k in range(1, FAMILY_HARMONICS + 1) if k * f0 <= view.ses.fmax_hz * 0.98),
            "first_snr_db": db(float(snr[members[0][1]])),
            "band_method": view.method, "band_lo_hz": view.band_hz[0], "band_hi_hz": view.band_hz[1],
            SIGNS: {envelope_line(c.name, view.method, int(lines[i])):
                    match_fit(float(freq[i]) / (k * f0) - 1, SLIP_TOLERANCE)
                    for k, i in members},
        })
    return out

