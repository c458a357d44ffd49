"""Checks every extractor in the registry passes, in the spirit of scikit-learn's estimator checks.

A new extractor is tested here without a new test being written: its facts
must fit the vocabulary with units, scale with the signal as their units say,
and a channel of plain noise must not give it strong evidence.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest

from engine.evidence import EXTRACTORS, FACTS, extract_evidence, fields_of
from engine.machine import load_machine
from engine.readings import Channel, Reading
from engine.simulation import as_reading, simulate

from support import CASES

RW2 = load_machine(CASES / "machines" / "rw2-raw-water-pump.yaml")
POINTS = ["P2H", "P1H", "P1A"]
AMPLITUDE_UNITS = {"mm/s RMS", "g peak", "g RMS"}
KNOWN_UNITS = AMPLITUDE_UNITS | {"", "Hz", "dB", "%", "ms", "deg", "s", "rpm"}

# Evidence strong enough for a shipped rule (rulebooks/*.yaml) to lend a hypothesis at least 0.2 on
# its own, per extractor. Plain noise must not reach it. An extractor that reports findings and has
# no entry here fails the last test.
STRONG = {
    "tones": lambda f: f["snr_db"] >= 20,
    "harmonic_series": lambda f: (f["source"] == "1X" and f["count"] >= 6 and f["sustained_count"] >= 4)
    or (f["source"] == "belt pass" and f["count"] >= 3) or (f["source"] == "GMF" and f["second_to_first"] >= 0.7),
    "subharmonics": lambda f: f["count"] >= 2 and f["max_ratio_to_1x"] >= 0.05,
    "nonsynchronous": lambda f: f["count"] >= 1,
    "sideband_family": lambda f: f["pairs"] >= 2,
    "envelope": lambda f: (f["kind"] == "envelope_tone" and f["harmonics_found"] >= 3 and f["first_snr_db"] >= 15)
    or (f["kind"] == "load_zone_modulation" and f["sideband_count"] >= 2),
    "impact_train": lambda f: f["periodicity"] >= 0.2 and f["regularity_cv"] <= 0.2,
    "envelope_family": lambda f: f["harmonics_found"] >= 3 and f["first_snr_db"] >= 16,
    "once_per_rev_event": lambda f: f["fm4"] >= 6 and f["repeat_fraction"] >= 0.7,
    "data_quality": lambda f: True,
}


@pytest.fixture(scope="module")
def fault_reading():
    return as_reading(simulate(RW2, "outer-race", "pump_nde", 3, None, 12800.0, 2.0, 3, POINTS))


def _scaled(reading: Reading, k: float) -> Reading:
    return dataclasses.replace(reading, channels=tuple(dataclasses.replace(c, samples=c.samples * k)
                                                       for c in reading.channels))


def test_every_field_declares_a_known_unit():
    for kind, fields in FACTS.items():
        for name, field in fields.items():
            assert field.unit in KNOWN_UNITS, (kind, name, field.unit)
            assert field.about, (kind, name)


def test_every_extractor_documents_itself_and_declares_its_kinds():
    for ex in EXTRACTORS:
        assert ex.run.__doc__, ex.name
        assert set(ex.kinds) <= set(FACTS), ex.name


def test_amplitudes_scale_with_the_signal_and_nothing_else_does(fault_reading):
    # twice the signal, twice every amplitude; frequencies, ratios, counts and SNRs unchanged
    k = 7.0
    base = {f["id"]: f for f in extract_evidence(fault_reading, RW2)}
    scaled = {f["id"]: f for f in extract_evidence(_scaled(fault_reading, k), RW2)}
    assert base.keys() == scaled.keys()
    for fid, fact in base.items():
        spec = fields_of(fact["kind"])
        for name, value in fact.items():
            other = scaled[fid][name]
            if isinstance(value, bool) or not isinstance(value, (int, float)):
                assert other == value, (fid, name)
            elif spec[name].unit in AMPLITUDE_UNITS:
                assert math.isclose(other, k * value, rel_tol=1e-6, abs_tol=1e-12), (fid, name, value, other)
            else:
                assert math.isclose(other, value, rel_tol=1e-6, abs_tol=1e-9), (fid, name, value, other)


@pytest.mark.parametrize("ex", [e for e in EXTRACTORS if not e.always], ids=lambda e: e.name)
def test_plain_noise_gives_no_strong_evidence(ex):
    rng = np.random.default_rng(7)
    fs, n = 12800.0, 25600
    channels = tuple(Channel(p, 0.5 * rng.standard_normal(n), "acceleration", "g", p, RW2.point(p).direction)
                     for p in POINTS)
    reading = Reading("noise", fs, channels)
    assert ex.name in STRONG, f"{ex.name}: say what strong evidence it gives (STRONG) or why it always reports"
    strong = [f for f in extract_evidence(reading, RW2) if f["kind"] in ex.kinds and STRONG[ex.name](f)]
    assert not strong, strong[:3]


def test_plain_noise_on_a_machine_file_without_bearings_gives_no_strong_evidence():
    # the envelope is taken on a file that lists no rolling bearing too (its stand-in defect rate): noise there
    # gives no strong fact of the extractors that read it
    from support import TEST_MACHINES

    bare = load_machine(TEST_MACHINES / "mfpt-rig-unlisted.yaml")
    rng = np.random.default_rng(11)
    fs, n = 25600.0, 102400
    reading = Reading("noise", fs, (Channel("TB", 0.5 * rng.standard_normal(n), "acceleration", "g", "TB",
                                            "vertical"),))
    facts = extract_evidence(reading, bare)
    assert [f for f in facts if f["kind"] == "overall" and f["ring_band_hi_hz"] > 0]     # the envelope was taken
    strong = [f for f in facts for ex in EXTRACTORS if f["kind"] in ex.kinds
              and ex.name in ("envelope", "impact_train", "envelope_family") and STRONG[ex.name](f)]
    assert not strong, strong[:3]
