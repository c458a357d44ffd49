"""Bearing defect tones in the squared envelope spectrum, and their load-zone modulation.

The SES is computed in the analysis stage from the cepstrum-prewhitened signal in
the band the kurtogram chose (Randall & Antoni 2011). A defect rate slips by
1-2 % in a real bearing, so each harmonic k is looked for within 2 % of k
times the expected rate, and its height is judged against the median of the
SES within 15 % of it.

Several families can fit one line: two bearings whose rates lie within the
slip tolerance of each other, or a cage rate whose harmonics fall on a race
rate (BPFO = n x FTF). Each line found is therefore given to the family that
explains it best (the closest match; when two matches lie within 1 % of each
other, which slip alone can cause, the lower harmonic, then a race or ball rate
before the cage, then the bearing under the sensor); a line that a stronger
family's first-order sideband (1X for a race, FTF for a ball) explains better is
that family's too. Each fact says how many of its harmonics it owns, how
exactly they match, and on which channel the family stands out most: the
measurements the rulebooks' rivalry rules weigh.
"""

from __future__ import annotations

import math

import numpy as np

from ..analysis import Analysis
from ..analysis.peaks import Peak
from .matching import SLIP_TOLERANCE, SPEED_TOLERANCE, TIE, clear_lines, db, find_lines, tolerance_hz
from .signs import SIGNS, envelope_line, match_fit

HARMONICS = {"BPFO": 5, "BPFI": 5, "BSF": 5, "FTF": 3}
MODULATION_ORDERS = 3
SIDEBAND_TOLERANCE = 0.003     # a sideband sits at a measured carrier +- a rate known to the refined speed
MODULATION_TOLERANCE = 0.005   # the modulation line itself: the refined speed's precision
SHAFT_ORDER_TOLERANCE = 0.003


def _defects(rc: Analysis):
    """(bearing rates, defect, impact rate in Hz): BSF as the ball defect rate, 2 x BSF."""
    for b in rc.rates.bearings:
        for defect in HARMONICS:
            yield b, defect, b.impact_rate_hz(defect)


def _harmonics(ses, targets):
    """Harmonics of each target in the SES, leaving out lines at whole orders of the shaft.

    ``targets`` holds (rate Hz, harmonics, shaft Hz); the result holds, per
    target, {k: Peak}. Shaft orders appear in an envelope whenever anything
    modulates at 1X; a defect rate is not a whole order, so a line at one is
    not its evidence (unless the defect's own harmonic falls on that order too).
    """
    wanted = [(t, k, k * rate) for t, (rate, n, _) in enumerate(targets) for k in range(1, n + 1)]
    lines = find_lines(ses, [w[2] for w in wanted], SLIP_TOLERANCE, wide_floor=True)
    found = [{} for _ in targets]
    for i, (t, k, expected) in enumerate(wanted):
        peak = lines.peak(i)
        if peak is None:
            continue
        shaft_hz = targets[t][2]
        if _on_shaft_order(ses, peak.freq_hz, shaft_hz) and not _on_shaft_order(ses, expected, shaft_hz):
            continue
        found[t][k] = peak
    return found


def _on_shaft_order(ses, freq_hz, shaft_hz) -> bool:
    order = round(freq_hz / shaft_hz)
    return order >= 1 and abs(freq_hz - order * shaft_hz) <= tolerance_hz(ses, freq_hz, SHAFT_ORDER_TOLERANCE)


COMB_ORDERS = 20          # the first orders of a shaft looked at for its once-per-turn comb
COMB_SHARE = 0.6          # the share of them that must stand clear for the comb to stand


