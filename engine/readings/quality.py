"""Data-quality gates: what is wrong with a signal before anyone trusts it.

Each gate looks at one channel and returns ``QualityIssue`` values. They never
raise: a clipped or drifting reading is still a reading, and the report must
say why its conclusions are weak. Thresholds are common practice for
AC-coupled accelerometer data and are stated beside each gate.

Every statistic is computed on the samples divided by their largest
magnitude, so a signal of 1e-300 or 1e300 units neither underflows nor
overflows; the level gates then judge the physical size separately.
"""

from __future__ import annotations

import numpy as np

from .band_rms import INTEGRATIONS_TO_VELOCITY, ISO_BAND_HZ, band_rms_of_fft
from .length import MIN_REVOLUTIONS_TO_ANALYSE
from .model import Channel, QualityIssue

CLIP_FULL_SCALE_FRACTION = 0.999  # a sample at >= 99.9 % of the recorder's full scale is clipped
FLAT_TOP_MIN_RUN = 3              # equal consecutive samples at the extreme: flat-topped
DC_OFFSET_RATIO = 0.25            # |mean| above a quarter of the AC RMS: sensor bias suspect
DRIFT_SEGMENTS = 16
DRIFT_RATIO = 1.0                 # segment means spreading over one AC RMS: slow drift
DRIFT_TONES = 3                   # tones of two cycles or more whose spread is set aside before drift is judged
DROPOUT_MIN_S = 0.005             # 5 ms of identical samples mid-signal: a dropout

# Clipping from the amplitude distribution. Near a smooth (quadratic) maximum a
# signal spends a time proportional to sqrt(eps) within eps of it, so the samples
# within 4 eps of an extreme are twice those within eps; at a flat top (a clipped
# signal) widening adds almost none [derived]. Windows are measured from the
# extreme itself. The whole records of the CWRU drive-end set never hold enough
# samples that close to an extreme to be judged; clipped at 30 % of their peak
# they give ratios of 1.02 to 1.10, simulated faults of every kind 1.3 or more
# (bench.quality_gates scans the real records; bench.confusion withholds no
# simulated reading).
PLATEAU_WIDTHS = (0.004, 0.01, 0.02, 0.04, 0.08)   # eps, fractions of the peak-to-peak range
PLATEAU_GROWTH = 1.2              # samples within 4 eps / within eps: below this, a flat top
PLATEAU_MIN_SAMPLES = 100         # a plateau holds at least this many samples ...
PLATEAU_MIN_FRACTION = 0.002      # ... and this fraction of the record ...
PLATEAU_OVER_TYPICAL = 20         # ... and 20 x the count of a typical repeated value (periodic test tones)

# Physical range: outside it the samples come from no sensor (a wrong unit, scale or
# file); the channel is not analysed. Limits of the AC RMS, SI units.
PHYSICAL_RMS = {"acceleration": (1e-9, 1e6),    # 1e-10 g to 1e5 g
                "velocity": (1e-12, 1e2),       # 1 nm/s to 100 m/s
                "displacement": (1e-15, 1.0)}   # 1 fm to 1 m

# Plausible level: broadband velocity in the ISO 20816-3 band (10-1000 Hz), mm/s RMS, computed
# as the analysis computes its overall level (band_rms.py, the one home of both).
# Above 45 mm/s, the largest boundary of the ISO 10816-1 zone tables (from memory),
# machines fail within hours; 100 mm/s is not a machine in service. Below 0.001 mm/s
# the level is under the noise floor of general-purpose accelerometers (common
# practice): the machine is stopped or the gain is wrong.
LEVEL_BAND_HZ = ISO_BAND_HZ
PLAUSIBLE_VELOCITY_MM_S = (1e-3, 100.0)

# Plausible spectrum: velocity and displacement transducers, and the ISO band, stop
# near 1 kHz; a velocity or displacement record with most of its energy above 1 kHz
# is most likely acceleration stated in the wrong unit (common practice).
SHAPE_SPLIT_HZ = 1000.0
SHAPE_HIGH_FRACTION = 0.5

