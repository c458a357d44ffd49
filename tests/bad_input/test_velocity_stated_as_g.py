"""Velocity data stated in an acceleration unit (nu27 item 14): the quality gate ``implausible_slope``.

A wrong unit multiplies no line and keeps every ratio, so the diagnosis goes on; what it spoils is
severity (tests/end_to_end/test_wrong_scale.py holds the other direction, acceleration stated as
velocity). The velocity records here are acceleration records integrated once: each line divided by
2 pi f (handbook formula, v = a / (2 pi f)), stored again with the unit g.

Real records: the excerpts of tests/data (CWRU Bearing Data Center records 130, 105 and the normal
baseline 97; MFPT outer race vload_1; provenance in tests/data/README.md). As acceleration no gate
may doubt them; integrated, the healthy 97 must be found. The others are what the gate cannot tell:
the CWRU 12 kHz records' acceleration floor rises some 10 dB a decade toward the rig's resonance, so
integrated it falls only 6-12 dB a decade; the MFPT outer race keeps more than 5 % of its velocity
energy above 1 kHz (its impacts ring there).
"""

from __future__ import annotations

import dataclasses
import json
import shutil

import numpy as np
import pytest

from engine.cli import main
from engine.machine import load_machine
from engine.readings import load_reading
from engine.readings.quality import SLOPE_FALL_DB_PER_DECADE, check_channel, floor_fall_db_per_decade
from engine.simulation import as_reading, simulate

from support import CASES, TEST_DATA, TEST_MACHINES

EXCERPTS = ["cwru-130", "cwru-105", "cwru-97", "mfpt-OuterRaceFault_vload_1"]
FOUND_INTEGRATED = ["cwru-97"]


def integrated(x: np.ndarray, fs_hz: float) -> np.ndarray:
    """Acceleration to velocity (same unit times seconds): each line divided by 2 pi f, below 10 Hz left out
    (the ISO 20816-3 band's lower edge, where a velocity instrument's high-pass commonly sits)."""
    spectrum = np.fft.rfft(x - x.mean())
    freq = np.fft.rfftfreq(x.size, 1.0 / fs_hz)
    keep = freq >= 10.0
    spectrum[~keep] = 0.0
    spectrum[keep] /= 2j * np.pi * freq[keep]
    return np.fft.irfft(spectrum, x.size)


def stored_again(tmp_path, record: str, change) -> object:
    source = TEST_DATA / f"{record}.npz"
    with np.load(source) as archive:
        contents = {k: archive[k] for k in archive.files}
    fs = float(contents["sample_rate_hz"])
    for name in [k for k, v in contents.items() if v.ndim == 1]:
        contents[name] = change(contents[name].astype(np.float64), fs)
    path = tmp_path / source.name
    np.savez(path, **contents)
    shutil.copy(source.with_name(source.name + ".yaml"), path.with_name(path.name + ".yaml"))
    return path


def slope_issues(reading) -> set[str]:
    return {q.channel for q in reading.quality if q.kind == "implausible_slope"}


def test_the_floor_of_white_noise_is_level_and_of_its_integral_falls_20_db_a_decade():
    # handbook: integration divides each line by 2 pi f, -20 dB per decade; white noise has a level floor
    rng = np.random.default_rng(3)
    fs = 25600.0
    x = rng.standard_normal(int(4 * fs))
    assert abs(floor_fall_db_per_decade(x, fs)) < 1.0
    assert floor_fall_db_per_decade(integrated(x, fs), fs) == pytest.approx(20.0, abs=1.0)
    assert floor_fall_db_per_decade(x, 4000.0) is None, "a bearing band narrower than an octave cannot tell"


@pytest.mark.parametrize("record", EXCERPTS)
def test_real_acceleration_excerpts_are_not_doubted(tmp_path, record):
    reading = load_reading(stored_again(tmp_path, record, lambda x, fs: x))
    assert not slope_issues(reading)


def in_per_s(x_g: np.ndarray, fs_hz: float) -> np.ndarray:
    """A record in g as the velocity it gives, in in/s (1 g = 9.80665 m/s^2, 1 in = 0.0254 m: exact)."""
    return integrated(x_g * 9.80665, fs_hz) / 0.0254


@pytest.mark.parametrize("record", FOUND_INTEGRATED)
def test_real_records_integrated_to_velocity_and_stated_in_g_are_found(tmp_path, record):
    reading = load_reading(stored_again(tmp_path, record, in_per_s))
    assert slope_issues(reading) == {ch.name for ch in reading.channels}
    [q] = [q for q in reading.quality if q.kind == "implausible_slope"][:1]
    assert q.value > SLOPE_FALL_DB_PER_DECADE and "velocity stated as g" in q.message


@pytest.mark.parametrize("fault, stage, missed", [("outer-race", 3, 1), ("unbalance", 2, 0), ("healthy", 1, 0)])
def test_simulated_velocity_stated_in_g_is_found_and_its_acceleration_is_not(fault, stage, missed):
    # a stage-3 bearing's impacts keep more than 5 % of the velocity energy above 1 kHz at the point nearest
    # it: that one channel may go unfound, the others not
    machine = load_machine(CASES / "machines/rw2-raw-water-pump.yaml")
    reading = as_reading(simulate(machine, fault, None, stage, None, 25600.0, 4.0, 7))
    assert not slope_issues(reading), "the simulator's acceleration is not doubted"
    velocity = load_reading_of(reading, integrated)
    assert len(slope_issues(velocity)) >= len(reading.channels) - missed


def load_reading_of(reading, change):
    """``reading`` with every channel changed, its quality gates run again."""
    channels = tuple(dataclasses.replace(ch, samples=change(ch.samples, reading.fs_hz)) for ch in reading.channels)
    quality = tuple(q for ch in channels for q in check_channel(ch, reading.fs_hz))
    return dataclasses.replace(reading, channels=channels, quality=quality)


def test_the_report_says_severity_unknown_and_what_to_check(tmp_path, capsys):
    path = stored_again(tmp_path, "cwru-97", in_per_s)
    code = main(["diagnose", str(path), "--machine", str(TEST_MACHINES / "cwru-motor.yaml"), "--format", "json"])
    doc = json.loads(capsys.readouterr().out)
    assert code == 0, "a scale-free diagnosis is a diagnosis (README, Exit codes)"
    assert doc["verdict"]["severity_known"] is False
    scale = doc["scale"]
    assert [c["issues"] for c in scale["channels"]] == [["implausible_slope"]]
    assert "velocity stated as acceleration" in scale["text"]
    assert any("probe" in c for c in scale["check"])
    assert doc["zones"]["worst"] is None
    assert all(p["zone"] is None and p["velocity_rms_mm_s"] is None and not p["scale_trusted"]
               for p in doc["zones"]["points"])