def _combed_speeds(ses, lines, speeds_hz) -> list[float]:
    """The shaft speeds (Hz) whose once-per-turn comb stands in the SES.

    One impact per turn of a shaft (a damaged tooth, a rub) puts a line at
    nearly every order of that shaft in the envelope (a periodic impulse
    train's spectrum is a comb at its repetition rate; Randall 2011, Vibration-
    based Condition Monitoring, section 3.6): the comb stands when at least
    ``COMB_SHARE`` of the first ``COMB_ORDERS`` orders below Fmax hold a clear line
    within the shaft-order tolerance.
    """
    _, freq, _ = lines
    out = []
    for hz in speeds_hz:
        orders = [k * hz for k in range(1, COMB_ORDERS + 1) if k * hz <= ses.fmax_hz * 0.98
                  and k * hz >= 3 * ses.resolution_hz]
        if len(orders) < COMB_ORDERS // 2 or not len(freq):
            continue
        on = sum(1 for f in orders
                 if np.min(np.abs(freq - f)) <= tolerance_hz(ses, f, SHAFT_ORDER_TOLERANCE))
        if on >= COMB_SHARE * len(orders):
            out.append(hz)
    return out


def _leave_shaft_combs(ses, lines, speeds_hz, defects, all_found) -> None:
    """Take from a family every line when all of them are orders of a shaft whose comb stands in the SES.

    A once-per-turn comb of a slow shaft has lines so close together that
    some of them fall within slip of any defect rate's harmonics (a tooth
    struck once per turn of a 5 Hz shaft put lines within 1 % of BPFI and 2 x
    BSF of a bearing two gear stages away). A family whose every line is an
    order of such a shaft is explained by that shaft (the smaller set of
    causes covers its lines: parsimonious covering, Peng & Reggia 1990),
    unless its rate is itself an order of that shaft and its lines stand
    above the comb's other orders (``_above_comb``: then its lines are both).
    """
    combed = _combed_speeds(ses, lines, speeds_hz)
    if not combed:
        return
    for t, ((_, _, rate), found) in enumerate(zip(defects, all_found)):
        if not found:
            continue
        for hz in combed:
            if not all(_on_shaft_order(ses, p.freq_hz, hz) for p in found.values()):
                continue
            if not _on_shaft_order(ses, rate, hz) or not _above_comb(ses, lines, hz, rate, found):
                all_found[t] = {}
                break


ABOVE_COMB = 2.0    # a family on a comb's orders is its own only when its lines stand 6 dB over the comb's others


def _above_comb(ses, lines, shaft_hz: float, rate_hz: float, found) -> bool:
    """Whether a family whose rate is an order of a combed shaft stands above the comb's other orders.

    A rate within a line or two of an order of the shaft (an output bearing's
    BPFO at 2.02 x a faster shaft's speed) puts every line on the comb: the
    comb alone explains them unless they stand higher than the orders the rate
    does not reach (a second periodic source adds to the lines it shares, and
    a once-per-turn impulse train's comb falls off smoothly with order: Randall
    2011, Vibration-based Condition Monitoring, section 3.6). 6 dB over the
    median of the other orders' lines, within the family's span, is common
    practice for a line that clearly stands out; with fewer than three other
    orders to compare the family keeps its lines.
    """
    step = max(1, round(rate_hz / shaft_hz))
    if step < 2:
        return True
    index, freq, _ = lines
    top = max(p.freq_hz for p in found.values())
    others = []
    for k in range(1, int(top / shaft_hz) + 2):
        if k % step == 0 or not len(freq):
            continue
        near = np.abs(freq - k * shaft_hz)
        j = int(np.argmin(near))
        if near[j] <= tolerance_hz(ses, k * shaft_hz, SHAFT_ORDER_TOLERANCE):
            others.append(float(ses.amplitude[index[j]]))
    if len(others) < 3:
        return True
    own = float(np.median([p.amplitude for p in found.values()]))
    return own >= ABOVE_COMB * float(np.median(others))


DEFECT_RANK = {"BPFO": 0, "BPFI": 0, "BSF": 1, "FTF": 2}


