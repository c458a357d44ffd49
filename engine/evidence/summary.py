"""The evidence of one diagnosis as typed values for the later stages.

Advice and the report need a few things the facts say (each point's
overall level and whether its scale can be trusted, the reading's settings,
the quality notes, the bearing families each envelope shows); they read them here, as dataclasses with units in their
field names, and never pick raw facts by kind name themselves.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from ..readings.quality import scale_doubts


@dataclass(frozen=True)
class PointLevel:
    """One channel's overall levels. A channel whose scale is doubted (``scale_issues``) has no
    absolute level: ``velocity_rms_mm_s``, ``accel_rms_g`` and ``accel_peak_g`` are None, while its
    crest factor and kurtosis, which no scale changes, stand."""

    channel: str
    point: str
    location: str
    direction: str
    velocity_rms_mm_s: float | None   # in the ISO 20816-3 band; None when the scale is not trusted
    velocity_band_lo_hz: float
    velocity_band_hi_hz: float
    band_truncated: bool
    accel_rms_g: float | None         # None for a channel that is not acceleration, or not trusted
    accel_peak_g: float | None
    crest_factor: float
    kurtosis: float
    scale_issues: tuple[str, ...] = ()   # quality issues that doubt the channel's scale (unit, gain ...)

    @property
    def scale_trusted(self) -> bool:
        """True when no gate doubts the channel's scale, so its absolute levels may be shown."""
        return not self.scale_issues


@dataclass(frozen=True)
class QualityNote:
    """One data-quality finding of a channel, as advice and the report show it (``blocking``: it withholds)."""
    channel: str
    issue: str
    value: float
    blocking: bool
    corrupting: bool = False          # the issue makes the channel's samples false (readings.quality.CORRUPTING_ISSUES)
    left_out: bool = False            # the channel was left out of the analysis, the others diagnosed without it
    point: str = ""                   # the channel's point ('' when it names none)
    location: str = ""                # the bearing or part that point sits at


@dataclass(frozen=True)
class EnvelopeFamily:
    """A bearing defect family found in one channel's squared envelope spectrum (an ``envelope_tone``)."""

    channel: str
    bearing: str
    defect: str                       # BPFO, BPFI, BSF or FTF
    expected_hz: float                # its impact rate (for BSF: 2 x BSF)
    harmonics_found: int
    band_method: str                  # how the demodulation band was chosen
    fundamental_owned: bool           # the fundamental was found and no other family explains it better


@dataclass(frozen=True)
class Evidence:
    """Evidence facts plus the typed summaries advice and the report read."""

    facts: tuple[dict, ...]
    levels: tuple[PointLevel, ...]
    settings: dict                    # the acquisition fact's measured fields
    quality: tuple[QualityNote, ...]
    speed: dict = field(default_factory=dict)   # the speed_check fact's fields
    envelope_families: tuple[EnvelopeFamily, ...] = ()

    @property
    def fact_list(self) -> list[dict]:
        """The facts as a new list (the reasoner and the report may sort or extend it)."""
        return list(self.facts)

    @property
    def scale_doubted(self) -> tuple[PointLevel, ...]:
        """The channels whose scale (unit, sensitivity, gain) the quality gates doubt."""
        return tuple(lv for lv in self.levels if not lv.scale_trusted)


def summarise(facts: list[dict]) -> Evidence:
    """Evidence with its summaries, from the facts the extractors produced."""
    doubted = scale_doubts(f for f in facts if f["kind"] == "data_quality")
    levels = tuple(PointLevel(f["channel"], f["point"], f["location"], f["direction"], f["velocity_rms_mm_s"],
                              f["velocity_band_lo_hz"], f["velocity_band_hi_hz"], f["band_truncated"],
                              f["accel_rms_g"], f["accel_peak_g"], f["crest_factor"], f["kurtosis"],
                              doubted.get(f["channel"], ()))
                   for f in facts if f["kind"] == "overall")
    settings = next(({k: v for k, v in f.items() if k not in ("kind", "id")}
                     for f in facts if f["kind"] == "acquisition"), {})
    quality = tuple(QualityNote(f["channel"], f["issue"], f["value"], f["blocking"], f.get("corrupting", False),
                                f.get("left_out", False), f.get("point", ""), f.get("location", ""))
                    for f in facts if f["kind"] == "data_quality")
    speed = next(({k: v for k, v in f.items() if k not in ("kind", "id")}
                  for f in facts if f["kind"] == "speed_check"), {})
    families = tuple(EnvelopeFamily(f["channel"], f["component"], f["defect"], f["expected_hz"],
                                    f["harmonics_found"], f["band_method"], f["fundamental_owned"])
                     for f in facts if f["kind"] == "envelope_tone")
    return Evidence(tuple(facts), levels, settings, quality, speed, families)
