"""Running speed from the signal: how far the machine's speed is from the stated or nominal one.

A stated speed (a tach reading written down, a sidecar, a nameplate) can be
several percent off, and an induction motor's speed moves with load (slip).
All shafts of a drive train turn in fixed ratios, so one scale factor s moves
every shaft together: the search scores each candidate s within
``search_fraction`` of 1 by how far the first harmonics of every shaft at s
times its nominal speed stand above the local floor (a harmonic comb over the
whole train, so one shaft's 3X cannot be taken for another's 1X), then refines
s from the interpolated frequencies of the harmonics it found, each weighted
by the inverse of its variance: the error of an interpolated line frequency
falls with its signal-to-noise ratio, and harmonic k resolves the speed k
times more finely, so the weight is (k x SNR)^2 (Rife & Boorstyn 1974,
"Single-tone parameter estimation from discrete-time observations", IEEE
Trans. Inf. Theory 20(5), for the SNR dependence). Harmonics whose search window holds a line
frequency harmonic of a motor (which a slipping rotor's harmonics cross) are
left out of the search; at the speed the others give, such a harmonic joins the
family when it stands more than a Hann main lobe and a line (``MERGED_LINES`` + 1
lines) from the line frequency harmonic: 2X of a 2-pole motor at 2960 rpm,
98.7 Hz, is told from 2 x 50 Hz at 0.25 Hz resolution. The lines found are
gathered again at the speed they give until the family stops changing, and
the speed counts as measured only when they make a shaft's family
(``hangs_together``): one line near the stated 1X is not a measurement.
A line is gathered when it lies within one line of its order, but the family
is the largest set of lines that agree on one speed to within their
interpolation error (``_consistent``): on a short record one line is a
percent or more of a slow shaft's speed, and a strong line of another shaft
that is a line from a harmonic at a wrong speed would otherwise pull the
speed there (a belt fan's 8X beside its motor's 5X at a resolution of 0.5 Hz).

A listed bearing whose defect rate lies within the search of a shaft's 1X
(a large bearing on a slow output shaft whose BPFO is 8.2 times its speed,
behind a 12:97 stage: 1.016 times the motor's 1X) makes a comb of lines with
that shaft's spacing: its harmonics are the shaft's harmonics at a speed the
search allows just as well, so they are no evidence of the shaft's speed
(``_shared_with_rivals``). They speak for the shaft only when the bearing's own
comb stands beside them, resolved from them, where a bearing on a shaft at
their speed would put it; else they are left out of the family, which must
hang together without them.

When no shaft line stands out, the sharpest bearing-tone family of the
squared envelope spectrum can give the speed instead (``speed_from_tones``),
less exactly: bearings slip 1-2 % against their kinematic rates. A family
whose every line is a harmonic of another listed rate (at a speed the search
allows) is that rate's family when the lines between, which only the other
rate makes, stand too: it says nothing of the speed.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from .peaks import noise_floor, peak_near, peaks_near
from .spectrum import Spectrum, running_median

MIN_HARMONIC_SNR = 3.0
HARMONICS = 5
TONE_LINES = 8              # lines across the search a bearing tone needs to give the speed
TONE_HARMONICS = 4          # harmonics of one family that must agree
TONE_SLIP = 0.02            # bearing tones slip up to 2 % against their kinematic rates (Randall & Antoni 2011)
MERGED_LINES = 2.5          # lines closer than this share the Hann main lobe (4 lines wide)
LINE_TOLERANCE = 0.25       # an interpolated line lies this many lines from its tone, with a neighbour 3+ lines off
HALF_WITHOUT_1X = 100.0     # the ratio reported when a line stands at 0.5X and none at 1X


@dataclass(frozen=True)
class SpeedEstimate:
    """The reference shaft's speed found in the spectrum (Hz), the speed it started from, and how."""

    speed_hz: float
    nominal_hz: float
    harmonics_found: tuple[int, ...]   # which orders of the reference shaft stood above the floor
    refined: bool                      # the speed was measured from 1X harmonics
    source: str = "1X harmonics"       # 1X harmonics, bearing tones, or stated (nothing found)
    lines_found: int = 0               # harmonic lines of all shafts that agreed
    shared_with: str = ""              # a bearing rate whose comb explains the shaft lines as well (not measured)

    @property
    def speed_rpm(self) -> float:
        """The speed found, r/min."""
        return self.speed_hz * 60.0


