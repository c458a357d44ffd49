"""Matching measured peaks to expected frequencies, shared by the extractors (public).

Each search is vectorised over its targets (``find_lines``): one call per
spectrum and purpose instead of one per frequency. The tolerances here are
the one home of how near an expected frequency a line must lie; the
acquisition planner reads them too (``SLIP_TOLERANCE``: defect rates it
cannot tell apart).
"""

from __future__ import annotations

import numpy as np

from ..analysis import Spectrum
from ..analysis.peaks import Lines, Peak, local_maxima, peaks_near

MIN_SNR = 3.0               # a line must stand 3 x (9.5 dB) above its local floor
SPEED_TOLERANCE = 0.005     # shaft-locked lines after speed refinement: 0.5 %
UNREFINED_TOLERANCE = 0.02  # without a refined speed: 2 %
SLIP_TOLERANCE = 0.02       # bearing defect rates slip by 1-2 % (Randall & Antoni 2011)
TIE = 0.01                  # rates within 1 % of each other cannot be told apart by the match (bearings slip 1-2 %)
WIDE_FLOOR_FRACTION = 0.15  # a wide floor: the median within +-15 % of the frequency
WIDE_FLOOR_MIN_LINES = 25
SHAFT_HARMONICS = 10        # 1X harmonics followed (looseness shows a long series)
HALF_ORDERS = (0.5, 1.5, 2.5, 3.5, 4.5)
LINES_FROM_ZERO = 3         # a Hann main lobe spans +-2 lines: a target nearer 0 Hz than this is not resolved


def db(ratio: float) -> float:
    """An amplitude ratio in dB (20 log10); -200 dB for a ratio of zero or less."""
    return float(20 * np.log10(ratio)) if ratio > 0 else -200.0


def tolerance_hz(spec: Spectrum, freq_hz: float, fraction: float) -> float:
    """Search half-width: the larger of 1.5 lines and ``fraction`` of the frequency."""
    return max(1.5 * spec.resolution_hz, fraction * freq_hz)


def _median(values: np.ndarray) -> float:
    """``np.median`` of a 1-D array without its overhead (it is called for hundreds of short slices)."""
    k = len(values) // 2
    if len(values) % 2:
        return float(np.partition(values, k)[k])
    part = np.partition(values, (k - 1, k))
    return float((part[k - 1] + part[k]) / 2)


def local_floor(spec: Spectrum, freq_hz: float, width_fraction: float = WIDE_FLOOR_FRACTION,
                min_lines: int = WIDE_FLOOR_MIN_LINES) -> float:
    """Median amplitude within +-``width_fraction`` of ``freq_hz`` (at least +-min_lines)."""
    return float(local_floors(spec, [freq_hz], width_fraction, min_lines)[0])


def local_floors(spec: Spectrum, freqs_hz, width_fraction: float = WIDE_FLOOR_FRACTION,
                 min_lines: int = WIDE_FLOOR_MIN_LINES) -> np.ndarray:
    """``local_floor`` at each of ``freqs_hz``: every window's edges found in one call, then one median each."""
    freqs = np.asarray(freqs_hz, dtype=float)
    half = np.maximum(width_fraction * freqs, min_lines * spec.resolution_hz)
    f, amp = spec.freq_hz, spec.amplitude
    los = np.maximum(np.searchsorted(f, freqs - half, side="left") - 1, 0).tolist()
    his = np.minimum(np.searchsorted(f, freqs + half, side="right") + 1, len(f)).tolist()
    out = np.zeros(len(freqs))
    for i, (lo, hi, centre, reach) in enumerate(zip(los, his, freqs.tolist(), half.tolist())):
        vals = amp[lo:hi][np.abs(f[lo:hi] - centre) <= reach]
        if len(vals):
            out[i] = _median(vals)
    return out