def _owners(defects, all_found, location: str | None, fmax_hz: float,
            resolution_hz: float = 0.0) -> dict[tuple[int, int], bool]:
    """For each (family index, harmonic k) found, whether that family explains its line best.

    Families whose harmonics match a line within 1 % of the best match (slip
    alone can make that difference) compete for it. The line goes to the
    family with the most lines of its own that none of its rivals for the
    line found, counted over the span every rival searched: a rate whose
    every harmonic is also a harmonic of another family's rate (BPFO of one
    bearing at twice BPFO of another) has none, while the lower rate has its
    odd harmonics (parsimonious covering: the family that explains the lines
    between the other's is the one explanation that covers them all). Then
    the family that found more of its expected harmonics within that span,
    then the lower harmonic, a race or ball rate before the cage, the
    bearing under the sensor, the closer match.
    """
    claims: dict[int, list[tuple]] = {}
    lines_of = [{p.line: p.freq_hz for p in found.values()} for found in all_found]
    for t, ((b, defect, rate), found) in enumerate(zip(defects, all_found)):
        for k, peak in found.items():
            error = abs(peak.freq_hz / (k * rate) - 1)
            claims.setdefault(peak.line, []).append((error, k, DEFECT_RANK[defect], b.bearing != location, t))
    owned = {}
    for entries in claims.values():
        best = min(entries, key=lambda e: e[0])
        close = [e for e in entries if e[0] <= best[0] + TIE]
        if len(close) > 1:
            rivals = [e[4] for e in close]
            span = min(min(HARMONICS[defects[t][1]] * defects[t][2], fmax_hz * 0.98) for t in rivals) * (1 + TIE)

            # own and covered are called within this iteration only, so they read this iteration's rivals and span
            def own(t):
                others = set().union(*(lines_of[u] for u in rivals if u != t))  # noqa: B023
                return sum(1 for line, f in lines_of[t].items() if f <= span and line not in others)  # noqa: B023

            def covered(t):
                expected = int(span / defects[t][2])  # noqa: B023
                return sum(1 for f in lines_of[t].values() if f <= span) / expected if expected else 0.0  # noqa: B023

            rank = {id(e): (-own(e[4]), -covered(e[4]), e[1], e[2], e[3]) for e in close}
            winner = min(close, key=lambda e: (rank[id(e)], e[0]))
            # the same defect of two bearings at one rate (one model twice on a shaft), neither under the
            # sensor: the sensor cannot tell them apart, so the line is both families' and the reasoning
            # weighs where each stands out (a listing order is no reason to pick one)
            winners = [e for e in close if rank[id(e)] == rank[id(winner)] and e[3]
                       and abs(e[0] - winner[0]) <= TIE] if winner[3] else [winner]
        else:
            winners = [best]
        for e in entries:
            owned[(e[4], e[1])] = any(e is w for w in winners)
    _give_sidebands(defects, all_found, owned, resolution_hz)
    return owned


def harmonics_searched(defect: str) -> int:
    """How many harmonics of ``defect`` (BPFO, BPFI, BSF or FTF) the envelope evidence looks for, and so
    the most an ``envelope_tone`` fact can own (its ``harmonics_checked``)."""
    return HARMONICS[defect]


class _Centres:
    """Frequencies taken as one line when within TIE of each other: ``index(f)`` is the first centre (in the
    order they came) within TIE of f, or f itself as a new centre. Such a centre's log lies within about
    TIE of log f, so only the centres in f's bucket of log frequency (TIE wide) and the two each side are
    tried: the same answer as trying every centre in order, without the quadratic cost."""

    def __init__(self) -> None:
        self.centres: list[float] = []
        self.near: dict[int, list[int]] = {}

    def index(self, freq: float) -> int:
        """The centre of ``freq`` (Hz, > 0)."""
        bucket = math.floor(math.log(freq) / TIE)
        for i in sorted(i for b in range(bucket - 2, bucket + 3) for i in self.near.get(b, ())):
            if abs(freq / self.centres[i] - 1) < TIE:
                return i
        self.centres.append(freq)
        self.near.setdefault(bucket, []).append(len(self.centres) - 1)
        return len(self.centres) - 1