# Plausible slope: an acceleration record whose spectrum looks like a velocity record's. Velocity is
# acceleration divided by 2 pi f (handbook formula), so a velocity signal's spectrum falls 20 dB per
# decade of frequency relative to the same vibration's acceleration, and its energy gathers at the
# shaft's low orders. Two signs must both hold, each of which a real accelerometer can show alone:
# - its floor (the median line of a band, which the machine's discrete lines do not move) falls more than
#   SLOPE_FALL_DB_PER_DECADE from SLOPE_LOW_HZ to the bearing band. An accelerometer's floor (its own noise,
#   a machine's broadband friction, flow and impact energy) mostly stays level or rises toward the mounted
#   resonance (common practice): on the real records of bench/real_data.py (CWRU, MFPT, HIT-SM) it falls
#   by at most 11 dB per decade, but some FEMTO snapshots' floors fall by up to 26;
# - less than SLOPE_HIGH_FRACTION of its energy lies above SHAPE_SPLIT_HZ: on those real records at least
#   60 %, on every FEMTO snapshot at least 8.5 % (measured with this module; bench/quality_gates.py scans
#   them), while a velocity record keeps a few percent or less there.
# Judged only where the bearing band reaches an octave above SLOPE_HIGH_HZ[0] below 0.8 x the Nyquist
# frequency (an anti-alias filter's roll-off starts near there). A falling floor alone also fits an
# accelerometer on a hand-held probe, whose response falls above its mounted resonance (1-2 kHz):
# the report says so among what to check.
SLOPE_LOW_HZ = (100.0, 1000.0)
SLOPE_HIGH_HZ = (2000.0, 10000.0)
SLOPE_USABLE_NYQUIST = 0.8
SLOPE_FALL_DB_PER_DECADE = 15.0
SLOPE_HIGH_FRACTION = 0.05


# Issues that doubt only the size of a channel's samples (a wrong unit, sensitivity, gain or
# scale), not their shape: a wrong scale multiplies every sample by one factor, which moves
# no line in frequency and changes no ratio, no height over a local floor, no kurtosis and
# no crest factor. The channel's absolute levels are not measurements (its evidence leaves
# them out, it gets no ISO zone); what does not depend on the scale is still diagnosed.
SCALE_ISSUES = ("implausible_level", "implausible_spectrum", "implausible_slope")


def scale_doubts(issues) -> dict[str, tuple[str, ...]]:
    """channel -> the scale issues of it, for each channel whose scale is not to be trusted.

    ``issues`` are ``QualityIssue`` values or ``data_quality`` facts (dicts with ``channel``
    and ``issue``)."""
    out: dict[str, tuple[str, ...]] = {}
    for q in issues:
        channel, kind = (q["channel"], q["issue"]) if isinstance(q, dict) else (q.channel, q.kind)
        if kind in SCALE_ISSUES and kind not in out.get(channel, ()):
            out[channel] = out.get(channel, ()) + (kind,)
    return out


def same_scale(issues, channels) -> bool:
    """Whether a ratio between ``channels`` can be trusted: all have a trusted scale, or all are
    doubted by the same gates on the same side (levels all too high, or all too low), as when one
    unit, gain or scale was stated for the whole file. A trusted channel against a doubted one, or
    a level too high against one too low, makes any ratio between them as wrong as the scale."""
    states = set()
    for channel in channels:
        state = []
        for q in issues:
            if q.channel == channel and q.kind in SCALE_ISSUES:
                high = q.kind == "implausible_level" and q.value > PLAUSIBLE_VELOCITY_MM_S[1]
                state.append((q.kind, high))
        states.add(tuple(sorted(state)))
    return len(states) <= 1


