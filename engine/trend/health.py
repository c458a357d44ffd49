"""A point's health indicator: one series that rises with damage and little else, and the
measures that choose it (monotonicity, trendability, prognosability).

The indicator is the log of a trailing mean of the first stored indicator of
``rulebooks/trend/onset.yaml`` (``health.indicators``) that the point has.
The choice was made on run-to-failure histories with the measures of Coble &
Hines (2009, "Identifying optimal prognostic parameters from data: a genetic
algorithms approach", Annual Conference of the PHM Society):

- monotonicity: |#rises - #falls| / (n - 1) of one history, 1 when it only rises;
- trendability: the smallest correlation between any two histories, each put on
  a common axis of life fraction, 1 when all share one shape;
- prognosability: exp(-sd(values at failure) / mean |failure - start|), 1 when
  every history ends at the same level.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cache

import numpy as np

from ..common.errors import RulebookError
from ..common.paths import RULEBOOKS
from .series import Series

ONSET_FILE = RULEBOOKS / "trend" / "onset.yaml"


@dataclass(frozen=True)
class HealthSettings:
    """How the health indicator is made and when it says degradation began (onset.yaml)."""
    indicators: tuple[str, ...]
    smooth_readings: int
    band_sd: float
    early_fraction: float
    early_min: int
    early_max: int
    readings_in_row: int
    source: str
    single_in_row: int = 0       # single readings in a row out of their own band (0: that test is off)
    single_slower_than_days: float = 0.0   # the single test only where readings_in_row readings span longer
    rise_ratio: float = 0.0      # a rise this many times the healthy level, where no band can be made (0: off)
    rise_in_row: int = 2         # ... by this many of the latest single readings in a row


def read_settings(path) -> HealthSettings:
    """Read and check an onset file; a RulebookError naming the file, line and field otherwise."""
    from ..common.yamlfile import read_yaml

    doc = read_yaml(path, RulebookError)
    data = doc.data
    if not (isinstance(data, dict) and isinstance(data.get("health"), dict) and isinstance(data.get("onset"), dict)):
        raise RulebookError("expected the mappings 'health' and 'onset'", path=doc.path, line=1)
    h, o = data["health"], data["onset"]

    def number(section, key, low, high, integer=False):
        v = (h if section == "health" else o).get(key)
        ok = isinstance(v, int) if integer else isinstance(v, (int, float))
        if isinstance(v, bool) or not ok or not low <= v <= high:
            kind = "a whole number" if integer else "a number"
            raise RulebookError(f"{section}.{key}: expected {kind} from {low:g} to {high:g}, got {v!r}",
                                path=doc.path, line=doc.line_of([section, key]))
        return v

    names = h.get("indicators")
    if not isinstance(names, list) or not names or not all(isinstance(n, str) and n for n in names):
        raise RulebookError("health.indicators: expected a list of indicator names", path=doc.path,
                            line=doc.line_of(["health", "indicators"]))
    early_min = number("onset", "early_min", 3, 1000, True)
    early_max = number("onset", "early_max", early_min, 10000, True)
    return HealthSettings(tuple(names), number("health", "smooth_readings", 1, 100, True),
                          float(number("onset", "band_sd", 0.5, 10)),
                          float(number("onset", "early_fraction", 0.0, 0.9)),
                          early_min, early_max, number("onset", "readings_in_row", 1, 100, True),
                          str(h.get("source", "")),
                          number("onset", "single_in_row", 0, 100, True) if "single_in_row" in o else 0,
                          float(number("onset", "single_slower_than_days", 0, 3650))
                          if "single_slower_than_days" in o else 0.0,
                          float(number("onset", "rise_ratio", 0, 1e6)) if "rise_ratio" in o else 0.0,
                          number("onset", "rise_in_row", 1, 100, True) if "rise_in_row" in o else 2)


@cache
def shipped_settings() -> HealthSettings:
    """The shipped onset settings (rulebooks/trend/onset.yaml)."""
    return read_settings(ONSET_FILE)


def smooth_log(values: np.ndarray, window: int) -> np.ndarray:
    """Log of the trailing mean of ``window`` readings (fewer at the start)."""
    v = np.asarray(values, float)
    c = np.concatenate([[0.0], np.cumsum(v)])
    i = np.arange(1, len(v) + 1)
    lo = np.maximum(0, i - window)
    return np.log(np.maximum((c[i] - c[lo]) / (i - lo), 1e-12))


def source_name(names, settings: HealthSettings | None = None) -> str | None:
    """The indicator the point's health indicator is made of, among the point's stored ``names``: the first
    of the preferred names (onset.yaml ``health.indicators``) it has; None when it has none of them."""
    settings = settings or shipped_settings()
    have = set(names)
    return next((n for n in settings.indicators if n in have), None)


def choose(by_name: dict[str, Series], settings: HealthSettings | None = None) -> Series | None:
    """The series the point's health indicator is made of (``source_name`` of the names it has readings of)."""
    name = source_name([n for n, s in by_name.items() if len(s)], settings)
    return None if name is None else by_name[name]


def health_of(source: Series, like: Series, settings: HealthSettings | None = None, *,
              single: bool = False) -> np.ndarray:
    """The health indicator of ``source`` at the readings of ``like`` (the series to project):
    each reading of ``like`` gets the indicator of the latest reading of ``source`` not after it.
    ``single``: the log of the single readings instead, unsmoothed (the onset rule's second test)."""
    settings = settings or shipped_settings()
    hi = smooth_log(source.values, 1 if single else settings.smooth_readings)
    times = np.array([t.timestamp() for t in source.times])
    at = np.array([t.timestamp() for t in like.times])
    idx = np.searchsorted(times, at, side="right") - 1
    return hi[np.clip(idx, 0, len(hi) - 1)]


def monotonicity(values: np.ndarray) -> float:
    """|#rises - #falls| / (n - 1): 1 for a history that only rises (or only falls)."""
    d = np.diff(np.asarray(values, float))
    return float(abs(int(np.count_nonzero(d > 0)) - int(np.count_nonzero(d < 0))) / len(d)) if len(d) else 0.0


def trendability(histories: list[np.ndarray], points: int = 100) -> float:
    """The smallest correlation between two histories on a common axis of life fraction."""
    x = np.linspace(0.0, 1.0, points)
    on_axis = [np.interp(x, np.linspace(0.0, 1.0, len(h)), h) for h in histories]
    worst = 1.0
    for i, a in enumerate(on_axis):
        for b in on_axis[i + 1:]:
            if np.std(a) == 0 or np.std(b) == 0:
                return 0.0
            worst = min(worst, float(np.corrcoef(a, b)[0, 1]))
    return worst


def prognosability(histories: list[np.ndarray]) -> float:
    """exp(-sd(end values) / mean |end - start|): 1 when every history ends at one level."""
    ends = np.array([h[-1] for h in histories])
    starts = np.array([h[0] for h in histories])
    spread = float(np.mean(np.abs(ends - starts)))
    return float(np.exp(-np.std(ends) / spread)) if spread > 0 else 0.0