def shared_lines(rates, location: str | None) -> dict[tuple[str, str], list[tuple[int, str, str, int]]]:
    """For every bearing family, the harmonics (of the first ones searched) another family would own if every
    family's lines stood at its exact rates: {(bearing, defect): [(k, other bearing, other defect, j)]}.

    Rates within 1 % of each other are taken as one line, and ``_owners`` decides, so the acquisition
    planner judges a geometry by the same rule the envelope evidence applies to a reading.
    """
    defects = [(b, defect, b.impact_rate_hz(defect)) for b in rates.bearings for defect in HARMONICS]
    line_of = _Centres().index
    found = [{k: Peak(k * rate, 1.0, line_of(k * rate), 10.0) for k in range(1, HARMONICS[defect] + 1)}
             for _, defect, rate in defects]
    fmax = max(p.freq_hz for f in found for p in f.values()) * 2
    owned = _owners(defects, found, location, fmax)
    owner_of = {found[t][k].line: (t, k) for (t, k), mine in owned.items() if mine}
    out = {}
    for t, (b, defect, _) in enumerate(defects):
        taken = []
        for k, peak in found[t].items():
            if not owned[(t, k)] and peak.line in owner_of:
                u, j = owner_of[peak.line]
                taken.append((k, defects[u][0].bearing, defects[u][1], j))
        out[(b.bearing, defect)] = taken
    return out


SIDEBAND_OF = {"BPFO": "shaft_hz", "BPFI": "shaft_hz", "BSF": "ftf_hz"}
SIDEBAND_MARGIN = SPEED_TOLERANCE   # the modulation's place is known to the speed's precision, a family's only to slip


def _give_sidebands(defects, all_found, owned, resolution_hz: float = 0.0) -> None:
    """Take from a family the lines that a stronger family's first-order sideband explains better.

    A race tone modulated at 1X, or a ball tone at FTF, puts lines at k x rate
    +- the modulation; a sideband of a strong carrier can fall within slip of
    another family's harmonic (for a 6203, BPFO + 1X lies 1.6 % from 2 x BSF).
    Such a line is the stronger family's when it sits closer to the measured
    carrier +- the modulation than to the other family's expected harmonic by
    more than the sideband's own uncertainty, and the carrier stands higher
    than the line. That uncertainty is the modulation's (the speed is refined
    to SIDEBAND_MARGIN, 0.5 %, of 1X, and FTF follows it) plus a line of the
    spectrum (where the carrier's peak is read), as a fraction of the line's
    frequency; the other family's rate is known only to its 1-2 % slip. (It
    was 0.5 % of the line itself: at 3 x BPFI + 1X of a 6312, 390 Hz, that is
    2 Hz, while 1X is known to 0.12 Hz, and a gearbox bearing's BPFI 0.46 %
    away kept the line.)
    """
    carriers = [(t, peak.line, peak.snr, peak.freq_hz, getattr(b, SIDEBAND_OF[defect]))
                for t, ((b, defect, _), found) in enumerate(zip(defects, all_found)) if defect in SIDEBAND_OF
                for k, peak in found.items() if owned[(t, k)]]
    if not carriers:
        return
    family, line, snr, freq, mod = (np.array(column) for column in zip(*carriers))
    strongest = float(np.fmax.reduce(snr))       # only a carrier standing higher than a line can take it
    sidebands = np.concatenate([freq - mod, freq + mod])
    margins = np.tile(SIDEBAND_MARGIN * mod + resolution_hz, 2)      # Hz
    for t, ((_, _, rate), found) in enumerate(zip(defects, all_found)):
        for k, peak in found.items():
            if not owned[(t, k)] or peak.snr >= strongest:
                continue
            own_error = abs(peak.freq_hz / (k * rate) - 1)
            claims = np.tile((family != t) & (line != peak.line) & (snr > peak.snr), 2)
            if not claims.any():
                continue
            gaps = (np.abs(peak.freq_hz - sidebands[claims]) + margins[claims]) / peak.freq_hz
            if np.min(gaps) < own_error:
                owned[(t, k)] = False