# Issues that make a channel's samples false, not just its scale: nonfinite, dead or out-of-range
# samples cannot be analysed at all; clipping and dropouts put false harmonics and impacts in the
# spectrum and the envelope (common practice). A channel with one of them is left out of the analysis
# when another channel of the reading is free of them, so the rest of the reading is diagnosed; when
# none is, the channels are analysed as they are and the rulebook's reading.signal.broken withholds
# the diagnosis. The rules read this list through the data_quality fact's ``corrupting`` field
# (engine/evidence/acquisition.py), never a copy of it.
# Slow drift (segment means spreading over one AC RMS) is one of them: its error sits in the lowest lines, where
# it spoils what the diagnosis reads most: 1X and below, and the velocity spectrum, whose integration divides
# each line by 2 pi f and so lifts a low-frequency error most (and the ISO 20816-3 band reaches down to 10 Hz,
# 2 Hz below 600 r/min). Only the envelope band (kHz) stays sound; a channel judged on its envelope alone would
# read as the absence of every 1X pattern at its point, so it is left out whole (rulebooks/reading.yaml,
# reading.signal.drift and reading.signal.channel-left-out).
CORRUPTING_ISSUES = ("clipping", "dead", "drift", "dropout", "nonfinite", "out_of_range")


def corrupted(issues) -> bool:
    """Whether ``issues`` (``QualityIssue`` values of one channel) hold one that corrupts its samples."""
    return any(q.kind in CORRUPTING_ISSUES for q in issues)


# what each kind of issue is called where it is shown (tellwave reading, the reports)
ISSUE_NAMES = {
    "clipping": "clipping", "dc_offset": "DC offset", "drift": "slow drift", "dropout": "dropouts",
    "nonfinite": "samples that are not numbers", "dead": "dead channel", "out_of_range": "outside any sensor's range",
    "implausible_level": "implausible level", "implausible_spectrum": "implausible spectrum",
    "implausible_slope": "spectrum falls as velocity does",
    "too_short": "record too short",
}


def describe_issue(q: QualityIssue) -> str:
    """A quality issue in words, the same wherever it is shown: what it is, then what was measured
    and what it means (``clipping: 2 runs of equal samples (53419 in all) flatten the signal's extremes``)."""
    return f"{ISSUE_NAMES.get(q.kind, q.kind.replace('_', ' '))}: {q.message}"


def left_out_words(issues) -> str:
    """Why a channel was left out, short enough for a figure's title or an alarm row: the names of its
    corrupting issues (``ISSUE_NAMES``; ``describe_issue`` gives each in full)."""
    return ", ".join(dict.fromkeys(ISSUE_NAMES.get(q.kind, q.kind) for q in issues if q.kind in CORRUPTING_ISSUES))


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
                             f"{n_bad} NaN or infinite samples (or values too large for the unit); "
                             "the channel cannot be analysed", float(n_bad), blocking=True)]
    if np.ptp(x) == 0.0:
        return [QualityIssue("dead", ch.name, "the signal is constant: sensor or cable dead",
                             0.0, blocking=True)]
    size = float(np.max(np.abs(x)))
    ac = x / size                     # in [-1, 1]: no statistic below under- or overflows
    mean = float(ac.mean())
    ac -= mean                        # the AC part, in the same memory
    ac_rms = float(np.sqrt(np.mean(ac ** 2)))
    if ac_rms == 0.0:                 # a lone spike on a constant: no vibration to speak of
        return [QualityIssue("dead", ch.name, "the signal is constant but for a few samples: sensor or "
                             "cable dead", 0.0, blocking=True)]
    out_of_range = _physical_range(ch, ac_rms * size)
    if out_of_range:
        return out_of_range
    issues = []
    issues += _clipping(ch, x)
    if abs(mean) > DC_OFFSET_RATIO * ac_rms:
        issues.append(QualityIssue(
            "dc_offset", ch.name,
            f"mean is {abs(mean) / ac_rms:.2f} x the AC RMS: sensor bias or a DC-coupled input", abs(mean) / ac_rms))
    spread = _drift_spread(ac, ac_rms)
    if spread > DRIFT_RATIO:
        issues.append(QualityIssue(
            "drift", ch.name,
            f"segment means spread over {spread:.2f} x the AC RMS (settling sensor or thermal drift)",
            spread))
    issues += _dropouts(ch, x, fs_hz)
    issues += _plausibility(ch, ac, size, fs_hz)
    return issues


