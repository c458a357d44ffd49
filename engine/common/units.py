"""Engineering units of vibration readings, and conversion between them.

One lookup table holds every unit the readers accept. Each unit belongs to one
quantity (acceleration, velocity or displacement) and has a factor to that
quantity's SI base (m/s^2, m/s, m). Inside the engine a channel's samples are
always in the SI base of its quantity; units are only for the edges.

The second half is the units a report is *shown* in (``ShownUnits``): frequencies in Hz, CPM or
orders of the shaft under the sensor, velocities in mm/s or in/s, RMS or peak. The engine keeps
computing in Hz and mm/s RMS (units in names); only the words and numbers of a report change.

References: standard acceleration of gravity g_n = 9.80665 m/s^2 (CGPM 1901);
1 in = 25.4 mm exactly (international yard and pound agreement, 1959); 1 Hz = 60 cycles per
minute (CPM) by the definition of the minute; the peak of a sine is sqrt(2) times its RMS, so
peak = sqrt(2) x RMS holds for one spectral line (a sine), never for a broadband overall level.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np

from .errors import UsageError

STANDARD_GRAVITY_M_S2 = 9.80665
INCH_M = 0.0254
CPM_PER_HZ = 60.0                       # cycles per minute in one cycle per second
PEAK_PER_RMS_SINE = float(np.sqrt(2.0))   # a sine's peak over its RMS; for one spectral line only


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


# ---------------------------------------------------------------- units a report is shown in

# name a user gives -> the words a report prints
FREQUENCY_UNITS = {"hz": "Hz", "cpm": "CPM", "orders": "X"}
VELOCITY_UNITS = {"mm/s-rms": ("mm/s", "RMS"), "mm/s-peak": ("mm/s", "peak"),
                  "in/s-rms": ("in/s", "RMS"), "in/s-peak": ("in/s", "peak")}


# a frequency or a band as the engine words it: "24.77 Hz", "2000-10000 Hz" (not a rate in "per Hz")
_HZ_WORDS = re.compile(r"(?<![\w.])(\d+(?:\.\d+)?)(?:-(\d+(?:\.\d+)?))? Hz\b")


def hz_to_cpm(hz: float) -> float:
    """Hz -> cycles per minute."""
    return hz * CPM_PER_HZ


def hz_to_orders(hz: float, shaft_hz: float) -> float:
    """Hz -> orders of a shaft turning at ``shaft_hz`` (1X is the shaft's own speed)."""
    return hz / shaft_hz


def rms_to_peak_of_sine(rms: float) -> float:
    """A sine's RMS -> its peak (sqrt(2) x RMS): true of one spectral line, not of a broadband level."""
    return rms * PEAK_PER_RMS_SINE


def mm_to_in(mm: float) -> float:
    """Millimetres (or mm/s) -> inches (or in/s): 1 in = 25.4 mm exactly."""
    return mm / (INCH_M * 1e3)


@dataclass(frozen=True)
class ShownUnits:
    """The units a report shows frequencies and velocities in: ``frequency`` one of
    ``FREQUENCY_UNITS`` (orders of the shaft under the sensor), ``velocity`` one of
    ``VELOCITY_UNITS``. A broadband level (the ISO 20816-3 overall) stays RMS whichever is chosen:
    sqrt(2) x RMS is the peak of a sine only."""
    frequency: str = "hz"
    velocity: str = "mm/s-rms"

    @property
    def default(self) -> bool:
        """Whether these are the engine's own units (Hz, mm/s RMS): nothing to convert."""
        return (self.frequency, self.velocity) == ("hz", "mm/s-rms")

    def velocity_label(self, line: bool = True) -> str:
        """'in/s peak' for a line; for a broadband level the same length unit, RMS."""
        length, kind = VELOCITY_UNITS[self.velocity]
        return f"{length} {kind if line else 'RMS'}"

    def frequency_label(self) -> str:
        """'Hz', 'CPM' or 'orders'."""
        return "orders" if self.frequency == "orders" else FREQUENCY_UNITS[self.frequency]

    def velocity_value(self, mm_s_rms: float, line: bool = True) -> float:
        """A velocity in mm/s RMS in the chosen unit: a line's peak is sqrt(2) x RMS (a sine);
        a broadband level (``line=False``) changes only its length unit."""
        length, kind = VELOCITY_UNITS[self.velocity]
        v = mm_to_in(mm_s_rms) if length == "in/s" else mm_s_rms
        return rms_to_peak_of_sine(v) if kind == "peak" and line else v

    def frequency_value(self, hz: float, shaft_hz: float | None) -> float | None:
        """A frequency in Hz in the chosen unit; None for orders without a shaft speed."""
        if self.frequency == "cpm":
            return hz_to_cpm(hz)
        if self.frequency == "orders":
            return None if not shaft_hz else hz_to_orders(hz, shaft_hz)
        return hz

    def velocity_text(self, mm_s_rms: float | None, line: bool = True) -> str:
        """A velocity as a report words it: three significant digits (two decimals for mm/s), its unit."""
        if mm_s_rms is None:
            return "level unknown"
        v = self.velocity_value(mm_s_rms, line)
        digits = f"{v:.2f}" if VELOCITY_UNITS[self.velocity][0] == "mm/s" else _digits(v)
        return f"{digits} {self.velocity_label(line)}"

    def frequency_text(self, hz: float | None, shaft_hz: float | None = None) -> str:
        """A frequency as a report words it: '1480 CPM', '3.57X' (orders), or Hz when no shaft speed
        is known for orders."""
        if hz is None:
            return "none"
        v = self.frequency_value(hz, shaft_hz)
        if v is None:
            return f"{_digits(hz)} Hz"
        if self.frequency == "orders":
            return f"{_digits(v)}X"
        return f"{_digits(v)} {FREQUENCY_UNITS[self.frequency]}"

    def frequency_range_text(self, low_hz: float, high_hz: float, shaft_hz: float | None = None) -> str:
        """A band from its edges in Hz as a report words it: '2000-10000 Hz', '120000-600000 CPM',
        '80.8X-404X' (orders of ``shaft_hz``; Hz without one); each edge converted from its value."""
        low, high = self.frequency_value(low_hz, shaft_hz), self.frequency_value(high_hz, shaft_hz)
        if low is None or high is None:
            return f"{_digits(low_hz)}-{_digits(high_hz)} Hz"
        if self.frequency == "orders":
            return f"{_digits(low)}X-{_digits(high)}X"
        return f"{_digits(low)}-{_digits(high)} {FREQUENCY_UNITS[self.frequency]}"

    def velocity_number(self, mm_s_rms: float | None, line: bool = True) -> float | None:
        """A velocity in mm/s RMS as a JSON number in the chosen unit, to four significant digits."""
        return None if mm_s_rms is None else float(f"{self.velocity_value(mm_s_rms, line):.4g}")

    def frequency_number(self, hz: float | None, shaft_hz: float | None = None) -> dict | None:
        """A frequency in Hz as a JSON number in the chosen unit with the unit beside it
        (``{"value": 1480.0, "unit": "CPM"}``); Hz when orders are chosen and no shaft speed is known."""
        if hz is None:
            return None
        v = self.frequency_value(hz, shaft_hz)
        if v is None:
            return {"value": float(f"{hz:.6g}"), "unit": "Hz"}
        return {"value": float(f"{v:.6g}"), "unit": self.frequency_label()}

    def zone_boundaries(self, ab_mm_s: float, bc_mm_s: float, cd_mm_s: float) -> dict:
        """The ISO 20816-3 zone boundaries (broadband, mm/s RMS) as JSON numbers in the chosen length unit,
        RMS whichever is chosen, with the unit beside them."""
        return {"a_b": self.velocity_number(ab_mm_s, line=False), "b_c": self.velocity_number(bc_mm_s, line=False),
                "c_d": self.velocity_number(cd_mm_s, line=False), "unit": self.velocity_label(line=False)}

    def zone_boundaries_text(self, ab_mm_s: float, bc_mm_s: float, cd_mm_s: float) -> list[str]:
        """The same boundaries as a report's words give them (the numbers only: the unit follows in the text)."""
        bounds = (ab_mm_s, bc_mm_s, cd_mm_s)
        if VELOCITY_UNITS[self.velocity][0] == "mm/s":
            return [f"{b:g}" for b in bounds]
        return [self.velocity_text(b, line=False).split(" ")[0] for b in bounds]

    def reword_hz(self, text: str, shaft_hz: float | None = None) -> str:
        """A sentence the engine worded in Hz ("2000-10000 Hz", "BPFI (203.6 Hz)") in the chosen unit, each
        number converted as printed (three significant digits): for words built from settings and rates that
        keep no parts (the acquisition planner's). Orders are of ``shaft_hz``; without it the words stay Hz."""
        if self.frequency == "hz" or (self.frequency == "orders" and not shaft_hz):
            return text

        def one(number: str) -> str:
            value = self.frequency_value(float(number), shaft_hz)
            return _digits(value if value is not None else float(number))

        def shown(m: re.Match) -> str:
            low, high = m.group(1), m.group(2)
            if self.frequency == "orders":
                return f"{one(low)}X" + (f"-{one(high)}X" if high else "")
            return one(low) + (f"-{one(high)}" if high else "") + " CPM"
        return _HZ_WORDS.sub(shown, text)

    def as_dict(self) -> dict:
        """For a JSON report: the names chosen and the words they print as."""
        return {"frequency": self.frequency, "velocity": self.velocity,
                "frequency_label": self.frequency_label(), "line_velocity_label": self.velocity_label(True),
                "overall_velocity_label": self.velocity_label(False),
                "note": ("Fields named _hz and _mm_s stay in Hz and mm/s RMS; the report's words and tables "
                         "use these units. Peak is sqrt(2) x RMS, true of a single spectral line (a sine); "
                         "broadband levels stay RMS.")}


def shown_units(frequency: str | None = None, velocity: str | None = None, *, what: str = "",
                base: ShownUnits | None = None) -> ShownUnits:
    """``base`` (default Hz, mm/s RMS) with ``frequency`` and ``velocity`` changed where given.

    Raises
    ------
    UsageError
        For a name not in ``FREQUENCY_UNITS`` or ``VELOCITY_UNITS``; ``what`` says where it was given.
    """
    out = base or ShownUnits()
    where = f"{what}: " if what else ""
    if frequency is not None:
        f = str(frequency).strip().lower()
        if f not in FREQUENCY_UNITS:
            raise UsageError(f"{where}unknown frequency unit {frequency!r}; use {', '.join(FREQUENCY_UNITS)}")
        out = ShownUnits(f, out.velocity)
    if velocity is not None:
        v = str(velocity).strip().lower().replace(" ", "-")
        if v not in VELOCITY_UNITS:
            raise UsageError(f"{where}unknown velocity unit {velocity!r}; use {', '.join(VELOCITY_UNITS)}")
        out = ShownUnits(out.frequency, v)
    return out
