"""The acquisition policy: the rules of the trade as data a site can change.

``rulebooks/planner/acquisition.yaml`` holds the numbers (2.56 x Fmax, the line
counts, lines between a carrier and its sideband, revolutions, samples per
impact, averages, overlap, the ISO 20816-3 band, where bearing impacts ring)
with a source for each. It is checked against
``common/schemas/acquisition.schema.json`` and for consistency when it loads, once.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from functools import cache
from pathlib import Path
from types import MappingProxyType

from ..common.errors import RulebookError
from ..common.paths import RULEBOOKS
from ..common.yamlfile import read_yaml, validate

DEFAULT_POLICY = RULEBOOKS / "planner" / "acquisition.yaml"
PURPOSES = ("severity", "bearing", "gear", "shaft", "electrical")


@dataclass(frozen=True)
class Policy:
    """Checked acquisition policy; frequencies in Hz, counts in lines, samples or turns."""

    source: str
    sample_rate_per_fmax: float
    fmax_steps_hz: tuple[float, ...]
    standard_lines: tuple[int, ...]
    lines_between_carrier_and_sideband: float
    lines_between_harmonics: float
    lines_below_band_edge: float
    low_frequency_limit_hz: float
    min_revolutions: float
    hunting_tooth_periods: float
    min_samples_per_impact: float
    min_samples_per_revolution: int
    window: str
    overlap_pct: float
    averages: Mapping[str, int]
    harmonics: Mapping[str, int]
    iso_band_hz: tuple[float, float]
    iso_band_slow_hz: tuple[float, float]
    iso_slow_speed_rpm: float
    bearing_resonance_hz: tuple[float, float]
    resonance_damping_ratio: float
    ring_down_to: float
    envelope_band_clearance: float
    severity_tolerance_pct: float
    sources: Mapping[str, str]

    @property
    def separation_lines(self) -> float:
        """Line spacings a sideband must stand from its carrier (lines between them, plus one)."""
        return self.lines_between_carrier_and_sideband + 1

    @property
    def harmonic_lines(self) -> float:
        """Line spacings between two lines of similar height (lines between them, plus one)."""
        return self.lines_between_harmonics + 1

    def source_of(self, key: str) -> str:
        """The source the policy gives for ``key``, or an empty string when it gives none."""
        return self.sources.get(key, "")


def _shown(path) -> str:
    """The policy file's name for a report: a shipped file by its name inside the rulebooks
    (``rulebooks/planner/acquisition.yaml``), never the folder it was installed in; a user's file
    by the name the user gave."""
    try:
        inside = Path(path).resolve().relative_to(RULEBOOKS.resolve())
    except ValueError:
        return str(path)
    return f"rulebooks/{inside.as_posix()}"


def _check(doc, data: dict) -> None:
    def fail(key, problem):
        raise RulebookError(f"acquisition_policy.{key}: {problem}", path=doc.path,
                            line=doc.line_of(["acquisition_policy", key]))

    for key in ("fmax_steps_hz", "standard_lines"):
        values = data[key]
        if any(b <= a for a, b in zip(values, values[1:])):
            fail(key, "values must rise from first to last")
    for key in ("iso_band_hz", "iso_band_slow_hz", "bearing_resonance_hz"):
        lo, hi = data[key]
        if not lo < hi:
            fail(key, f"the lower edge {lo} must lie below the upper edge {hi}")
    missing = [k for k in data if k != "sources" and k not in data["sources"]]
    if missing:
        fail("sources", f"no source given for {', '.join(missing)}")


def _band(values) -> tuple[float, float]:
    """A (lower, upper) band edge pair: ``_check`` let through only two edges."""
    lo, hi = values
    return float(lo), float(hi)


def read_policy(path) -> Policy:
    """Read and check a policy file (no caching: for a site's own file)."""
    doc = read_yaml(path, RulebookError)
    if not isinstance(doc.data, dict):
        raise RulebookError("expected a mapping with 'acquisition_policy'", path=doc.path, line=1)
    validate(doc, "acquisition.schema.json", RulebookError)
    data = doc.data["acquisition_policy"]
    _check(doc, data)
    return Policy(
        source=_shown(path),
        sample_rate_per_fmax=float(data["sample_rate_per_fmax"]),
        fmax_steps_hz=tuple(float(v) for v in data["fmax_steps_hz"]),
        standard_lines=tuple(int(v) for v in data["standard_lines"]),
        lines_between_carrier_and_sideband=float(data["lines_between_carrier_and_sideband"]),
        lines_between_harmonics=float(data["lines_between_harmonics"]),
        lines_below_band_edge=float(data["lines_below_band_edge"]),
        low_frequency_limit_hz=float(data["low_frequency_limit_hz"]),
        min_revolutions=float(data["min_revolutions"]),
        hunting_tooth_periods=float(data["hunting_tooth_periods"]),
        min_samples_per_impact=float(data["min_samples_per_impact"]),
        min_samples_per_revolution=int(data["min_samples_per_revolution"]),
        window=data["window"],
        overlap_pct=float(data["overlap_pct"]),
        averages=MappingProxyType(dict(data["averages"])),
        harmonics=MappingProxyType(dict(data["harmonics"])),
        iso_band_hz=_band(data["iso_band_hz"]),
        iso_band_slow_hz=_band(data["iso_band_slow_hz"]),
        iso_slow_speed_rpm=float(data["iso_slow_speed_rpm"]),
        bearing_resonance_hz=_band(data["bearing_resonance_hz"]),
        resonance_damping_ratio=float(data["resonance_damping_ratio"]),
        ring_down_to=float(data["ring_down_to"]),
        envelope_band_clearance=float(data["envelope_band_clearance"]),
        severity_tolerance_pct=float(data["severity_tolerance_pct"]),
        sources=MappingProxyType(dict(data["sources"])),
    )


@cache
def _cached(path: str) -> Policy:
    return read_policy(path)


def load_policy(path=None) -> Policy:
    """The policy in ``path`` (default: the shipped one), read and checked once per path."""
    return _cached(str(Path(path) if path is not None else DEFAULT_POLICY))