def _segment_spread(x: np.ndarray, ac_rms: float) -> float:
    """Spread of the means of ``DRIFT_SEGMENTS`` equal segments of ``x``, over ``ac_rms``."""
    means = np.array([s.mean() for s in np.array_split(x, DRIFT_SEGMENTS)])
    return float((means.max() - means.min()) / ac_rms)


def _drift_spread(ac: np.ndarray, ac_rms: float) -> float:
    """How far the segment means of the AC part ``ac`` spread, over its RMS, beyond what its tones give.

    A pure tone's segment means are not zero when a segment holds less than a few of its cycles: over
    a segment of ``L`` cycles a tone of peak ``A`` has a mean of at most ``A sin(pi L) / (pi L)`` in
    size, so its means spread over at most twice that; a clean record of ten turns of a 1X sine (0.6
    turn a segment) spreads them over 1.3 x its RMS [derived]. Drift is slower than any vibration the
    analysis reads: a tone of at least ``MIN_REVOLUTIONS_TO_ANALYSE`` cycles in the record is a shaft's
    or a defect's (a record holding fewer turns is refused, engine/readings/length.py), so the spread
    the ``DRIFT_TONES`` tallest such tones can give is set aside before the spread is judged; a ramp or
    a settling curve, whose energy lies below two cycles per record, is not.
    """
    spread = _segment_spread(ac, ac_rms)
    n = ac.size
    lowest = int(np.ceil(MIN_REVOLUTIONS_TO_ANALYSE))
    if spread <= DRIFT_RATIO or n < 8 * DRIFT_SEGMENTS:
        return spread
    window = np.hanning(n)
    mag = np.abs(np.fft.rfft(ac * window))
    inner = np.arange(lowest, mag.size - 1)
    peaks = inner[(mag[inner] >= mag[inner - 1]) & (mag[inner] >= mag[inner + 1])]
    toned = 0.0
    for k in peaks[np.argsort(mag[peaks])[::-1][:DRIFT_TONES]]:
        a, b, c = np.log(mag[k - 1:k + 2] + 1e-300)
        den = a - 2 * b + c
        d = float(np.clip(0.5 * (a - c) / den, -0.5, 0.5)) if den < 0 else 0.0   # parabolic peak (Hann)
        if k + d < MIN_REVOLUTIONS_TO_ANALYSE:
            continue
        hann_gain = np.sinc(d) / (1 - d * d)           # the Hann window's response at d bins from a tone
        peak = 2 * mag[k] / window.sum() / hann_gain   # the tone's peak, in the units of ``ac``
        toned += 2 * peak * abs(np.sinc((k + d) / DRIFT_SEGMENTS))
    return max(spread - toned / ac_rms, 0.0)


def _physical_range(ch: Channel, rms_si: float) -> list[QualityIssue]:
    lo, hi = PHYSICAL_RMS[ch.quantity]
    if lo <= rms_si <= hi:
        return []
    side = "below" if rms_si < lo else "above"
    return [QualityIssue("out_of_range", ch.name,
                         f"AC RMS of {rms_si:.3g} (SI units of {ch.quantity}) is {side} anything a sensor "
                         f"records: check the unit ({ch.unit}) and the scale", rms_si, blocking=True)]


