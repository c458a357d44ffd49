"""Engineering units of vibration readings, and conversion between them.

One lookup table holds every unit the readers accept. Each unit belongs to one
quantity (acceleration, velocity or displacement) and has a factor to that
quantity's SI base (m/s^2, m/s, m). Inside the engine a channel's samples are
always in the SI base of its quantity; units are only for the edges.

References: standard acceleration of gravity g_n = 9.80665 m/s^2 (CGPM 1901);
1 in = 25.4 mm exactly (international yard and pound agreement, 1959).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .errors import UsageError

STANDARD_GRAVITY_M_S2 = 9.80665
INCH_M = 0.0254


@dataclass(frozen=True)
class Unit:
    """An engineering unit: its name, the quantity it measures and its factor to SI (m/s^2, m/s or m)."""
    name: str
    quantity: str  # "acceleration", "velocity" or "displacement"
    to_si: float   # multiply by this to get m/s^2, m/s or m


_UNITS = {
    "g": Unit("g", "acceleration", STANDARD_GRAVITY_M_S2),
    "m/s^2": Unit("m/s^2", "acceleration", 1.0),
    "mm/s": Unit("mm/s", "velocity", 1e-3),
    "m/s": Unit("m/s", "velocity", 1.0),
    "in/s": Unit("in/s", "velocity", INCH_M),
    "um": Unit("um", "displacement", 1e-6),
    "mm": Unit("mm", "displacement", 1e-3),
    "mils": Unit("mils", "displacement", INCH_M * 1e-3),
}

_ALIASES = {
    "m/s2": "m/s^2", "m/s**2": "m/s^2", "ms-2": "m/s^2",
    "ips": "in/s", "mil": "mils", "µm": "um", "micron": "um", "microns": "um",
}

SI_BASE = {"acceleration": "m/s^2", "velocity": "m/s", "displacement": "m"}

# The units measured values are reported in (the evidence vocabulary's) that state an absolute
# level: a value in one is the samples' size times a calibration (unit, sensor sensitivity,
# recorder gain, scale), and wrong by the same factor when the calibration is. Every other
# reported unit (Hz, dB, %, ms, s, deg, rpm, none) is scale-free.
LEVEL_UNITS = frozenset({"mm/s RMS", "g RMS", "g peak"})


def known_units() -> list[str]:
    """The canonical unit names, for messages and schemas."""
    return sorted(_UNITS)


def units_by_quantity() -> dict[str, list[str]]:
    """The canonical unit names of each quantity, in the table's order (for help texts)."""
    grouped: dict[str, list[str]] = {}
    for u in _UNITS.values():
        grouped.setdefault(u.quantity, []).append(u.name)
    return grouped


def unit_aliases() -> dict[str, str]:
    """Other spellings the readers accept, each with its canonical name (case does not matter)."""
    return dict(_ALIASES)


def unit(name: str) -> Unit:
    """Look up a unit by its canonical name or an accepted alias.

    Raises
    ------
    UsageError
        For a unit the engine does not know, naming the known ones.
    """
    key = str(name).strip()
    key = _ALIASES.get(key, _ALIASES.get(key.lower(), key))
    if key not in _UNITS and key.lower() in _UNITS:
        key = key.lower()
    try:
        return _UNITS[key]
    except KeyError:
        raise UsageError(
            f"unknown unit {name!r}; expected one of {', '.join(known_units())}"
        ) from None


def to_si(values, name: str) -> np.ndarray:
    """Samples in unit ``name`` -> the SI base of its quantity."""
    return np.asarray(values, dtype=float) * unit(name).to_si


def from_si(values, name: str) -> np.ndarray:
    """Samples in the SI base of a quantity -> unit ``name``."""
    return np.asarray(values, dtype=float) / unit(name).to_si


def convert(values, from_unit: str, to_unit: str) -> np.ndarray:
    """Convert between two units of the same quantity."""
    a, b = unit(from_unit), unit(to_unit)
    if a.quantity != b.quantity:
        raise UsageError(
            f"cannot convert {a.name} ({a.quantity}) to {b.name} ({b.quantity}) "
            "without integrating or differentiating"
        )
    return np.asarray(values, dtype=float) * (a.to_si / b.to_si)


def format_quantity(value, unit: str = "", kind: str = "number") -> str:
    """A measured value as a report shows it: sensible digits and its unit (no exponents).

    ``unit`` is the vocabulary's ('' for counts and ratios); ``kind`` its type. A missing level
    (the evidence leaves out the levels of a channel whose scale is not trusted) is "level unknown".
    """
    if value is None:
        return "level unknown" if unit in LEVEL_UNITS else "none"
    if isinstance(value, bool) or kind == "boolean":
        return "yes" if value else "no"
    if isinstance(value, str) or kind == "string":
        return str(value)
    if kind == "integer" or isinstance(value, int):
        text = f"{int(value)}"
    elif not np.isfinite(value):
        text = "not finite"
    elif unit == "dB":
        text = f"{value:.0f}"
    elif unit == "%":
        text = f"{value:+.1f}"
    elif unit in ("rpm", "deg"):
        text = f"{value:.0f}"
    elif unit == "mm/s RMS":
        text = f"{value:.2f}"
    else:
        text = _digits(value)
    return f"{text} {unit}" if unit else text


def _digits(value: float) -> str:
    """Three significant digits, never in exponent notation."""
    size = abs(value)
    if size == 0:
        return "0"
    if size >= 100:
        return f"{value:.0f}"
    if size >= 10:
        return f"{value:.1f}"
    if size >= 1:
        return f"{value:.2f}"
    decimals = min(12, 2 - int(np.floor(np.log10(size))))
    return f"{value:.{decimals}f}"