def find_lines(spec: Spectrum, freqs_hz, fraction, wide_floor: bool = False, floors=None) -> Lines:
    """The peaks near each of ``freqs_hz`` that stand MIN_SNR above their floor.

    ``fraction`` (one value or one per target) sets the search half-width as a
    share of the frequency, never less than 1.5 lines. A target within
    ``LINES_FROM_ZERO`` lines of 0 Hz is never found: leakage from 0 Hz and
    the integration to velocity fill those lines. With ``wide_floor`` the
    floor is the median over +-15 % of the frequency instead of 51 lines
    (squared envelope spectra, whose lines are few and broad); ``floors``
    (one per target, 0 for the usual one) gives a floor measured elsewhere.
    """
    freqs = np.atleast_1d(np.asarray(freqs_hz, dtype=float))
    fraction = np.broadcast_to(np.asarray(fraction, dtype=float), freqs.shape)
    inside = (freqs >= LINES_FROM_ZERO * spec.resolution_hz) & (freqs <= spec.fmax_hz * 0.98)
    tol = np.maximum(1.5 * spec.resolution_hz, fraction * freqs)
    lines = peaks_near(spec, np.where(inside, freqs, 0.0), tol)
    found = lines.found & inside
    snr = lines.snr
    if wide_floor and found.any():
        snr = snr.copy()
        at = np.flatnonzero(found)
        for i, floor in zip(at.tolist(), local_floors(spec, freqs[at]).tolist()):
            snr[i] = lines.amplitude[i] / floor if floor > 0 else float("inf") if lines.amplitude[i] > 0 else 0.0
    if floors is not None:
        given = np.asarray(floors, dtype=float)
        snr = np.where(given > 0, lines.amplitude / np.where(given > 0, given, 1.0), snr)
    return lines.with_snr(snr, found & (snr >= MIN_SNR))


def find_line(spec: Spectrum, freq_hz: float, fraction: float, wide_floor: bool = False) -> Peak | None:
    """The peak near ``freq_hz`` if it stands MIN_SNR above its floor, else None."""
    return find_lines(spec, [freq_hz], fraction, wide_floor).peak(0)


# the wide floor for a census of lines: measured at this many frequencies (about one per 15 % over a decade),
# interpolated between them
CENSUS_FLOOR_POINTS = 16


_CENSUS_KEPT = 16           # the last spectra counted: the envelope and impact extractors ask for the same ones
_census: dict[int, tuple] = {}


def clear_lines(spec: Spectrum) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Index, frequency (Hz) and height over the wide floor (a ratio) of every line of ``spec`` (a squared
    envelope spectrum) that stands MIN_SNR over its floor, as a harmonic must to be found.

    Counted once per spectrum: a repeated call for the same object returns the first count."""
    known = _census.get(id(spec))
    if known is not None and known[0] is spec:
        return known[1]
    found = _count_clear_lines(spec)
    if len(_census) >= _CENSUS_KEPT:
        _census.pop(next(iter(_census)))
    _census[id(spec)] = (spec, found)
    return found


def _count_clear_lines(spec: Spectrum) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    a, f = spec.amplitude, spec.freq_hz
    peaks = local_maxima(a)
    peaks = peaks[(peaks >= LINES_FROM_ZERO) & (f[peaks] <= spec.fmax_hz * 0.98)]
    if len(peaks) == 0:
        return np.zeros(0, dtype=int), np.zeros(0), np.zeros(0)
    grid = np.geomspace(f[peaks[0]], f[peaks[-1]], CENSUS_FLOOR_POINTS) if len(peaks) > 1 else f[peaks]
    floors = np.interp(f[peaks], grid, local_floors(spec, grid))
    with np.errstate(divide="ignore", invalid="ignore"):
        snr = np.where(floors > 0, a[peaks] / floors, np.where(a[peaks] > 0, np.inf, 0.0))
    keep = snr >= MIN_SNR
    return peaks[keep], f[peaks[keep]], snr[keep]


def explained_frequencies(rc) -> np.ndarray:
    """Every frequency (Hz) a known source puts a line at: forcing frequencies and their harmonics,
    half orders of every shaft, line-frequency harmonics."""
    freqs = []
    for f in rc.forcing:
        n = SHAFT_HARMONICS if f.family == "shaft" else 5
        freqs += [k * f.frequency_hz for k in range(1, n + 1)]
    for fr in rc.speeds_hz.values():
        freqs += [k * fr for k in HALF_ORDERS]
    for m in rc.rates.motors:
        freqs += [k * m.line_hz for k in range(1, 11)]
    return np.array(freqs)