def _plateau_sides(x: np.ndarray) -> list[tuple[str, float, int]]:
    """(side, growth ratio, samples) of each extreme of ``x`` that is a flat top."""
    n = len(x)
    lo, hi = float(x.min()), float(x.max())
    span = hi - lo
    typical = n / len(np.unique(x))
    floor = max(PLATEAU_MIN_SAMPLES, PLATEAU_MIN_FRACTION * n, PLATEAU_OVER_TYPICAL * typical)
    found = []
    reach = 4 * PLATEAU_WIDTHS[-1]    # no count below looks further from an extreme than this
    for side, distance in (("top", lambda: hi - x), ("bottom", lambda: x - lo)):
        d = distance()
        d = np.sort(d[d / span <= reach]) / span       # the samples near the extreme only: small to sort
        near = np.unique(d[d <= reach])
        step = float(np.diff(near).min()) if len(near) > 1 else 1.0
        for eps in PLATEAU_WIDTHS:
            if eps < 2 * step:        # finer than the data's own quantisation: cannot tell
                continue
            inner = int(np.searchsorted(d, eps, side="right"))
            outer = int(np.searchsorted(d, 4 * eps, side="right"))
            if inner >= floor and outer < PLATEAU_GROWTH * inner:
                found.append((side, outer / inner, inner))
                break
    return found


def _clipping(ch: Channel, x: np.ndarray) -> list[QualityIssue]:
    if ch.full_scale_si:
        n = int(np.count_nonzero(np.abs(x) >= CLIP_FULL_SCALE_FRACTION * ch.full_scale_si))
        if n:
            return [QualityIssue("clipping", ch.name,
                                 f"{n} samples reach the recorder's full scale", float(n))]
    top, bottom = x.max(), x.min()
    runs = [r for r in _runs(x == top) + _runs(x == bottom) if r[1] >= FLAT_TOP_MIN_RUN]
    if len(runs) >= 2:
        n = sum(length for _, length in runs)
        return [QualityIssue("clipping", ch.name,
                             f"{len(runs)} runs of equal samples ({n} in all) flatten the signal's extremes",
                             float(n))]
    sides = _plateau_sides(x)
    if sides:
        n = sum(count for _, _, count in sides)
        where = " and ".join(side for side, _, _ in sides)
        return [QualityIssue("clipping", ch.name,
                             f"{n} samples ({100 * n / len(x):.1f} %) pile up at the {where} of the "
                             "amplitude range, as a clipped signal's do", float(n))]
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


def _plausibility(ch: Channel, ac: np.ndarray, size: float, fs_hz: float) -> list[QualityIssue]:
    """Levels and spectral shape a machine in service can give in the stated unit.

    ``ac`` is the AC part of the samples divided by ``size`` (SI units).
    """
    n = len(ac)
    spectrum = np.fft.rfft(ac)        # one FFT for both gates; the level's band RMS is band_rms.py's
    issues = []
    if ch.quantity in ("velocity", "displacement"):
        high = _fraction_above(spectrum, n, fs_hz, SHAPE_SPLIT_HZ)
        if high > SHAPE_HIGH_FRACTION:
            issues.append(QualityIssue(
                "implausible_spectrum", ch.name,
                f"{100 * high:.0f} % of this {ch.quantity} signal's energy lies above "
                f"{SHAPE_SPLIT_HZ:.0f} Hz, where {ch.quantity} transducers and the ISO band stop: most likely "
                f"acceleration stated as {ch.unit}", high))
    if ch.quantity == "acceleration":
        falls = floor_fall_db_per_decade(ac, fs_hz)
        if falls is not None and falls > SLOPE_FALL_DB_PER_DECADE:
            high = _fraction_above(spectrum, n, fs_hz, SHAPE_SPLIT_HZ)
            if high < SLOPE_HIGH_FRACTION:
                issues.append(QualityIssue(
                    "implausible_slope", ch.name,
                    f"the spectrum's floor falls {falls:.0f} dB per decade from {SLOPE_LOW_HZ[0]:.0f}-"
                    f"{SLOPE_LOW_HZ[1]:.0f} Hz to the bearing band and only {100 * high:.1f} % of the energy lies "
                    f"above {SHAPE_SPLIT_HZ:.0f} Hz, as in a velocity signal: most likely velocity stated as "
                    f"{ch.unit} (or an accelerometer on a hand-held probe)", falls))
    if LEVEL_BAND_HZ[0] > fs_hz / 2:
        return issues
    velocity_mm_s = band_rms_of_fft(spectrum, n, fs_hz, LEVEL_BAND_HZ[0], min(LEVEL_BAND_HZ[1], fs_hz / 2),
                                    INTEGRATIONS_TO_VELOCITY[ch.quantity]) * size * 1e3
    lo, hi = PLAUSIBLE_VELOCITY_MM_S
    if not lo <= velocity_mm_s <= hi:
        word = "above what a machine in service gives" if velocity_mm_s > hi else "below a sensor's noise floor"
        issues.append(QualityIssue(
            "implausible_level", ch.name,
            f"velocity {velocity_mm_s:.3g} mm/s RMS ({LEVEL_BAND_HZ[0]:g}-{LEVEL_BAND_HZ[1]:g} Hz) is {word}: "
            f"check the unit ({ch.unit}), the sensor's sensitivity and the recorder's gain or scale",
            velocity_mm_s))
    return issues


