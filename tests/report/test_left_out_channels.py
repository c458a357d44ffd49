"""A channel left out of the analysis for a corrupting issue is still shown, clearly marked: its waveform
(where the NaN, the clipping or the drift can be seen), its spectrum when its samples allow, a levels row
saying why it was left out with no level or zone, and its alarm rows not judged. Nothing is judged from
its samples (rulebooks/reading.yaml, reading.signal.channel-left-out)."""

from __future__ import annotations

import json

import jsonschema
import numpy as np
import pytest

from engine.common.yamlfile import load_schema
from engine.machine import load_machine
from engine.pipeline import diagnose, document_of
from engine.report import render
from engine.simulation import as_reading, simulate

from support import MADE_AT, ROOT, reasoner
from support import REPORT_FORMATS as FORMATS


@pytest.fixture(scope="module")
def pump():
    # the demo pump's machine file sets alarms at P1H (overall, 1X, bearing rates)
    return load_machine(ROOT / "cases/machines/rw2-raw-water-pump.yaml")


def _doc(pump, change, plots="all"):
    sim = simulate(pump, "inner-race", "pump_de", 3, None, 12800.0, 3.0, 5, ["P1H", "P1A", "P2H"])
    change(sim.channels)
    d = diagnose(as_reading(sim, "left-out.wav"), pump, reasoner(), plots=True)
    doc = document_of(d, made_at=MADE_AT, plot_channels=None if plots is None else (plots,))
    jsonschema.Draft202012Validator(load_schema("report.schema.json")).validate(json.loads(render(doc, "json")))
    return doc


def _nan(channels):
    channels["P1H"][[700, 701, 2000]] = np.nan           # three samples the recorder lost


def _clip(channels):
    x = channels["P1H"]
    channels["P1H"] = x.clip(-0.3 * abs(x).max(), 0.3 * abs(x).max())


def _row(doc, channel):
    return next(z for z in doc["zones"]["points"] if z["channel"] == channel)


@pytest.mark.parametrize("change, issue, words", [(_nan, "nonfinite", "samples that are not numbers"),
                                                   (_clip, "clipping", "clipping")])
def test_a_left_out_channel_has_a_levels_row_saying_why_and_no_level_or_zone(pump, change, issue, words):
    doc = _doc(pump, change)
    assert doc["verdict"]["withheld"] is False
    row = _row(doc, "P1H")
    assert row["left_out"].startswith(words) and row["zone"] is None and row["velocity_rms_mm_s"] is None
    assert row["signal_issues"] == [issue] and row["location"] == "pump_de"
    assert _row(doc, "P1A")["left_out"] is None and _row(doc, "P1A")["zone"] is not None
    assert "P1H" not in doc["units"]["point_levels"]                  # no level of it anywhere
    for fmt in FORMATS:
        out = render(doc, fmt)
        assert f"left out: {words}" in out.replace("<strong>left out</strong>", "left out"), fmt


def test_a_left_out_channels_alarms_are_shown_not_judged(pump):
    doc = _doc(pump, _nan)
    rows = [a for a in doc["alarms"]["results"] if a["channel"] == "P1H"]
    assert rows and len(rows) == len([a for a in pump.alarms if a.point == "P1H"])   # none dropped
    assert all(a["value"] is None and a["state"] is None for a in rows)
    assert {a["why_no_value"] for a in rows} == {"not judged: channel left out (samples that are not numbers)"}
    assert doc["alarms"]["crossed"] == 0
    assert "not judged: channel left out" in render(doc, "text")


def test_a_nan_channels_waveform_is_drawn_with_its_gaps_marked_and_no_spectrum(pump):
    doc = _doc(pump, _nan)
    titles = [f["title"] for f in doc["figures"]]
    mine = [t for t in titles if "P1H" in t]
    assert mine == ["Waveform, P1H - LEFT OUT (samples that are not numbers)"]   # no spectrum of NaN samples
    svg = next(f["svg"] for f in doc["figures"] if f["title"] == mine[0])
    assert svg.count("<title>not a number</title>") == 2           # runs at samples 700-701 and 2000
    assert any(t.startswith("Spectrum, P1A") for t in titles)       # the analysed channels are drawn as before


@pytest.mark.parametrize("plots", [None, "all"])
def test_a_clipped_channel_is_drawn_marked_left_out_by_default_and_with_all(pump, plots):
    doc = _doc(pump, _clip, plots)
    mine = [f["title"] for f in doc["figures"] if ", P1H" in f["title"]]
    assert mine and all(t.endswith("LEFT OUT (clipping)") for t in mine), mine
    assert any(t.startswith("Waveform, P1H") for t in mine) and any(t.startswith("Spectrum, P1H") for t in mine)
    assert not any(t.startswith("Squared envelope spectrum, P1H") for t in mine)   # no envelope was taken


@pytest.mark.parametrize("quantity, unit, axis", [("velocity", "mm/s", "velocity as recorded, mm/s"),
                                                  ("displacement", "um", "displacement as recorded, um")])
def test_a_nan_velocity_or_displacement_channel_is_drawn_as_recorded_with_its_gaps_marked(pump, quantity, unit,
                                                                                         axis):
    from dataclasses import replace

    sim = simulate(pump, "inner-race", "pump_de", 3, None, 12800.0, 3.0, 5, ["P1H", "P1A", "P2H"])
    _nan(sim.channels)
    reading = as_reading(sim, "left-out.wav")              # P1H recorded as velocity or displacement instead
    reading = replace(reading, channels=tuple(
        replace(ch, quantity=quantity, unit=unit) if ch.name == "P1H" else ch for ch in reading.channels))
    d = diagnose(reading, pump, reasoner(), plots=True)
    doc = document_of(d, made_at=MADE_AT, plot_channels=("all",))
    mine = [f for f in doc["figures"] if "P1H" in f["title"]]
    assert [f["title"] for f in mine] == ["Waveform, P1H - LEFT OUT (samples that are not numbers)"]
    svg = mine[0]["svg"]
    assert svg.count("<title>not a number</title>") == 2           # runs at samples 700-701 and 2000
    assert axis in svg and "acceleration, g" not in svg
    assert _row(doc, "P1H")["left_out"].startswith("samples that are not numbers")


def _clip_all(channels):
    for name, x in channels.items():
        channels[name] = x.clip(-0.3 * abs(x).max(), 0.3 * abs(x).max())


def test_every_channel_corrupted_is_said_once_in_the_answer_naming_the_channels(pump):
    doc = _doc(pump, _clip_all, None)
    assert doc["verdict"]["withheld"] is True
    corrupted = [p for p in doc["reading_problems"] if p["fault"] == "signal-corrupted"]
    assert sorted(p["component"] for p in corrupted) == ["P1A", "P1H", "P2H"]     # each channel still judged
    summary = doc["verdict"]["summary"]
    name = corrupted[0]["fault_name"]
    assert summary.count(name) == 1 and summary.count(f"{name} on P1A, P1H and P2H") == 1, summary
    actions = doc["remeasure_actions"]
    assert actions and len(actions) == len(set(actions))                          # the sensor check once
    for fmt in FORMATS:
        assert render(doc, fmt).count(name + " on P1A") == 1, fmt
