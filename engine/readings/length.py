"""How long a record must be before the analysis can say anything about a machine.

Two limits, each derived from what the analysis needs:

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
"""

from __future__ import annotations

from ..errors import ReadingError

MIN_SAMPLES = 256
MIN_REVOLUTIONS_TO_ANALYSE = 2.0
RECOMMENDED_REVOLUTIONS = 10.0


def check_record_length(reading, machine) -> None:
    """Raise ``ReadingError`` if ``reading`` is too short to analyse for ``machine`` at all.

    The slowest shaft counts, at the reading's measured speed when it states
    one. The message gives the record length that would do.
    """
    speeds = machine.speeds_at(reading.speed_rpm) if reading.speed_rpm else dict(machine.shaft_speeds_hz)
    shaft, slowest_hz = min(speeds.items(), key=lambda item: item[1])
    revolutions = reading.duration_s * slowest_hz
    if revolutions >= MIN_REVOLUTIONS_TO_ANALYSE:
        return
    raise ReadingError(
        f"the record of {reading.duration_s:.4g} s holds {revolutions:.2g} revolutions of shaft {shaft!r} "
        f"({slowest_hz * 60:.4g} rpm, the slowest); the analysis needs at least "
        f"{MIN_REVOLUTIONS_TO_ANALYSE:g}: record at least {RECOMMENDED_REVOLUTIONS / slowest_hz:.3g} s "
        f"({RECOMMENDED_REVOLUTIONS:g} revolutions)", path=reading.source)