CENSUS_REACH = 0.15     # unrelated lines are counted within +-15 % of each harmonic (the wide floor's reach)


def chance_of(ses, lines: tuple[np.ndarray, np.ndarray, np.ndarray], rate: float, harmonics: int, owned: int,
              first_snr: float, least_snr: float, shaft_hz: float, companion_hz: float | None) -> float:
    """Probability that unrelated lines would give a family its fundamental and ``owned`` harmonics in all.

    A spectrum crowded with lines (another machine's impacts, a gear's
    residue, noise) lets any rate find harmonics within its slip tolerance.
    Around each harmonic (within +-15 %) the lines the family does not
    explain (not its harmonics, not their first-order sidebands at
    ``companion_hz``, not shaft orders, which no family may take) give the
    local density of unrelated lines at least as high as the family's
    fundamental (``first_snr``) or its weakest harmonic (``least_snr``); the
    chance that the harmonic's search window holds such a line anyway is
    1 - exp(-density x width) (lines placed at random, a Poisson process).
    The result is the chance of the fundamental times the chance of at least
    ``owned - 1`` of the other harmonics (a Poisson-binomial tail).
    """
    ks = [k for k in range(1, harmonics + 1) if k * rate <= ses.fmax_hz * 0.98]
    if not ks or owned < 1:
        return 1.0
    centres = np.array([k * rate for k in ks])
    half = np.array([tolerance_hz(ses, c, SLIP_TOLERANCE) for c in centres])
    _, freq, snr = lines
    explained = (np.abs(freq[:, None] - centres[None, :]) <= half[None, :]).any(axis=1)
    if companion_hz:
        side_tol = max(1.5 * ses.resolution_hz, SIDEBAND_TOLERANCE * rate)
        sides = np.concatenate([centres - companion_hz, centres + companion_hz])
        explained |= (np.abs(freq[:, None] - sides[None, :]) <= side_tol).any(axis=1)
    order = np.rint(freq / shaft_hz)
    explained |= (order >= 1) & (np.abs(freq - order * shaft_hz) <= np.maximum(1.5 * ses.resolution_hz,
                                                                            SHAFT_ORDER_TOLERANCE * freq))
    unrelated_f, unrelated_snr = freq[~explained], snr[~explained]
    p = np.zeros(len(ks))
    for i, (centre, h) in enumerate(zip(centres, half)):
        reach = max(CENSUS_REACH * centre, 25 * ses.resolution_hz, 2 * h)
        near = np.abs(unrelated_f - centre) <= reach
        height = first_snr if i == 0 else least_snr
        count = np.count_nonzero(near & (unrelated_snr >= height))
        p[i] = 1.0 - np.exp(-count / (2 * reach - 2 * h) * 2 * h)
    tail = np.zeros(len(ks))     # P(exactly j of the other harmonics), then the tail
    tail[0] = 1.0
    for q in p[1:]:
        tail[1:] = tail[1:] * (1 - q) + tail[:-1] * q
        tail[0] *= 1 - q
    return float(p[0] * tail[max(owned - 1, 0):].sum())


