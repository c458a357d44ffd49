"""The ring band: the kurtogram's band of each channel (where the impacts ring), its acceleration RMS and
spectral kurtosis in the ``overall`` fact, and the stored indicators made of them."""

from __future__ import annotations

import functools

import numpy as np
import pytest
from scipy import signal

from engine.common.units import STANDARD_GRAVITY_M_S2
from engine.evidence import extract_evidence
from engine.history.record import indicators_of
from engine.machine import load_machine
from engine.readings import Channel, Reading
from engine.readings.quality import check_channel

from support import TEST_MACHINES

CWRU = load_machine(TEST_MACHINES / "cwru-motor.yaml")
FS = 12000.0
N = 60000
RESONANCE_HZ = 3300.0
BPFO_HZ = 107.4          # the CWRU drive end's BPFO at 1797 rpm (dataset README section 2.4)


def _impacts(rng) -> np.ndarray:
    """Decaying rings at RESONANCE_HZ repeating at BPFO_HZ with 1 % jitter (a bearing-like impact train), in g."""
    t = np.arange(int(0.02 * FS)) / FS
    ring = np.exp(-0.05 * 2 * np.pi * RESONANCE_HZ * t) * np.sin(2 * np.pi * RESONANCE_HZ * t)
    x, k = np.zeros(N), 0.0
    while k < N - len(ring):
        x[int(k):int(k) + len(ring)] += ring
        k += FS / BPFO_HZ * (1 + 0.01 * rng.standard_normal())
    return x


@functools.cache
def _facts(gain: float) -> tuple[dict, ...]:
    rng = np.random.default_rng(23)
    impacts = _impacts(rng)
    g = 0.05 * impacts / np.std(impacts) + 0.02 * rng.standard_normal(N) \
        + 0.3 * np.sin(2 * np.pi * 29.95 * np.arange(N) / FS)
    channels = tuple(Channel(name, g * gain * STANDARD_GRAVITY_M_S2 * (1.0 if name == "DE" else 0.5), "acceleration",
                             "g", name, "vertical") for name in ("DE", "FE"))
    quality = tuple(q for c in channels for q in check_channel(c, FS))
    return tuple(extract_evidence(Reading("ring", FS, channels, 1797.0, quality=quality), CWRU))


def _overall(facts, channel: str) -> dict:
    return next(f for f in facts if f["kind"] == "overall" and f["channel"] == channel)


def test_the_ring_band_holds_the_resonance_and_its_rms_is_the_band_limited_signal_s():
    o = _overall(_facts(1.0), "DE")
    lo, hi = o["ring_band_lo_hz"], o["ring_band_hi_hz"]
    # Antoni (2007): the kurtogram's band lies over the resonance the impacts excite (known by construction)
    assert lo <= RESONANCE_HZ <= hi
    assert o["ring_band_kurtosis"] > 0.5        # impulsive (Antoni 2006: 0 for Gaussian noise)
    # scipy as reference: the same samples band-limited to the ring band by a Butterworth band-pass, their
    # time-domain RMS (the filtered record's edges left out), in g
    rng = np.random.default_rng(23)
    impacts = _impacts(rng)
    g = 0.05 * impacts / np.std(impacts) + 0.02 * rng.standard_normal(N) \
        + 0.3 * np.sin(2 * np.pi * 29.95 * np.arange(N) / FS)
    sos = signal.butter(10, [max(lo, 1.0), min(hi, 0.499 * FS)], btype="bandpass", fs=FS, output="sos")
    band = signal.sosfiltfilt(sos, g)[N // 10:-N // 10]
    assert o["ring_band_g"] == pytest.approx(float(np.sqrt(np.mean(band ** 2))), rel=0.05)
    # the shaft line at 30 Hz and most of the noise are outside: far less than the channel's whole RMS
    assert o["ring_band_g"] < 0.5 * o["accel_rms_g"]


def test_twice_the_signal_twice_the_ring_band_level_and_the_same_kurtosis():
    # a level scales with the samples; a kurtosis does not (common practice: a gain is no change of condition)
    one, two = _overall(_facts(1.0), "DE"), _overall(_facts(2.0), "DE")
    assert (two["ring_band_lo_hz"], two["ring_band_hi_hz"]) == (one["ring_band_lo_hz"], one["ring_band_hi_hz"])
    assert two["ring_band_g"] == pytest.approx(2 * one["ring_band_g"], rel=1e-9)
    assert two["ring_band_kurtosis"] == pytest.approx(one["ring_band_kurtosis"], rel=1e-6, abs=1e-9)


def test_the_record_stores_the_ring_band_of_each_channel():
    facts = list(_facts(1.0))
    channels, values = indicators_of(facts)
    got = {(v["channel"], v["name"]): v["value"] for v in values}
    for ch in ("DE", "FE"):
        o = _overall(facts, ch)
        assert got[(ch, "ring_band_g")] == pytest.approx(o["ring_band_g"])
        assert got[(ch, "ring_band_kurtosis")] == pytest.approx(o["ring_band_kurtosis"])
    # FE holds the same samples at half the size: half the ring band level
    assert got[("FE", "ring_band_g")] == pytest.approx(0.5 * got[("DE", "ring_band_g")], rel=1e-6)


def test_no_band_no_ring_indicator():
    # a machine with no bearing rate has no kurtogram band: the fact says 0 and nothing is stored
    o = _overall(_facts(1.0), "DE") | {"ring_band_lo_hz": 0.0, "ring_band_hi_hz": 0.0, "ring_band_g": 0.0,
                                       "ring_band_kurtosis": 0.0}
    _, values = indicators_of([o])
    names = {v["name"] for v in values}
    assert "accel_rms_g" in names and not names & {"ring_band_g", "ring_band_kurtosis"}


def test_a_doubted_scale_stores_the_ring_band_kurtosis_but_no_level():
    # a level the evidence left out (None: scale not trusted) is no indicator; a kurtosis is scale-free
    o = _overall(_facts(1.0), "DE") | {"ring_band_g": None}
    _, values = indicators_of([o])
    names = {v["name"] for v in values}
    assert "ring_band_kurtosis" in names and "ring_band_g" not in names
