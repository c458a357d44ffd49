"""How much a reading may hold: the one home of the size limits, checked before the samples are loaded.

Memory follows the samples analysed: every channel is kept as float64 (8 bytes
a sample) and its analysis (spectra, envelope views, kurtogram) holds and
passes through several arrays of the record's length: about 130 bytes per
sample at the peak of a diagnosis over a base of 95 MB (measured with
``/usr/bin/time -v``: one channel of 2^22 samples 0.65 GB, two 0.8 GB; README,
"Bad input"). The limits keep a diagnosis under 1 GB whatever a file
declares, however well it compresses:

- ``MAX_SAMPLES_PER_CHANNEL`` = 2^22 = 4 194 304 samples: 164 s at 25.6 kHz,
  82 s at 51.2 kHz. The longest waveform the shipped acquisition policy ever
  proposes is about 0.43 M samples (a slow conveyor's synchronous average and
  hunting-tooth period), and an analyzer's longest spectrum record, 51 200
  lines, is 131 072 samples (2.56 x lines, common practice): the limit is ten
  times the longest useful record. ``--max-samples`` raises it for a longer
  recording, and memory grows with it.
- ``FULL_LENGTH_CHANNELS`` = 2: the samples over all channels are at most
  twice the per-channel limit (two channels of full length, or more channels
  of shorter records).
- ``MAX_CHANNELS`` = 256 channels, whatever their length.

The same numbers bound the settings ``plan`` checks (``engine.planner.settings``):
a waveform of more samples than a reading may hold could not be diagnosed.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..common.errors import ReadingError
from .length import FMAX_FACTOR

MAX_SAMPLES_PER_CHANNEL = 1 << 22
FULL_LENGTH_CHANNELS = 2
MAX_CHANNELS = 256
MAX_FILE_BYTES = 1 << 30           # 1 GiB on disk
MIN_SAMPLE_RATE_HZ = FMAX_FACTOR * 2.0    # Fmax must reach 2 Hz, the bottom of the ISO 20816-3 band for slow machines
MAX_SAMPLE_RATE_HZ = 10e6          # no vibration recorder samples faster: a unit slip (Hz for kHz...)
RAISE_HINT = "cut the record, or raise the limit with --max-samples"


@dataclass(frozen=True)
class SampleLimit:
    """The samples a reading may hold: per channel, and over all channels."""

    per_channel: int = MAX_SAMPLES_PER_CHANNEL

    @property
    def total(self) -> int:
        """The samples all channels together may hold."""
        return FULL_LENGTH_CHANNELS * self.per_channel

    @property
    def total_bytes(self) -> int:
        """What the samples of all channels may unpack to, at 8 bytes a sample, with 1 MiB for headers."""
        return 8 * self.total + (1 << 20)

    def check(self, path: str, per_channel: int, channels: int = 1, what: str = "holds") -> None:
        """Raise ``ReadingError`` when ``channels`` channels of ``per_channel`` samples are more than allowed."""
        if per_channel > self.per_channel:
            raise ReadingError(f"{what} {per_channel} samples per channel; tellwave reads at most "
                               f"{self.per_channel} ({RAISE_HINT})", path=path)
        if channels > MAX_CHANNELS:
            raise ReadingError(f"{what} {channels} channels; tellwave reads at most {MAX_CHANNELS}", path=path)
        if per_channel * channels > self.total:
            raise ReadingError(f"{what} {per_channel * channels} samples over {channels} channels; tellwave reads "
                               f"at most {self.total} ({FULL_LENGTH_CHANNELS} channels of the longest record; "
                               f"{RAISE_HINT})", path=path)


def sample_limit(max_samples: int | None) -> SampleLimit:
    """The limit of ``--max-samples`` (the default when not given)."""
    return SampleLimit() if max_samples is None else SampleLimit(int(max_samples))