def envelope_evidence(rc: Analysis) -> list[dict]:
    """Bearing defect tones in each channel's squared envelope spectra, and their load-zone modulation.

    One harmonic search per envelope view (the kurtogram band, and the wide
    prewhitened band) gives both kinds of fact: an ``envelope_tone`` for each
    defect whose rate or harmonics stand out, and a ``load_zone_modulation``
    for each race or ball defect found, from the sidebands round its first
    three harmonics.
    """
    tones, zones = [], []
    defects = list(_defects(rc))
    speeds = sorted({round(hz, 9) for hz in rc.speeds_hz.values()})
    # across a belt a point weighs the other shaft's bearings only while no channel of the reading sits on that
    # shaft: its own housings would show their impacts far louder (Machine.shafts_heard_from)
    measured = {c.point.shaft for c in rc.channels if c.point}
    for c in rc.channels:
        seen = set(rc.speeds_hz)
        if c.point:
            heard = rc.machine.shafts_heard_from(c.point.shaft)
            seen = heard | {s for s in rc.machine.shafts_seen_from(c.point.shaft) - heard if s not in measured}
        for view in c.envelopes:
            found = _harmonics(view.ses, [(rate, HARMONICS[defect], b.shaft_hz) for b, defect, rate in defects])
            lines = clear_lines(view.ses)
            _leave_shaft_combs(view.ses, lines, speeds, defects, found)
            owned = _owners(defects, found, c.location, view.ses.fmax_hz, view.ses.resolution_hz)
            tones += _tone_facts(c, view, defects, found, owned, lines, seen)
            zones += _modulation_facts(c, view, defects, found, owned)
    _mark_strongest(tones)
    return tones + zones


def _mark_strongest(tones: list[dict]) -> None:
    """Name, for each family and view, the channel where it stands out most (the transmission path
    from a defect weakens it on the way to other sensors)."""
    best: dict[tuple, dict] = {}
    for f in tones:
        key = (f["component"], f["defect"], f["band_method"])
        if key not in best or f["max_snr_db"] > best[key]["max_snr_db"]:
            best[key] = f
    for f in tones:
        top = best[(f["component"], f["defect"], f["band_method"])]
        f["strongest_channel"] = top["channel"]
        f["strongest_location"] = top["location"]
        f["below_strongest_db"] = top["max_snr_db"] - f["max_snr_db"]


def _ball_rate_on_shaft_order(b) -> bool:
    """Whether the bearing's ball defect rate (2 x BSF) lies within slip of a whole order of its shaft: its
    lines then cannot be told from shaft harmonics, and its modulation at FTF from a cage's tones."""
    ball = b.impact_rate_hz("BSF")
    order = round(ball / b.shaft_hz)
    return bool(order >= 1 and abs(ball / (order * b.shaft_hz) - 1) <= SLIP_TOLERANCE)


def _twin(b, defect: str, rate: float, defects) -> str:
    """The other bearing whose rate of ``defect`` lies nearest ``rate``, within ``TIE`` (one model twice on a
    shaft, or two models whose rates coincide), or "": the lines alone cannot tell the two apart."""
    close = [(abs(r / rate - 1), o.bearing) for o, d, r in defects
             if d == defect and o.bearing != b.bearing and abs(r / rate - 1) <= TIE]
    return min(close)[1] if close else ""


def _rate_group(b, defect: str, rate: float, defects) -> str:
    """The bearings whose rates of ``defect`` chain within ``TIE`` of each other with this one's, ids sorted and
    joined by ", ", or "" when none is that near: three alike bearings (a motor's two and a pump's one) are one
    group, where ``twin`` names only the nearest, so a rule can weigh every bearing the lines may come from."""
    rates = {o.bearing: r for o, d, r in defects if d == defect}
    rates[b.bearing] = rate
    group, grew = {b.bearing}, True
    while grew:
        near = {o for o, r in rates.items() if o not in group and any(abs(r / rates[g] - 1) <= TIE for g in group)}
        group |= near
        grew = bool(near)
    return ", ".join(sorted(group)) if len(group) > 1 else ""


