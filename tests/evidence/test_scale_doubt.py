"""A wrong scale spoils levels, not patterns: the evidence of a channel whose scale the quality
gates doubt leaves out its absolute levels and keeps everything else.

Real records: the CWRU Bearing Data Center's 130 (outer race) and 105 (inner race), 12 kHz
drive end, the 1 s excerpts in tests/data (provenance in tests/data/README.md). A gain
multiplies every sample by one factor; it moves no line in frequency and changes no ratio,
no height over a local floor, no kurtosis and no crest factor [derived: every one of those
is a ratio of two quantities that scale alike, or a frequency].
"""

from __future__ import annotations

import functools

import numpy as np
import pytest

from engine.common.units import LEVEL_UNITS, STANDARD_GRAVITY_M_S2
from engine.evidence import extract_evidence
from engine.evidence.vocabulary import FACTS, SCALE_FREE_UNITS, level_fields
from engine.machine import load_machine
from engine.readings import Channel, Reading
from engine.readings.quality import check_channel, same_scale
from engine.simulation import as_reading, simulate

from support import CASES, TEST_DATA, TEST_MACHINES

CWRU = load_machine(TEST_MACHINES / "cwru-motor.yaml")


def test_every_unit_of_the_vocabulary_is_a_level_or_scale_free():
    units = {f.unit for fields in FACTS.values() for f in fields.values()}
    assert units <= LEVEL_UNITS | SCALE_FREE_UNITS, units - (LEVEL_UNITS | SCALE_FREE_UNITS)
    assert not LEVEL_UNITS & SCALE_FREE_UNITS


def test_level_fields_are_the_ones_named_by_a_level_unit():
    # units are in the names (DEVELOPERS.md): a field in mm/s or g is a level, and only those
    for kind, fields in FACTS.items():
        named = {n for n in fields if n.endswith(("_mm_s", "_g"))}
        assert set(level_fields(kind)) == named, kind
    assert set(level_fields("overall")) == {"velocity_rms_mm_s", "accel_rms_g", "accel_peak_g", "ring_band_g"}


@functools.cache
def _evidence(record: str, gain: float) -> tuple[dict, ...]:
    with np.load(TEST_DATA / f"{record}.npz") as a:
        channels = tuple(Channel(name, a[name].astype(float) * STANDARD_GRAVITY_M_S2 * gain, "acceleration", "g",
                                 name, "vertical") for name in ("DE", "FE"))
        rpm = float(a["speed_rpm"])
    quality = tuple(q for c in channels for q in check_channel(c, 12000.0))
    return tuple(extract_evidence(Reading(record, 12000.0, channels, rpm, quality=quality), CWRU))


@pytest.mark.parametrize("record", ["cwru-130", "cwru-105"])
@pytest.mark.parametrize("gain", [1000.0, 0.001])
def test_a_gain_leaves_every_scale_free_value_as_it_was_and_no_level(record, gain):
    plain, scaled = _evidence(record, 1.0), _evidence(record, gain)
    assert not [f for f in plain if f["kind"] == "data_quality"]
    doubted = {f["channel"] for f in scaled if f["kind"] == "data_quality" and f["issue"] == "implausible_level"}
    assert doubted == {"DE", "FE"}
    by_id = {f["id"]: f for f in plain}
    compared = 0
    for f in scaled:
        if f["kind"] == "data_quality":
            continue
        assert f["id"] in by_id, f"{f['id']} only with the gain"
        levels = set(level_fields(f["kind"])) if f.get("channel") in doubted else set()
        for name, value in f.items():
            if name in levels:
                assert value is None, f"{f['id']}.{name} = {value}: a level of a doubted channel"
            elif isinstance(value, float):
                assert value == pytest.approx(by_id[f["id"]][name], rel=1e-6, abs=1e-9), f"{f['id']}.{name}"
                compared += 1
            else:
                assert value == by_id[f["id"]][name], f"{f['id']}.{name}"
    assert len(scaled) - len(doubted) == len(plain)     # the same facts, plus one quality fact per channel
    assert compared > 100


def test_the_envelope_family_of_the_damaged_race_survives_the_gain():
    # CWRU 130: outer race at the drive end; BPFO = 3.5848 x shaft speed (CWRU documentation)
    tones = [f for f in _evidence("cwru-130", 1000.0) if f["kind"] == "envelope_tone" and f["defect"] == "BPFO"
             and f["component"] == "drive_end" and f["channel"] == "DE" and f["fundamental_owned"]]
    assert tones and max(t["first_snr_db"] for t in tones) >= 15
    assert all(t["freq_hz"] == pytest.approx(3.5848 * 1796 / 60, rel=0.02) for t in tones)


def test_a_ratio_between_a_doubted_and_a_trusted_channel_is_not_measured():
    machine = load_machine(CASES / "machines/rw2-raw-water-pump.yaml")
    sim = simulate(machine, "misalignment-angular", None, 3, None, 12800.0, 2.0, 3)
    reading = as_reading(sim)
    plain = {f["location"]: f for f in extract_evidence(reading, machine) if f["kind"] == "direction_ratio"}
    assert plain["motor_de"]["axial_to_radial"] > 0
    gained = {name: x * (1000.0 if name == "M2A" else 1.0) for name, x in sim.channels.items()}
    one = as_reading(type(sim)(sim.fs_hz, gained, sim.points, sim.truth, sim.speed_rpm))
    assert {q.kind for q in one.issues_for("M2A")} == {"implausible_level"}
    ratios = {f["location"]: f for f in extract_evidence(one, machine) if f["kind"] == "direction_ratio"}
    for name in ("axial_to_radial", "axial_1x_to_radial", "axial_2x_to_radial", "horizontal_to_vertical"):
        assert ratios["motor_de"][name] is None, name
    assert ratios["pump_de"] == plain["pump_de"]         # the other location's channels agree on their scale


def test_channels_doubted_alike_share_one_scale():
    from engine.readings import QualityIssue
    high = [QualityIssue("implausible_level", c, "", 500.0) for c in ("A", "B")]
    low = QualityIssue("implausible_level", "C", "", 1e-5)
    assert same_scale(high, ["A", "B"]) and same_scale([], ["A", "B"])
    assert not same_scale(high, ["A", "D"])               # doubted against trusted
    assert not same_scale(high + [low], ["A", "C"])       # too high against too low
