"""The units a report shows (engine/common/units.py, ShownUnits): each conversion against its
published factor, and the names a user may give."""

from __future__ import annotations

import math

import numpy as np
import pytest

from engine.common.errors import UsageError
from engine.common.units import (
    CPM_PER_HZ,
    PEAK_PER_RMS_SINE,
    ShownUnits,
    hz_to_cpm,
    hz_to_orders,
    mm_to_in,
    rms_to_peak_of_sine,
    shown_units,
)


def test_an_inch_is_25_4_mm_exactly():
    # 1 in = 25.4 mm exactly (international yard and pound agreement, 1959)
    assert mm_to_in(25.4) == pytest.approx(1.0, rel=1e-15)
    assert mm_to_in(1.0) == pytest.approx(1 / 25.4, rel=1e-15)
    assert ShownUnits("hz", "in/s-rms").velocity_value(25.4, line=True) == pytest.approx(1.0, rel=1e-15)


def test_cpm_is_60_times_hz():
    # 1 Hz = 1 cycle per second = 60 cycles per minute (definition of the minute)
    assert CPM_PER_HZ == 60.0
    assert hz_to_cpm(24.75) == pytest.approx(1485.0, rel=1e-15)
    assert ShownUnits("cpm").frequency_text(24.75) == "1485 CPM"


def test_orders_are_of_the_shaft_under_the_sensor():
    # an order is a multiple of the shaft's own speed: 1X is the shaft speed (common practice)
    assert hz_to_orders(24.75, 24.75) == 1.0
    assert hz_to_orders(99.0, 24.75) == pytest.approx(4.0, rel=1e-15)
    assert ShownUnits("orders").frequency_text(99.0, 24.75) == "4.00X"
    # no shaft speed known: the value stays in Hz and says so, never a wrong order
    assert ShownUnits("orders").frequency_text(99.0, None) == "99.0 Hz"


def test_peak_of_a_sine_is_sqrt2_times_its_rms_and_numpy_agrees():
    # peak = sqrt(2) x RMS for a sine (handbook formula); checked on a sampled sine with numpy
    t = np.arange(100_000) / 100_000.0
    x = 3.0 * np.sin(2 * np.pi * 50 * t)
    rms = float(np.sqrt(np.mean(x ** 2)))
    assert rms_to_peak_of_sine(rms) == pytest.approx(3.0, rel=1e-9)
    assert PEAK_PER_RMS_SINE == pytest.approx(math.sqrt(2), rel=1e-15)


def test_peak_applies_to_a_line_and_never_to_a_broadband_level():
    units = ShownUnits("hz", "in/s-peak")
    line = units.velocity_value(25.4, line=True)
    broadband = units.velocity_value(25.4, line=False)
    assert line == pytest.approx(math.sqrt(2), rel=1e-12)     # sqrt(2) x RMS, in/s (1959 inch)
    assert broadband == pytest.approx(1.0, rel=1e-12)         # stays RMS, only the length unit changes
    assert units.velocity_label(line=True) == "in/s peak" and units.velocity_label(line=False) == "in/s RMS"
    assert units.velocity_text(25.4) == "1.41 in/s peak"
    assert ShownUnits("hz", "mm/s-peak").velocity_text(2.0) == "2.83 mm/s peak"


def test_the_default_is_hz_and_mm_s_rms_and_changes_nothing():
    units = ShownUnits()
    assert units.default
    assert units.frequency_text(24.75) == "24.8 Hz" and units.velocity_text(1.234) == "1.23 mm/s RMS"


def test_names_are_checked_and_a_command_line_value_wins_over_a_site():
    site = shown_units("cpm", "in/s-rms")
    assert shown_units(None, "mm/s-peak", base=site) == ShownUnits("cpm", "mm/s-peak")
    assert shown_units("ORDERS", "In/s Peak") == ShownUnits("orders", "in/s-peak")
    with pytest.raises(UsageError, match="unknown frequency unit 'rpm'"):
        shown_units("rpm")
    with pytest.raises(UsageError, match="velocity unit 'ips'"):
        shown_units(None, "ips")


def test_the_rulebook_schema_lists_the_same_names():
    from engine.common.units import FREQUENCY_UNITS, VELOCITY_UNITS
    from engine.common.yamlfile import load_schema

    schema = load_schema("rulebook.schema.json")["properties"]["units"]["properties"]
    assert schema["frequency"]["enum"] == list(FREQUENCY_UNITS)
    assert schema["velocity"]["enum"] == list(VELOCITY_UNITS)