def _alike(b, defect: str, rate: float) -> str:
    """Another defect of the same bearing whose impact rate lies within ``TIE`` of ``rate`` (a ball's 2 x BSF
    beside BPFO, as in some spherical roller bearings), or "": the lines alone cannot tell the two apart, only
    what rides on them (a ball's cage-rate modulation) or a finer look. Race and ball rates only: the cage
    rate is a low comb whose harmonics the line sharing already weighs."""
    if defect == "FTF":
        return ""
    close = [(abs(b.impact_rate_hz(d) / rate - 1), d) for d in ("BPFO", "BPFI", "BSF")
             if d != defect and abs(b.impact_rate_hz(d) / rate - 1) <= TIE]
    return min(close)[1] if close else ""


def _tone_facts(c, view, defects, all_found, owned, lines, seen: set[str]) -> list[dict]:
    out = []
    ses = view.ses
    for t, ((b, defect, rate), found) in enumerate(zip(defects, all_found)):
        checked = sum(1 for k in range(1, HARMONICS[defect] + 1) if k * rate <= ses.fmax_hz * 0.98)
        if not found:
            continue
        first = found.get(1)
        n_owned = sum(1 for k in found if owned[(t, k)])
        fundamental = first is not None and owned[(t, 1)]
        companion = getattr(b, SIDEBAND_OF[defect]) if defect in SIDEBAND_OF else None
        chance = 1.0
        if fundamental:
            least = min(p.snr for k, p in found.items() if owned[(t, k)])
            chance = chance_of(ses, lines, rate, HARMONICS[defect], n_owned, first.snr, least, b.shaft_hz, companion)
        out.append(c.base() | {
            "kind": "envelope_tone", "defect": defect, "component": b.bearing, "shaft": b.shaft,
            "expected_hz": rate, "freq_hz": first.freq_hz if first else 0.0,
            "deviation_pct": (first.freq_hz / rate - 1) * 100 if first else 0.0,
            "harmonics_found": len(found), "harmonics_checked": checked,
            "first_snr_db": db(first.snr) if first else 0.0,
            "max_snr_db": max(db(p.snr) for p in found.values()),
            "harmonics_owned": n_owned,
            "fundamental_owned": bool(fundamental),
            "chance_pct": 100 * chance,
            "ball_rate_on_shaft_order": _ball_rate_on_shaft_order(b),
            "shaft_seen": b.shaft in seen,
            "twin": _twin(b, defect, rate, defects),
            "rate_group": _rate_group(b, defect, rate, defects),
            "alike_defect": _alike(b, defect, rate),
            "match_error_pct": 100 * float(np.mean([abs(p.freq_hz / (k * rate) - 1) for k, p in found.items()])),
            "band_method": view.method, "band_lo_hz": view.band_hz[0], "band_hi_hz": view.band_hz[1],
            "band_kurtosis": view.band_kurtosis,
            SIGNS: (_comb(c, view, lines, first.freq_hz, HARMONICS[defect]) if fundamental else {})
            | {envelope_line(c.name, view.method, p.line): match_fit(p.freq_hz / (k * rate) - 1, SLIP_TOLERANCE)
               for k, p in found.items() if owned[(t, k)]},
        })
    return out


def _comb(c, view, lines, fundamental_hz: float, searched: int) -> dict[str, float]:
    """The lines of a family's harmonics beyond the ones searched, up to the spectrum's end.

    A defect's impacts put lines at every harmonic of its rate; a family
    explains them all, and a rival rate whose harmonics land among them is
    explained away (``reasoning.explaining``). Harmonic k of the measured
    fundamental is known to k times the fundamental's own precision (a
    quarter line, interpolated), and a line is read to 1.5 lines.
    """
    index, freq, _ = lines
    beyond = freq > (searched + 0.5) * fundamental_hz
    if not beyond.any():
        return {}
    f = freq[beyond]
    k = np.rint(f / fundamental_hz)
    error = f / (k * fundamental_hz) - 1
    tolerance = (1.5 + 0.25 * k) * view.ses.resolution_hz / f
    near = np.abs(error) <= tolerance
    return {envelope_line(c.name, view.method, i): match_fit(e, tol)
            for i, e, tol in zip(index[beyond][near], error[near], tolerance[near])}