def _fraction_above(spectrum: np.ndarray, n: int, fs_hz: float, split_hz: float) -> float:
    """The fraction of a record's AC energy above ``split_hz``, from its ``rfft`` (``n`` samples); 0 for none."""
    power = np.abs(spectrum) ** 2
    total = float(power[1:].sum())
    split = int(np.searchsorted(np.fft.rfftfreq(n, 1.0 / fs_hz), split_hz, side="right"))
    return float(power[split:].sum()) / total if total > 0 else 0.0


def floor_fall_db_per_decade(x: np.ndarray, fs_hz: float) -> float | None:
    """How many dB per decade the floor of ``x`` falls from ``SLOPE_LOW_HZ`` to the bearing band
    (``SLOPE_HIGH_HZ`` capped at ``SLOPE_USABLE_NYQUIST`` x fs/2): positive when it falls. None when the
    record cannot tell (the bearing band spans less than an octave, or a band holds no line).

    The floor of a band is the median of its Hann-windowed amplitude lines (the window keeps a tall low
    line's leakage out of the high band); the slope is taken between the bands' middles, where the median
    line of a spectrum that falls or rises steadily lies (its lines are evenly spaced in frequency).
    """
    top = min(SLOPE_HIGH_HZ[1], SLOPE_USABLE_NYQUIST * fs_hz / 2)
    if top < 2 * SLOPE_HIGH_HZ[0] or x.size < 16:
        return None
    amp = np.abs(np.fft.rfft((x - x.mean()) * np.hanning(x.size)))
    freq = np.fft.rfftfreq(x.size, 1.0 / fs_hz)
    low = amp[(freq >= SLOPE_LOW_HZ[0]) & (freq < SLOPE_LOW_HZ[1])]
    high = amp[(freq >= SLOPE_HIGH_HZ[0]) & (freq < top)]
    if not low.size or not high.size:
        return None
    low_floor, high_floor = float(np.median(low)), float(np.median(high))
    if low_floor <= 0 or high_floor <= 0:
        return None
    decades = np.log10((SLOPE_HIGH_HZ[0] + top) / (SLOPE_LOW_HZ[0] + SLOPE_LOW_HZ[1]))
    return float(20 * np.log10(low_floor / high_floor) / decades)


def check_resolution(duration_s: float, channel: str, resolution_hz: float) -> list[QualityIssue]:
    """A record of ``duration_s`` cannot resolve finer than 1/duration_s."""
    if duration_s * resolution_hz < 1.0:
        return [QualityIssue(
            "too_short", channel,
            f"record of {duration_s:.3f} s resolves {1 / duration_s:.3f} Hz at best; "
            f"{resolution_hz:.3f} Hz needs at least {1 / resolution_hz:.2f} s",
            duration_s)]
    return []
