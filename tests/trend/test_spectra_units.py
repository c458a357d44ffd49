"""Spectra over time in the units a user chose: the waterfall's and the overlay's axes and marks, the
readings listed, the marks and the largest changes follow --frequency-unit and --velocity-unit, while
the fields named _hz and the stored amplitudes keep Hz and mm/s RMS."""

from __future__ import annotations

import json
import re

import jsonschema
import numpy as np
import pytest

from engine.analysis.compact import CompactSpectrum
from engine.cli import main
from engine.common.units import ShownUnits
from engine.common.yamlfile import load_schema
from engine.history.record import spectra_of
from engine.history.store import Store
from engine.report import render
from engine.trend import trend_document

PUMP = "RW-2 raw water pump"
ONE_X, BPFI, STEP = 24.5, 203.5, 0.5        # tones on the grid's lines (invented demo values)
FORCING = [{"name": "1X", "component": "pump", "family": "shaft", "shaft": "pump", "frequency_hz": ONE_X},
           {"name": "BPFI", "component": "pump_de", "family": "bearing", "shaft": "pump", "frequency_hz": BPFI}]
SQRT2, INCH_MM = 2 ** 0.5, 25.4


def _amplitudes(bpfi_mm_s: float) -> np.ndarray:
    a = np.full(1600, 0.001)
    for hz, v in ((ONE_X, 0.5), (BPFI, bpfi_mm_s)):
        a[round(hz / STEP)] = v
    return a


def _record(month: int, bpfi_mm_s: float) -> dict:
    sp = CompactSpectrum("ch1", "P1H", "pump", "pump_de", "velocity", "mm/s RMS", STEP, STEP,
                         _amplitudes(bpfi_mm_s).astype(np.float32))
    return {"content_hash": f"h{month}", "machine": PUMP, "machine_file": None, "source": f"r{month}.wav",
            "taken_at": f"2026-{month:02d}-12T08:30:00", "time_from": "route", "speed_rpm": 1470.0, "elapsed_s": 0.1,
            "fs_hz": 25600.0, "duration_s": 4.0,
            "verdict": {"urgency": "watch", "urgency_label": "watch", "worst_zone": "A", "withheld": False,
                        "summary": "s"},
            "top": None, "hypotheses": [],
            "channels": [{"channel": "ch1", "point": "P1H", "direction": "horizontal", "location": "pump_de",
                          "zone": "A"}],
            "indicators": [{"channel": "ch1", "name": "velocity_rms_mm_s", "value": 1.0 + month / 10}],
            "spectra": spectra_of([sp], {"ch1"}), "forcing": FORCING}


@pytest.fixture
def store(tmp_path):
    path = tmp_path / "h.sqlite"
    with Store(path) as s:
        for month, bpfi in ((2, 0.01), (3, 0.04), (4, 0.16)):
            s.add(_record(month, bpfi))
    return path


def _section(store, units, **kw):
    with Store(store, create=False) as s:
        doc = trend_document(s, PUMP, point="P1H", plots=True, units=units, **kw)
    return doc, doc["points"][0]["spectra"]


def test_the_default_shows_the_stored_numbers(store):
    _, section = _section(store, None, waterfall=True)
    assert section["shown"]["frequency"] == "Hz" and section["shown"]["velocity"] == "mm/s RMS"
    for m in section["marks"]:
        assert m["shown"]["frequency"] == m["frequency_hz"]
    for c in section["changes"]:
        assert [c["shown"][k] for k in ("before", "after", "change")] == [c["before"], c["after"], c["change"]]


def test_cpm_and_inches_peak_in_the_words_and_the_waterfall(store):
    doc, section = _section(store, ShownUnits("cpm", "in/s-peak"), waterfall=True)
    marks = {m["label"]: m for m in section["marks"]}
    # 1 Hz = 60 cycles per minute (definition of the minute): BPFI 203.5 Hz = 12210 CPM
    assert marks["BPFI"]["shown"]["frequency"] == pytest.approx(12210.0)
    assert marks["BPFI"]["frequency_hz"] == BPFI                      # the field named _hz keeps Hz
    (listed, *_) = [r for r in section["readings"] if r["has_spectrum"]]
    assert listed["shown"]["step"] == pytest.approx(60 * STEP)
    # each kept line is one line's amplitude: peak = sqrt(2) x RMS (a sine, handbook formula), 1 in = 25.4 mm
    assert listed["shown"]["largest"] == pytest.approx(SQRT2 * listed["largest_mm_s"] / INCH_MM, rel=1e-6)
    top = section["changes"][0]
    assert top["at"] == "BPFI" and top["shown"]["frequency"] == pytest.approx(60 * top["frequency_hz"])
    assert top["shown"]["after"] == pytest.approx(SQRT2 * 0.16 / INCH_MM, rel=1e-3)
    svg = section["waterfall"]["svg"]
    assert "frequency, CPM" in svg and "in/s peak" in svg and "mm/s" not in svg and "Hz" not in svg
    text = render(doc, "text", "trend")
    spectra = text.split("spectra over time")[1]
    assert "velocity, in/s peak" in spectra and "12210.00 CPM" in spectra and " Hz" not in spectra
    assert "mm/s" not in spectra
    for fmt in ("md", "html"):
        part = render(doc, fmt, "trend").split("pectra over time")[-1]
        assert "CPM" in part and "mm/s" not in part and ", Hz" not in part, fmt


def test_orders_are_of_the_points_shaft_and_the_overlay_follows(store):
    doc, section = _section(store, ShownUnits("orders", "mm/s-rms"), compare=(1, 3))
    marks = {m["label"]: m for m in section["marks"]}
    # an order is the frequency over the shaft's speed: BPFI 203.5 Hz / 1X 24.5 Hz = 8.306
    assert marks["BPFI"]["shown"]["frequency"] == pytest.approx(BPFI / ONE_X)
    assert marks["1X"]["shown"]["frequency"] == pytest.approx(1.0)
    svg = section["compare"]["svg"]
    assert "frequency, orders of pump" in svg and "mm/s RMS" in svg
    # the marks sit at their orders: the 1X mark's label is drawn at the x of order 1
    assert re.search(r">1X<", svg)


def test_the_trend_command_shows_the_waterfall_in_the_chosen_units(store, capsys):
    assert main(["trend", PUMP, "--point", "P1H", "--waterfall", "--format", "json", "--store", str(store),
                 "--frequency-unit", "cpm", "--velocity-unit", "in/s-rms"]) == 0
    doc = json.loads(capsys.readouterr().out)
    jsonschema.validate(doc, load_schema("trend.schema.json"))
    section = doc["points"][0]["spectra"]
    assert section["shown"] == {"frequency": "CPM", "velocity": "in/s RMS", "length": "in/s", "orders_of": None,
                                "axis": "CPM"}
    # the stored amplitudes stay mm/s RMS, as the section's unit says
    assert section["unit"] == "mm/s RMS" and max(section["readings"][-1]["amplitudes"]) == pytest.approx(0.5)
    by_name = {i["name"]: i for i in doc["points"][0]["indicators"]}
    # the overall velocity: broadband, RMS in inches (1 in = 25.4 mm exactly)
    assert by_name["velocity_rms_mm_s"]["latest"] == pytest.approx(1.4 / INCH_MM)
