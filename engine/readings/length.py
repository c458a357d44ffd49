"""How long, and how fast, a record must be before the analysis can say anything about a machine.

Three limits, each derived from what the analysis needs:

- ``MIN_SAMPLES``: the kurtogram's widest band (level 0, the whole 0 to fs/2)
  needs 256 complex samples for a stable kurtosis (``min_samples_per_band``
  of ``engine.analysis.fast_kurtogram``), and that band holds as many samples
  as the record; so does every spectrum's noise floor estimate.
- ``MIN_REVOLUTIONS_TO_ANALYSE``: the running speed is refined from the
  spectral lines near 1X. With fewer than two revolutions of a shaft in the
  record, the line spacing (1 / duration) is wider than half of that shaft's
  1X: its 1X cannot be told from DC and its speed not refined. Below that the
  record cannot be analysed for this machine at all. From 2 to 10 revolutions
  it can, and the acquisition rules withhold the conclusion (10 revolutions
  of the slowest shaft is common practice for 1X resolution and averaging).
- the usable Fmax (sample rate / 2.56, common practice for the anti-alias
  filter's roll-off) must reach 1X of the fastest shaft: below it the spectrum
  holds nothing of that shaft and a revolution holds less than one sample.
  Above it and below 3X the acquisition rules withhold the conclusion.
"""

from __future__ import annotations

from ..common.errors import ReadingError

MIN_SAMPLES = 256
MIN_REVOLUTIONS_TO_ANALYSE = 2.0
RECOMMENDED_REVOLUTIONS = 10.0
FMAX_FACTOR = 2.56


def check_record_length(reading, machine) -> None:
    """Raise ``ReadingError`` if ``reading`` is too short or sampled too slowly to analyse for
    ``machine`` at all.

    The slowest shaft the reading's points see (``Machine.shafts_seen_at``; every shaft when a
    channel has no point) counts for the length, and the fastest of the machine for the sample
    rate, at the reading's measured speed when it states one. The message
    gives the record length or sample rate that would do.
    """
    speeds = machine.speeds_at(reading.speed_rpm) if reading.speed_rpm else dict(machine.shaft_speeds_hz)
    fast, fastest_hz = max(speeds.items(), key=lambda item: item[1])
    fmax = reading.fs_hz / FMAX_FACTOR
    if fmax < fastest_hz:
        raise ReadingError(
            f"the sample rate of {reading.fs_hz:g} Hz gives an Fmax of {fmax:.3g} Hz, below 1X of shaft {fast!r} "
            f"({fastest_hz:.4g} Hz, the fastest): nothing about it can be seen; sample at "
            f"{FMAX_FACTOR * fastest_hz:.4g} Hz at the very least, far more to see its faults", path=reading.source)
    seen = machine.shafts_seen_at([c.point for c in reading.channels])
    shaft, slowest_hz = min(((s, hz) for s, hz in speeds.items() if s in seen), key=lambda item: item[1])
    revolutions = reading.duration_s * slowest_hz
    if revolutions >= MIN_REVOLUTIONS_TO_ANALYSE:
        return
    which = "the slowest" if len(seen) == len(speeds) else "the slowest its points see"
    # a stated speed is the driving shaft's: say so, for a shaft's own speed stated as the driver's reads here
    if reading.speed_rpm and shaft != machine.driver_shaft:
        which += f", with the stated {reading.speed_rpm:.4g} rpm on the driving shaft {machine.driver_shaft!r}"
    raise ReadingError(
        f"the record of {reading.duration_s:.4g} s holds {revolutions:.2g} revolutions of shaft {shaft!r} "
        f"({slowest_hz * 60:.4g} rpm, {which}); the analysis needs at least "
        f"{MIN_REVOLUTIONS_TO_ANALYSE:g}: record at least {RECOMMENDED_REVOLUTIONS / slowest_hz:.3g} s "
        f"({RECOMMENDED_REVOLUTIONS:g} revolutions)", path=reading.source)