def _comb(spec: Spectrum, targets: list[tuple[float, int]], search_fraction: float, exclude_hz,
          centre: float = 1.0) -> tuple:
    """(best scale, lines found, weights) of a harmonic comb over ``targets`` (Hz at scale 1, order),
    searched within ``search_fraction`` of the scale ``centre``."""
    amp = spec.amplitude
    df = spec.resolution_hz
    excluded = np.asarray(exclude_hz, dtype=float)
    # a velocity spectrum holds nothing below its low cut (2 Hz): a search that reaches those lines would
    # score the first line above the cut against a floor of zeros, as if it stood infinitely clear
    first_hz = float(np.argmax(amp > 0)) * df
    kept, held = [], []
    for hz, k in targets:
        if hz * centre * (1 + search_fraction) >= spec.fmax_hz or hz * search_fraction < df:
            continue            # above Fmax, or so few lines up that its line cannot refine the speed
        if hz * centre * (1 - search_fraction) - 1.5 * df < first_hz:
            continue            # its search reaches below the lowest line the spectrum holds
        if excluded.size and k > 1 and np.any(np.abs(hz - excluded) <= hz * search_fraction + 2 * df):
            held.append((hz, k))
            continue
        kept.append((hz, k))
    if not kept:
        return centre, [], []
    scored = len(kept)
    kept += held
    freqs = np.array([hz for hz, _ in kept])
    orders = np.array([k for _, k in kept], dtype=float)
    floors = np.maximum(running_median(amp, np.rint(freqs / df).astype(int), 101), 1e-300)
    step = df / (4 * freqs[:scored].max())
    scales = centre * np.arange(1 - search_fraction, 1 + search_fraction + step, step)
    lines = np.clip(np.rint(np.outer(scales, freqs[:scored]) / df).astype(int), 1, len(amp) - 2)
    local = np.maximum(np.maximum(amp[lines - 1], amp[lines]), amp[lines + 1])
    score = (np.log1p(local / floors[None, :scored]) / orders[None, :scored]).sum(axis=1)
    # every line is taken within +-1 line, so the best score holds over a run of scales: its middle puts each
    # harmonic nearest its line (the run's edge would leave the high orders a line or more off)
    top = int(np.argmax(score))
    last = top
    while last + 1 < len(score) and score[last + 1] == score[top]:
        last += 1
    best = float(scales[(top + last) // 2])

    def agreeing(scale: float) -> tuple[list[float], list[float], list[int]]:
        """(speed estimates, weights, indices) of the targets whose line stands within one line of its
        order at ``scale``, three times its floor, and within the search."""
        found = peaks_near(spec, freqs * scale, 1.5 * df)
        estimates, weights, spreads, hits = [], [], [], []
        for i, (hz, _k) in enumerate(kept):
            if not found.found[i] or found.amplitude[i] / floors[i] < MIN_HARMONIC_SNR:
                continue
            if i >= scored and np.min(np.abs(scale * hz - excluded)) <= (MERGED_LINES + 1) * df:
                continue            # a held harmonic whose line could still be the line frequency's
            if abs(found.freq_hz[i] - scale * hz) > df or abs(found.freq_hz[i] / hz / centre - 1) > search_fraction:
                continue            # a neighbour's line, not this harmonic
            estimates.append(found.freq_hz[i] / hz)
            weights.append((orders[i] * min(found.amplitude[i] / floors[i], 100.0)) ** 2)
            spreads.append((LINE_TOLERANCE + floors[i] / found.amplitude[i]) * df / hz)
            hits.append(i)
        keep = _consistent(estimates, spreads, weights)
        return [estimates[j] for j in keep], [weights[j] for j in keep], [hits[j] for j in keep]

    # the lines found at the comb's best scale give a speed; at that speed the lines of the family that
    # stand within one line of their orders are gathered again, until the family stops changing: a line
    # that needs a speed of its own (one strong unrelated line that pulled the comb) drops out, and the
    # family's other members, which the pull left more than a line off, come back in
    estimates, weights, hits = agreeing(best)
    if not hits:
        return best, [], []
    scale = float(np.average(estimates, weights=weights))
    for _ in range(4):
        again = agreeing(scale)
        if not again[2]:
            break
        estimates, weights, hits = again
        previous, scale = scale, float(np.average(estimates, weights=weights))
        if abs(scale - previous) * freqs.max() < 0.01 * df:
            break
    return scale, [kept[i] for i in hits], weights


def _consistent(estimates: list[float], spreads: list[float], weights: list[float]) -> list[int]:
    """Indices of the largest set of speed estimates that agree within their spreads (ties: the larger
    summed weight).

    Each line found within one line of its order gives the speed as its interpolated frequency over its
    order, to within ``spreads`` (the interpolation's error over the line's frequency at scale 1). One
    line's worth of tolerance lets a line of another shaft stand in for a harmonic at a speed up to one
    line over its frequency away: at a resolution of 0.5 Hz a fan's 8X 1.6 % above its motor's 5X is within a line
    of 5X at a speed 1.3 % high, while the fan's 1X and 2X still lie within a line of theirs. Lines of one
    shaft agree on one speed to within their interpolation error: the family is the largest set whose
    intervals (estimate +- spread) share a point; a line outside it needs a speed of its own.
    """
    if len(estimates) <= 1:
        return list(range(len(estimates)))
    lo = [e - s for e, s in zip(estimates, spreads, strict=True)]
    hi = [e + s for e, s in zip(estimates, spreads, strict=True)]
    best: tuple[int, float, list[int]] = (0, 0.0, [])
    for point in lo:            # the largest overlap of intervals starts at one of their left ends
        inside = [j for j in range(len(estimates)) if lo[j] <= point <= hi[j]]
        rank = (len(inside), float(sum(weights[j] for j in inside)))
        if rank > best[:2]:
            best = (rank[0], rank[1], inside)
    return best[2]


def _distinguishable(targets: list[tuple[float, int]], search_fraction: float, df: float) -> list:
    """Harmonics no other shaft's harmonic of lower (or equal) order can be taken for.

    Two harmonics closer than the search window could both claim one line at
    a wrong scale (a fan's 3X 3 % above its motor's 1X): the higher order of
    the two is left out, so each line speaks for one shaft. Harmonics closer
    than the Hann window's main lobe (``MERGED_LINES`` lines) merge into one
    peak whose frequency is neither's: both are left out.
    """
    targets = sorted(set(targets), key=lambda t: (t[1], t[0]))
    every = np.array(sorted({hz for hz, _ in targets}))
    kept: list[tuple[float, int]] = []
    for hz, k in targets:
        window = 2 * search_fraction * hz + 3 * df
        merged = np.any((np.abs(every - hz) < MERGED_LINES * df) & (np.abs(every - hz) > 1e-9 * hz))
        if not merged and all(abs(hz - other) > window for other, _ in kept):
            kept.append((hz, k))
    return sorted(kept)


def _stands(spec: Spectrum, freqs_hz: list[float]) -> int:
    """How many of ``freqs_hz`` have a line within one line of them ``MIN_HARMONIC_SNR`` over its floor."""
    freqs = [hz for hz in freqs_hz if 0 < hz < spec.fmax_hz]
    if not freqs:
        return 0
    df = spec.resolution_hz
    found = peaks_near(spec, freqs, 1.5 * df)
    stand = found.found & (found.amplitude >= MIN_HARMONIC_SNR * spec.floor_at(found.line))
    return int(np.sum(stand & (np.abs(found.freq_hz - np.asarray(freqs)) <= df)))


def _shared_with_rivals(spec: Spectrum, hits: list[tuple[float, int]], scale: float, shafts_hz: list[float],
                        rivals_hz: Mapping[str, float], search_fraction: float,
                        beside=()) -> tuple[list[tuple[float, int]], str]:
    """The lines of ``hits`` a listed bearing's comb explains as well as its shaft's, and that bearing rate's name.

    A rate R within the search of a shaft's 1X f (R / f within the search, and bearings slip up to
    ``TONE_SLIP`` below their kinematic rates) has harmonics m R at a machine speed s / (R / f) that lie on
    the shaft's harmonics k f at speed s, for m = k: every line of that shaft (and every line locked to it, a
    mesh line included) is equally the bearing's, at a speed the search allows. The comb at s speaks for the
    shaft only when the bearing's own comb, at s times R / f, stands beside it as a family (three lines, as three
    harmonics without their 1X make one in ``hangs_together``): at least three of its first
    ``HARMONICS`` lines that lie a Hann main lobe and a line (``MERGED_LINES`` + 1 lines) or more from the
    shaft's, each ``MIN_HARMONIC_SNR`` over its floor (the record's resolution 1/T parts the two combs from
    the harmonic that many lines apart on), in this spectrum or in one of ``beside`` (the record's other
    channels: the bearing's lines stand clearest at its own point, the shaft's at the shaft's). Then the
    bearing's lines are where a bearing on a shaft at s puts them, and the comb at s is the shaft's; else the
    lines are claimed.
    """
    df = spec.resolution_hz
    for name, rate in sorted(rivals_hz.items()):
        for f in shafts_hz:
            ratio = rate / f
            machine = scale / ratio   # the machine speed (over the stated) that puts the bearing comb here
            if not (1 - search_fraction - TONE_SLIP <= machine <= 1 + search_fraction):
                continue
            lines = [k * ratio * scale * f for k in range(1, HARMONICS + 1)
                     if k * abs(ratio - 1) * scale * f >= (MERGED_LINES + 1) * df]
            if max(_stands(other, lines) for other in (spec, *beside)) >= 3:
                continue
            claimed = [(hz, k) for hz, k in hits if abs(hz / f - round(hz / f)) * scale * f <= 0.5 * df]
            if claimed:
                return claimed, name
    return [], ""


def refine_speeds(spec: Spectrum, shafts_hz: Mapping[str, float], reference: str,
                  search_fraction: float = 0.05, exclude_hz=(), synchronous=(),
                  rivals_hz: Mapping[str, float] | None = None, beside=()) -> SpeedEstimate:
    """The speed of ``reference`` that best explains every shaft's harmonics in ``spec``.

    ``shafts_hz`` holds every shaft's nominal (or stated) speed; shafts turning
    at the same speed count once. ``synchronous`` adds lines locked to a
    shaft, as (Hz at the same speeds, order): a gear mesh (teeth x 1X) or a
    vane pass, whose high order resolves the speed finely when it stands out.
    ``rivals_hz`` names the bearings' defect rates at the same speeds: lines
    one of them explains as well as a shaft (``_shared_with_rivals``) leave
    the family, and the speed is not measured unless the rest hangs together.

    Parameters
    ----------
    spec : Spectrum
        Velocity (or acceleration) amplitude spectrum.
    shafts_hz : Mapping
        Shaft id -> nominal speed, Hz.
    reference : str
        The shaft whose speed is returned.
    search_fraction : float
        How far from the nominal speeds the scale is searched (0.05: 5 %).
    exclude_hz : sequence of float
        Lines to keep out (line frequency harmonics), Hz.
    synchronous : sequence of tuple
        (Hz at the nominal speeds, order) of shaft-locked lines.
    rivals_hz : Mapping, optional
        Name (``BPFO of out_brg``) -> a bearing's defect rate at the nominal speeds, Hz.
    beside : sequence of Spectrum
        The record's other channels, where a rival's own comb may stand clearer.

    Returns
    -------
    SpeedEstimate
        Speed and nominal speed in Hz, the orders found, whether refined, and
        the rate whose comb explained the lines as well when that left no family.

    References
    ----------
    Rife & Boorstyn (1974), "Single-tone parameter estimation from discrete-time
    observations", IEEE Trans. Inf. Theory 20(5) (weights by SNR); Harris
    (1978), Proc. IEEE 66(1) (the Hann window's main lobe, 4 lines wide).

    Examples
    --------
    >>> from engine.analysis.spectrum import amplitude_spectrum
    >>> fs = 1024.0; t = np.arange(32768) / fs; rng = np.random.default_rng(0)
    >>> x = sum(np.sin(2 * np.pi * k * 24.7 * t) / k for k in range(1, 6)) + 0.01 * rng.standard_normal(len(t))
    >>> spec = amplitude_spectrum(x, fs)                              # harmonics of 24.7 Hz, lines 1/32 Hz apart
    >>> e = refine_speeds(spec, {"motor": 25.0, "fan": 12.5}, "motor")
    >>> round(e.speed_hz, 2), e.refined
    (24.7, True)
    """
    distinct = sorted({round(hz, 9) for hz in shafts_hz.values()})
    synchronous = [(hz, int(k)) for hz, k in synchronous]
    harmonics = [(k * hz, k) for hz in distinct for k in range(1, 2 * HARMONICS + 1)]
    targets = _distinguishable(harmonics + synchronous, search_fraction, spec.resolution_hz)
    low = [t for t in targets if t in {(k * hz, k) for hz in distinct for k in range(1, HARMONICS + 1)}]
    high = [t for t in targets if t in set(synchronous)]
    scale, hits, _ = _comb(spec, low, search_fraction, exclude_hz)
    nominal = shafts_hz[reference]
    if not hits:
        return SpeedEstimate(nominal, nominal, (), False, "stated", 0)
    if high:
        # a mesh line's own sidebands lie 1/order away: search it only within half of that
        fine = min(search_fraction, 0.4 / max(k for _, k in high))
        fine_scale, fine_hits, _ = _comb(spec, low + high, fine, exclude_hz, centre=scale)
        if fine_hits:
            scale, hits = fine_scale, fine_hits
    carriers = [hz for hz, _ in synchronous]
    if not hangs_together(spec, hits, scale, carriers):
        return SpeedEstimate(nominal, nominal, (), False, "stated", 0)
    claimed, rival = _shared_with_rivals(spec, hits, scale, distinct, rivals_hz or {}, search_fraction, beside)
    hits = [hit for hit in hits if hit not in claimed]
    if claimed and not hangs_together(spec, hits, scale, carriers):
        return SpeedEstimate(nominal, nominal, (), False, "stated", 0, rival)
    own = tuple(sorted({k for hz, k in hits if abs(hz / k - nominal) <= 1e-9 * nominal}))
    return SpeedEstimate(scale * nominal, nominal, own, True, "1X harmonics", len(hits))


def hangs_together(spec: Spectrum, hits: list[tuple[float, int]], scale: float, carriers_hz=()) -> bool:
    """Whether the lines a speed search found make a shaft family: a 1X with a harmonic, three
    harmonics, or a 1X confirmed by a pair of sidebands.

    One line near the stated 1X is not a measurement of the speed: any line
    (a bearing tone's harmonic, a structural resonance, the line frequency's
    neighbour) can fall within the few percent searched. A shaft shows itself
    by lines in fixed ratios, each within one line of its order at the one
    speed they give together (``_comb`` keeps only those): a 1X with at least
    one more line of the train (a harmonic of it, another shaft's 1X or
    harmonic, a mesh or pass line); three such lines without a 1X (a shaft
    with little unbalance shows its 2X and higher harmonics, and two lines
    without their fundamental can meet by chance more easily than three); or
    a 1X with lines on both sides of a shaft-locked carrier (a mesh or pass
    line, ``carriers_hz`` at scale 1) spaced by that 1X, each within one line
    of where the 1X puts it and ``MIN_HARMONIC_SNR`` over its floor (a shaft's
    modulation of the carrier gives both sidebands).

    Parameters
    ----------
    spec : Spectrum
        Velocity (or acceleration) amplitude spectrum.
    hits : list of tuple
        (Hz at scale 1, order) of every line the search found, as ``refine_speeds`` finds them.
    scale : float
        The measured speed over the nominal one.
    carriers_hz : sequence of float
        Shaft-locked carriers at scale 1, Hz.

    Returns
    -------
    bool
        True when the lines hang together as one shaft's family.

    References
    ----------
    Common practice (a shaft is known by its harmonic family, and a carrier it modulates by sidebands at
    its 1X on both sides); Randall (2011), "Vibration-based Condition Monitoring", section 2.2.

    Examples
    --------
    >>> from engine.analysis.spectrum import amplitude_spectrum
    >>> fs = 1024.0; t = np.arange(32768) / fs
    >>> spec = amplitude_spectrum(np.sin(2 * np.pi * 24.7 * t) + 0.5 * np.sin(2 * np.pi * 49.4 * t), fs)
    >>> hangs_together(spec, [(25.0, 1), (50.0, 2)], 0.988), hangs_together(spec, [(25.0, 1)], 0.988)
    (True, False)
    """
    if len(hits) >= 3:
        return True
    if not any(k == 1 for _, k in hits):
        return False
    if len(hits) == 2:
        return True
    df = spec.resolution_hz
    one_x = scale * next(hz for hz, k in hits if k == 1)
    for carrier in (scale * c for c in carriers_hz):
        if carrier - one_x <= 0 or carrier + one_x + 2 * df >= spec.fmax_hz:
            continue
        centre = peaks_near(spec, [carrier], 1.5 * df)
        if not centre.found[0] or centre.amplitude[0] < MIN_HARMONIC_SNR * spec.floor_at(centre.line)[0]:
            continue
        wanted = centre.freq_hz[0] + np.array([-one_x, one_x])
        sides = peaks_near(spec, wanted, 1.5 * df)
        stand = sides.found & (sides.amplitude >= MIN_HARMONIC_SNR * spec.floor_at(sides.line))
        if np.all(stand & (np.abs(sides.freq_hz - wanted) <= df)):
            return True
    return False


def refine_running_speed(spec: Spectrum, nominal_hz: float, search_fraction: float = 0.05,
                         harmonics: int = HARMONICS, exclude_hz=()) -> SpeedEstimate:
    """Find the shaft speed near ``nominal_hz`` whose harmonics best explain the spectrum.

    Parameters
    ----------
    spec : Spectrum
        Amplitude spectrum.
    nominal_hz : float
        Nominal or stated speed, Hz.
    search_fraction : float
        Search half-width as a fraction of the speed.
    harmonics : int
        Harmonics looked at (unused beyond the module's default, kept for callers).
    exclude_hz : sequence of float
        Lines kept out, Hz.

    Returns
    -------
    SpeedEstimate
        As ``refine_speeds``.

    References
    ----------
    Rife & Boorstyn (1974), IEEE Trans. Inf. Theory 20(5).

    Examples
    --------
    >>> from engine.analysis.spectrum import amplitude_spectrum
    >>> fs = 1024.0; t = np.arange(32768) / fs; rng = np.random.default_rng(0)
    >>> x = sum(np.sin(2 * np.pi * k * 24.7 * t) / k for k in range(1, 6)) + 0.01 * rng.standard_normal(len(t))
    >>> spec = amplitude_spectrum(x, fs)                              # harmonics of 24.7 Hz, lines 1/32 Hz apart
    >>> round(refine_running_speed(spec, 25.0).speed_rpm, 1)
    1482.0
    """
    return refine_speeds(spec, {"shaft": nominal_hz}, "shaft", search_fraction, exclude_hz)


def _harmonics_of_another(ses: Spectrum, found_hz: float, rates_hz: list[float], search_fraction: float) -> bool:
    """Whether a family of lines spaced ``found_hz`` is another listed rate's family: its j-th harmonics, j of
    2 or more, at a machine speed the search allows (``TONE_SLIP`` below it for the bearing's slip), with at
    least two of that rate's own lines between them (harmonics 1 to 2j that are not multiples of j) standing
    ``MIN_HARMONIC_SNR`` over their floor within a line. A bearing's comb holds every j-th line of its own:
    the family found is then that comb seen at every j-th line, and its spacing says nothing of the speed.
    """
    for rate in rates_hz:
        j = round(found_hz / rate)
        if j < 2:
            continue
        machine = found_hz / (j * rate)
        if not (1 - search_fraction - TONE_SLIP <= machine <= 1 + search_fraction):
            continue
        between = [m * found_hz / j for m in range(1, 2 * j + 1) if m % j]
        if _stands(ses, between) >= 2:
            return True
    return False


def speed_from_tones(ses: Spectrum, rates_hz: list[float], nominal_hz: float,
                     search_fraction: float = 0.05) -> SpeedEstimate | None:
    """The reference shaft's speed from the bearing-tone family that stands out most in a squared
    envelope spectrum (``rates_hz``: each family's rate at the nominal speed); None if none does, or if
    two families stand at speeds further apart than bearings slip (``TONE_SLIP``): the lines are then
    one bearing's family, which another bearing's family at a wrong speed would take for its own, and
    they do not say which speed is right. A family whose lines are every j-th line of another listed
    rate's comb, with that comb's lines between standing too (``_harmonics_of_another``), is that rate's
    family and is passed over: a slow bearing's BPFO comb holds a faster bearing's rate at every fourth
    line, at a speed 4 % off.

    Parameters
    ----------
    ses : Spectrum
        Squared envelope spectrum.
    rates_hz : list of float
        Each bearing-tone family's rate at the nominal speed, Hz.
    nominal_hz : float
        Nominal speed of the reference shaft, Hz.
    search_fraction : float
        Search half-width as a fraction of the speed.

    Returns
    -------
    SpeedEstimate or None
        Speed in Hz from the family's harmonics (source "bearing tones").

    References
    ----------
    Randall & Antoni (2011), MSSP 25(2), section 2 (bearing tones slip 1-2 %
    against their kinematic rates).

    Examples
    --------
    >>> from engine.analysis.spectrum import amplitude_spectrum
    >>> fs = 1024.0; t = np.arange(65536) / fs
    >>> ses = amplitude_spectrum(sum(np.cos(2 * np.pi * k * 89.15 * t) for k in range(1, 5)), fs)
    >>> round(speed_from_tones(ses, [89.6], 25.0).speed_hz, 3)       # 25 x 89.15 / 89.6
    24.874
    """
    best = None
    scales = []
    for rate in rates_hz:
        if rate * search_fraction < TONE_LINES * ses.resolution_hz:
            continue            # too few lines across the search to place the tone finely
        targets = [(k * rate, k) for k in range(1, HARMONICS + 1)]
        scale, hits, weights = _comb(ses, targets, search_fraction, ())
        if len(hits) >= TONE_HARMONICS and any(k == 1 for _, k in hits):
            scales.append(scale)        # lines stand at this speed, whoever's family they are
            if _harmonics_of_another(ses, rate * scale, rates_hz, search_fraction):
                continue
            strength = float(np.sum(weights))
            if best is None or strength > best[0]:
                best = (strength, scale, len(hits))
    if best is None:
        return None
    if max(scales) - min(scales) > TONE_SLIP:
        return None             # two families need speeds further apart than slip: one is another bearing's
    return SpeedEstimate(best[1] * nominal_hz, nominal_hz, (), False, "bearing tones", best[2])


def one_x_line(spec: Spectrum, speed_hz: float) -> tuple[float, float]:
    """The 1X line's amplitude and its height over its local floor (dB) when it stands ``MIN_HARMONIC_SNR``
    times over that floor, else (0, 0).

    Parameters
    ----------
    spec : Spectrum
        Velocity amplitude spectrum.
    speed_hz : float
        The shaft's speed, Hz; the line is looked for within 1.5 lines of it.

    Returns
    -------
    tuple of float
        The line's amplitude in the spectrum's unit and its height over the floor in dB, or (0.0, 0.0).

    References
    ----------
    Common practice: a shaft's 1X line, from its residual unbalance, stands on every running machine;
    a running median as the local floor (Tukey 1977).

    Examples
    --------
    >>> from engine.analysis.spectrum import amplitude_spectrum
    >>> fs = 1024.0; t = np.arange(8192) / fs; rng = np.random.default_rng(1)
    >>> spec = amplitude_spectrum(np.sin(2 * np.pi * 24.7 * t) + 0.01 * rng.standard_normal(len(t)), fs)
    >>> amplitude, db = one_x_line(spec, 24.7)
    >>> round(amplitude, 2), db > 40, one_x_line(spec, 31.0)
    (1.0, True, (0.0, 0.0))
    """
    df = spec.resolution_hz
    one_x = peak_near(spec, speed_hz, 1.5 * df)
    floor_1x = noise_floor(spec, int(round(speed_hz / df)))
    if one_x is None or not one_x.amplitude > 0 or one_x.amplitude < MIN_HARMONIC_SNR * floor_1x:
        return 0.0, 0.0   # no line, or one in the zeroed lines below the velocity spectrum's lowest frequency
    return float(one_x.amplitude), float(20 * np.log10(one_x.amplitude / max(floor_1x, 1e-300)))


def half_and_double(spec: Spectrum, speed_hz: float, exclude_hz=()) -> dict:
    """Lines that would stand where they do if the stated sample rate (or speed) were off by two.

    Returns the lines found at odd multiples of half the speed (0.5X, 1.5X,
    2.5X, 3.5X, 4.5X), the ratio of the 0.5X line to 1X, whether 1X itself is
    there, the lines at odd orders (1X, 3X .. 9X: none if every frequency
    reads doubled), how many harmonics of twice the speed stand out, how far
    the 0.5X and 2X lines stand above their local floors (dB; 0 when no line
    stands clear), how far from 0.5X a line is still taken for it (% of 0.5X)
    and the largest line at an odd order over the 2X line. Lines
    are matched within 0.5 % (or 1.5 lines). ``exclude_hz`` are lines the
    machine puts there at the speed used (other shafts' harmonics, line
    frequency harmonics, pass and mesh frequencies): a half order or a
    harmonic of twice the speed within a Hann main lobe (2 lines) or 0.5 % of
    one of them is not counted, since it needs no wrong speed to explain it.

    Parameters
    ----------
    spec : Spectrum
        Velocity amplitude spectrum.
    speed_hz : float
        The speed used, Hz.
    exclude_hz : sequence of float
        Lines the machine explains, Hz.

    Returns
    -------
    dict
        Counts, ratios and dB values named by the evidence's fields.

    References
    ----------
    Common practice: a sample rate or speed off by two moves every line to half
    or twice its order (sub-harmonics at 0.5X are otherwise a sign of rubs and
    looseness, Randall 2011, section 2.2).

    Examples
    --------
    >>> from engine.analysis.spectrum import amplitude_spectrum
    >>> fs = 1024.0; t = np.arange(32768) / fs; rng = np.random.default_rng(0)
    >>> x = sum(np.sin(2 * np.pi * k * 24.7 * t) / k for k in range(1, 6)) + 0.01 * rng.standard_normal(len(t))
    >>> spec = amplitude_spectrum(x, fs)                              # harmonics of 24.7 Hz, lines 1/32 Hz apart
    >>> c = half_and_double(spec, 24.7)
    >>> c["half_order_lines"], c["one_x_found"], c["odd_order_lines"]
    (0, True, 3)
    """
    df = spec.resolution_hz
    excluded = np.asarray(exclude_hz, dtype=float)

    def lines_at(targets: list[float], drop_explained: bool) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """(amplitude, floor, stands clear) of the line at each target."""
        found = peaks_near(spec, targets, [max(1.5 * df, 0.005 * hz) for hz in targets])
        floors = np.maximum(spec.floor_at(found.line), 1e-300)
        clear = found.found & (found.amplitude >= MIN_HARMONIC_SNR * floors)
        clear &= np.array([hz < spec.fmax_hz for hz in targets])
        if drop_explained and excluded.size:
            clear &= np.array([not np.any(np.abs(excluded - hz) <= max(2 * df, 0.005 * hz)) for hz in targets])
        return found.amplitude, floors, clear

    one_x_amp = one_x_line(spec, speed_hz)[0]
    half_amp, half_floor, half_clear = lines_at([k * speed_hz / 2 for k in (1, 3, 5, 7, 9)], True)
    even_amp, even_floor, even_clear = lines_at([2 * k * speed_hz for k in range(1, HARMONICS + 1)], True)
    odd_amp, _, odd_clear = lines_at([k * speed_hz for k in (1, 3, 5, 7, 9)], False)
    half_x = float(half_amp[0]) if half_clear[0] else 0.0
    odd_lines = int(odd_clear.sum())
    largest_odd = float(np.max(odd_amp[odd_clear], initial=0.0))
    return {"one_x_found": one_x_amp > 0, "odd_order_lines": odd_lines, "half_order_lines": int(half_clear.sum()),
            "half_to_one_x": half_x / one_x_amp if one_x_amp > 0 else (HALF_WITHOUT_1X if half_x > 0 else 0.0),
            "double_speed_lines": int(even_clear.sum()),
            "half_x_snr_db": float(20 * np.log10(half_amp[0] / half_floor[0])) if half_clear[0] else 0.0,
            "half_x_window_pct": 100.0 * max(1.5 * df, 0.0025 * speed_hz) / (0.5 * speed_hz),
            "two_x_snr_db": float(20 * np.log10(even_amp[0] / even_floor[0])) if even_clear[0] else 0.0,
            "odd_to_two_x": largest_odd / float(even_amp[0]) if even_clear[0]
            else (HALF_WITHOUT_1X if odd_lines else 0.0)}



FAMILY_ORDERS = 10          # harmonics of 1X a shaft family is looked for at
FAMILY_SPAN = 0.3           # the family search reaches this far either side of the stated speed
FAMILY_NEAR = 0.05          # a family this close to the stated speed is the stated speed's own
NEAR_LINES = 2              # ... and one within a Hann window's main lobe (2 lines) of it, however short the record
CENSUS_REACH = 0.15         # unrelated lines are counted within +-15 % of each harmonic


def _census(spec: Spectrum, top_hz: float) -> tuple[np.ndarray, np.ndarray]:
    """Frequency and height over the local floor of every local maximum up to ``top_hz``."""
    amp = spec.amplitude
    last = min(len(amp) - 1, int(top_hz / spec.resolution_hz) + 2)
    i = np.arange(1, last)
    i = i[(amp[i] >= amp[i - 1]) & (amp[i] > amp[i + 1])]
    return spec.freq_hz[i], amp[i] / np.maximum(spec.floor_at(i), 1e-300)


def _family_chance(spec: Spectrum, census, one_x_hz: float, orders: np.ndarray, found: int,
                   searched_hz: float) -> float:
    """Chance that lines unrelated to any shaft give ``found`` of ``orders`` harmonics of some 1X within
    the ``searched_hz`` wide search.

    Around each harmonic (within +-15 %) the lines that stand ``MIN_HARMONIC_SNR``
    over their floor give the local density of lines; a harmonic's window (one
    line either side of k x 1X) holds one by chance with probability
    1 - exp(-density x width) (lines placed at random, a Poisson process); the
    chance of ``found`` or more of them is the Poisson-binomial tail. A search
    tries about searched_hz x (highest order) / (window width) independent
    candidates, so the tail is multiplied by that many (Bonferroni; Dunn 1961).
    """
    if found <= 0:
        return 1.0
    freq, snr = census
    clear = freq[snr >= MIN_HARMONIC_SNR]
    width = 2 * spec.resolution_hz
    p = []
    for k in orders:
        centre = k * one_x_hz
        reach = max(CENSUS_REACH * centre, 25 * spec.resolution_hz)
        density = np.count_nonzero(np.abs(clear - centre) <= reach) / (2 * reach)
        p.append(1.0 - np.exp(-density * width))
    tail = np.zeros(len(p) + 1)
    tail[0] = 1.0
    for q in p:
        tail[1:] = tail[1:] * (1 - q) + tail[:-1] * q
        tail[0] *= 1 - q
    trials = max(1.0, searched_hz * float(orders.max()) / width)
    return float(min(1.0, tail[found:].sum() * trials))


def shaft_family(spec: Spectrum, stated_hz: float, exclude_hz=(), others_hz=(), span: float = FAMILY_SPAN,
                 near: float = FAMILY_NEAR) -> dict:
    """The strongest harmonic family of one shaft near the stated speed and the strongest farther away.

    A speed is measured only from lines that hang together as harmonics of one
    shaft: every candidate 1X within ``span`` of ``stated_hz`` is scored by its
    harmonics (1X to 10X) that stand ``MIN_HARMONIC_SNR`` over their local
    floor, each weighted by 1/order (so a family's own sub-multiple does not
    outscore it); at the best candidate within ``near`` of the stated speed and
    at the best one beyond it, a harmonic counts only when its interpolated
    line lies within one line of k times the family's 1X (the 1X refined from
    the lines found, weighted by order), and the family's chance is how often
    unrelated lines at their local density would give as many
    (``_family_chance``). ``exclude_hz`` are lines the machine puts there
    whatever the speed (line frequency harmonics): a harmonic on one of them
    counts for no family. ``others_hz`` are the other shafts' speeds at the
    stated speed: a candidate 1X within ``near`` of one of them, of its
    harmonics or of its halves and thirds is that shaft's, not a contradiction.

    Parameters
    ----------
    spec : Spectrum
        Velocity amplitude spectrum.
    stated_hz : float
        Stated speed of the shaft, Hz.
    exclude_hz : sequence of float
        Lines that count for no family, Hz.
    others_hz : sequence of float
        The other shafts' speeds, Hz.
    span : float
        How far from the stated speed candidates are searched (fraction).
    near : float
        Within this fraction a family is "near" the stated speed (within two
        lines, a Hann window's main lobe, too, when that reaches farther), and
        the tallest line near the stated 1X is looked for.

    Returns
    -------
    dict
        Each family's lines and chance (%), the tallest line within ``near``
        of the stated 1X over its floor (dB), the far family's 1X over its floor
        (dB), the far family's speed over the stated one (``far_family_scale``; 0
        when no harmonic stands) and its 1X, Hz.

    References
    ----------
    Common practice (a shaft is known by its harmonic family); the chance of a
    family from unrelated lines is a binomial tail (Feller 1968, "An
    Introduction to Probability Theory and Its Applications", vol. 1, chapter 6).

    Examples
    --------
    >>> from engine.analysis.spectrum import amplitude_spectrum
    >>> fs = 1024.0; t = np.arange(32768) / fs; rng = np.random.default_rng(0)
    >>> x = sum(np.sin(2 * np.pi * k * 24.7 * t) / k for k in range(1, 6)) + 0.01 * rng.standard_normal(len(t))
    >>> spec = amplitude_spectrum(x, fs)                              # harmonics of 24.7 Hz, lines 1/32 Hz apart
    >>> f = shaft_family(spec, 23.0)                    # stated 7 % low: the family lies beyond 5 %
    >>> f["far_family_lines"] >= 3, round(f["far_family_scale"] * 23.0, 1)
    (True, 24.7)
    """
    df = spec.resolution_hz
    amp = spec.amplitude
    orders = np.array([k for k in range(1, FAMILY_ORDERS + 1) if k * stated_hz * (1 + span) < spec.fmax_hz])
    empty = {"near_family_lines": 0, "near_family_chance_pct": 100.0, "near_one_x_db": 0.0, "far_family_lines": 0,
             "far_family_chance_pct": 100.0, "far_one_x_db": 0.0, "far_family_scale": 0.0, "far_family_hz": 0.0}
    if stated_hz <= 0 or not orders.size or stated_hz * (1 - span) < 3 * df:
        return empty
    step = df / (4 * orders.max() * stated_hz)
    scales = np.arange(1 - span, 1 + span + step, step)
    freqs = np.outer(scales, orders * stated_hz)
    lines = np.clip(np.rint(freqs / df).astype(int), 1, len(amp) - 2)
    local = np.maximum(np.maximum(amp[lines - 1], amp[lines]), amp[lines + 1])
    # the fine grid visits each line many times: each line's floor is taken once (the lines visited, in order,
    # and each visit's place among them; what np.unique(lines, return_inverse=True) gives, without a sort)
    first = int(lines.min())
    visited = np.zeros(int(lines.max()) - first + 1, bool)
    visited[lines - first] = True
    distinct = np.flatnonzero(visited) + first
    where = (np.cumsum(visited) - 1)[lines - first]
    floors = np.maximum(spec.floor_at(distinct)[where], 1e-300)
    snr = local / floors
    excluded = np.asarray(exclude_hz, dtype=float)
    blocked = np.zeros(freqs.shape, bool)
    reach = (freqs.min() - 3 * df, freqs.max() + 3 * df)     # a line beyond it blocks no candidate
    for hz in excluded[(excluded >= reach[0]) & (excluded <= reach[1])]:
        blocked |= np.abs(freqs - hz) <= 2 * df
    hit = (snr >= MIN_HARMONIC_SNR) & ~blocked
    score = (np.where(hit, np.log(np.clip(snr, 1.0, 100.0)), 0.0) / orders[None, :]).sum(axis=1)
    own = np.array([k * hz for hz in others_hz for k in (1 / 3, 1 / 2, 1, 2, 3)])
    if own.size:
        score[np.any(np.abs(scales[:, None] * stated_hz - own[None, :]) <= near * own[None, :], axis=1)] = 0.0
    # a candidate within a Hann main lobe (2 lines) of the stated 1X cannot be told from it: on a short record
    # the stated speed's own 1X line would otherwise make a "family elsewhere" one line away
    is_near = np.abs(scales - 1) <= max(near, NEAR_LINES * df / stated_hz)
    census = _census(spec, orders.max() * stated_hz * (1 + span) * (1 + CENSUS_REACH))

    def family(mask: np.ndarray) -> tuple[int, float, float, float]:
        """(lines, chance %, 1X over the stated 1X, the 1X line over its floor in dB) of the best family."""
        if not mask.any() or score[mask].max() <= 0:
            return 0, 100.0, 0.0, 0.0
        best = float(scales[mask][np.argmax(score[mask])])
        found = peaks_near(spec, orders * best * stated_hz, 1.5 * df)
        floor = np.maximum(spec.floor_at(found.line), 1e-300)
        ok = found.found & (found.amplitude >= MIN_HARMONIC_SNR * floor)
        ok &= ~np.array([np.any(np.abs(excluded - k * best * stated_hz) <= 2 * df) for k in orders])
        if not ok.any():
            return 0, 100.0, best, 0.0
        # a strong line scores over the lines either side of it, so the best candidate can lie off the family's
        # true 1X by up to a line at its order, and its higher harmonics fall beyond the line they are looked
        # for within: they are looked for again at the multiples the family's tallest line gives (the line
        # whose place the interpolation fixes best)
        tallest = int(np.argmax(np.where(ok, found.amplitude / floor, 0.0)))
        anchor = float(found.freq_hz[tallest] / orders[tallest])
        again = peaks_near(spec, orders * anchor, 1.5 * df)
        again_floor = np.maximum(spec.floor_at(again.line), 1e-300)
        again_ok = again.found & (again.amplitude >= MIN_HARMONIC_SNR * again_floor)
        again_ok &= ~np.array([np.any(np.abs(excluded - k * anchor) <= 2 * df) for k in orders])
        if again_ok.sum() >= ok.sum():
            found, floor, ok = again, again_floor, again_ok
        one_x = float(np.average(found.freq_hz[ok] / orders[ok], weights=orders[ok]))
        if not mask[np.argmin(np.abs(scales - one_x / stated_hz))]:
            return 0, 100.0, 0.0, 0.0       # its lines put its 1X on the other side of ``near``
        ok &= np.abs(found.freq_hz - orders * one_x) <= df
        searched = float(np.count_nonzero(mask)) * step * stated_hz
        chance = _family_chance(spec, census, one_x, orders, int(ok.sum()), searched)
        one_x_db = 20 * np.log10(found.amplitude[0] / floor[0]) if ok[0] and orders[0] == 1 else 0.0
        return int(ok.sum()), 100.0 * chance, one_x / stated_hz, float(one_x_db)

    near_lines, near_chance, _, _ = family(is_near)
    far_lines, far_chance, far_scale, far_one_x_db = family(~is_near)
    # the tallest line (a local maximum) within ``near`` of the stated 1X: the machine's own 1X, if the stated
    # speed holds; the far family's own 1X, when it lies just beyond ``near``, is not counted
    freq, height = census
    around = (np.abs(freq - stated_hz) <= near * stated_hz) & (height >= MIN_HARMONIC_SNR)
    around &= ~np.any(np.abs(freq[:, None] - excluded[None, :]) <= 2 * df, axis=1) if excluded.size else True
    if far_one_x_db > 0:
        around &= np.abs(freq - far_scale * stated_hz) > 1.5 * df
    near_one_x_db = float(20 * np.log10(height[around].max())) if around.any() else 0.0
    return {"near_family_lines": near_lines, "near_family_chance_pct": near_chance, "near_one_x_db": near_one_x_db,
            "far_family_lines": far_lines, "far_family_chance_pct": far_chance, "far_one_x_db": far_one_x_db,
            "far_family_scale": far_scale, "far_family_hz": far_scale * stated_hz}