def _modulation_facts(c, view, all_defects, all_harmonics, owned) -> list[dict]:
    """Envelope sidebands at defect harmonics +- 1X and +- FTF, and the depth they imply.

    A defect passing through the load zone once per turn of the rotating part
    that carries it modulates its impacts: an inner-race spall at 1X, a
    rolling element at FTF; a stationary outer-race spall is not modulated
    (Randall & Antoni 2011, section 2.1). For sinusoidal modulation of depth m
    each sideband is m/2 of its carrier, so depth = (lower + upper) / carrier.
    Only a family whose fundamental it owns has carriers to be modulated.
    """
    out: list[dict] = []
    ses = view.ses
    kept = [(d, {k: p for k, p in h.items() if k <= MODULATION_ORDERS})
            for t, (d, h) in enumerate(zip(all_defects, all_harmonics))
            if d[1] != "FTF" and 1 in h and owned[(t, 1)]]
    defects = [d for d, _ in kept]
    all_found = [h for _, h in kept]
    # every sideband of every carrier and the modulation lines themselves, in one search each
    sides, mods = [], []
    for d, ((b, _defect, _rate), found) in enumerate(zip(defects, all_found)):
        if not found:
            continue
        for modulation, mod_hz in (("1X", b.shaft_hz), ("FTF", b.ftf_hz)):
            mods.append((d, modulation, mod_hz))
            for k, carrier in found.items():
                sides += [(len(mods) - 1, k, carrier.freq_hz + sign * mod_hz) for sign in (-1, 1)]
    if not mods:
        return out
    side_lines = find_lines(ses, [x[2] for x in sides], SIDEBAND_TOLERANCE, wide_floor=True)
    mod_targets = [(j, k, k * mod_hz) for j, (_, _, mod_hz) in enumerate(mods) for k in range(1, MODULATION_ORDERS + 1)]
    mod_lines = find_lines(ses, [x[2] for x in mod_targets], MODULATION_TOLERANCE, wide_floor=True)
    mod_at = {(j, k): i for i, (j, k, _) in enumerate(mod_targets)}
    side_amplitude = np.where(side_lines.found, side_lines.amplitude, 0.0)
    by_carrier: dict[tuple[int, int], list[int]] = {}
    for i, (j, k, _) in enumerate(sides):
        by_carrier.setdefault((j, k), []).append(i)
    for j, (d, modulation, mod_hz) in enumerate(mods):
        b, defect, _ = defects[d]
        count, depths, signs = 0, [], {}
        for k, carrier in all_found[d].items():
            at = by_carrier[(j, k)]
            count += int(np.count_nonzero(side_lines.found[at]))
            depths.append(float(sum(side_amplitude[i] for i in at)) / carrier.amplitude)
            for i in at:
                if side_lines.found[i]:
                    signs[envelope_line(c.name, view.method, side_lines.line[i])] = match_fit(
                        side_lines.freq_hz[i] / sides[i][2] - 1, SIDEBAND_TOLERANCE)
        # the modulation itself shows as a line at its rate and harmonics: a damaged ball riding with the
        # cage puts FTF into the envelope, an inner-race defect 1X (Randall & Antoni 2011, section 2.1)
        for k in range(1, MODULATION_ORDERS + 1):
            peak = mod_lines.peak(mod_at[(j, k)])
            if peak is not None:
                signs[envelope_line(c.name, view.method, peak.line)] = match_fit(
                    peak.freq_hz / (k * mod_hz) - 1, MODULATION_TOLERANCE)
        line = mod_lines.peak(mod_at[(j, 1)])
        out.append(c.base() | {
            "kind": "load_zone_modulation", "defect": defect, "component": b.bearing,
            "band_method": view.method, "modulation": modulation, "modulation_hz": mod_hz,
            "sideband_count": count, "depth": max(depths), "line_snr_db": db(line.snr) if line else 0.0,
            SIGNS: signs if count else {},
        })
    return out
