"""The evidence of one diagnosis as typed values for the later stages.

Advice and the report need a few things the facts say (each point's
overall level, the reading's settings, the quality notes); they read them
here, as dataclasses with units in their field names, and never pick raw
facts by kind name themselves.
"""

from __future__ import annotations

from dataclasses import dataclass, field


@dataclass(frozen=True)
class PointLevel:
    channel: str
    point: str
    location: str
    direction: str
    velocity_rms_mm_s: float          # in the ISO 20816-3 band
    velocity_band_lo_hz: float
    velocity_band_hi_hz: float
    band_truncated: bool
    accel_rms_g: float | None
    accel_peak_g: float | None
    crest_factor: float
    kurtosis: float


@dataclass(frozen=True)
class QualityNote:
    channel: str
    issue: str
    value: float
    blocking: bool


@dataclass(frozen=True)
class Evidence:
    """Evidence facts plus the typed summaries advice and the report read."""

    facts: tuple[dict, ...]
    levels: tuple[PointLevel, ...]
    settings: dict                    # the acquisition fact's measured fields
    quality: tuple[QualityNote, ...]
    speed: dict = field(default_factory=dict)   # the speed_check fact's fields

    @property
    def fact_list(self) -> list[dict]:
        return list(self.facts)


def summarise(facts: list[dict]) -> Evidence:
    """Evidence with its summaries, from the facts the extractors produced."""
    levels = tuple(PointLevel(f["channel"], f["point"], f["location"], f["direction"], f["velocity_rms_mm_s"],
                              f["velocity_band_lo_hz"], f["velocity_band_hi_hz"], f["band_truncated"],
                              f["accel_rms_g"], f["accel_peak_g"], f["crest_factor"], f["kurtosis"])
                   for f in facts if f["kind"] == "overall")
    settings = next(({k: v for k, v in f.items() if k not in ("kind", "id")}
                     for f in facts if f["kind"] == "acquisition"), {})
    quality = tuple(QualityNote(f["channel"], f["issue"], f["value"], f["blocking"])
                    for f in facts if f["kind"] == "data_quality")
    speed = next(({k: v for k, v in f.items() if k not in ("kind", "id")}
                  for f in facts if f["kind"] == "speed_check"), {})
    return Evidence(tuple(facts), levels, settings, quality, speed)
