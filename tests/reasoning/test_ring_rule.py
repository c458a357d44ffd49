"""reading.settings.samples-per-cycle (rulebooks/reading.yaml) speaks of the impacts' ringing resonance
only when the reading has impacts: on hand-made facts, and on simulated readings of the demo plant."""

from __future__ import annotations

import functools

import pytest

from engine.evidence import fields_of
from engine.machine import load_machine
from engine.pipeline import diagnose
from engine.reasoning import Reasoner, load_rulebook
from engine.simulation import as_reading, simulate

from support import CASES

RULE = "reading.settings.samples-per-cycle"
DEFAULTS = {"string": "", "number": 0.0, "integer": 0, "boolean": False}


@pytest.fixture(scope="module")
def reasoner():
    return Reasoner(load_rulebook())


def fact(kind: str, fid: str, **fields) -> dict:
    """A fact of ``kind`` with every field of the vocabulary (empty or zero unless given)."""
    out = {name: DEFAULTS[f.type] for name, f in fields_of(kind).items()}
    return out | {"kind": kind, "id": fid} | fields


def acquisition(samples_per_cycle: float) -> dict:
    """A 25.6 kHz reading whose highest envelope band is centred at 25600 / ``samples_per_cycle`` Hz."""
    centre = 25600.0 / samples_per_cycle
    return fact("acquisition", "acquisition-1", sample_rate_hz=25600.0, fmax_hz=10000.0, lines=40000,
                resolution_hz=0.25, duration_s=4.0, slowest_shaft="motor", revolutions=99.0,
                fastest_shaft_hz=24.8, envelope_centre_hz=centre, samples_per_cycle=samples_per_cycle,
                speed_refined=True, speed_rpm=1486.0, speed_shaft="motor")


def impacts() -> dict:
    return fact("impact_train", "impact_train-1", channel="P2H", point="P2H", direction="horizontal",
                location="pump_nde", location_shaft="pump", rate_hz=75.8, spacing_ms=13.2, periodicity=0.6,
                count=290, regularity_cv=0.01, impacts_per_rev=3.06, matched_name="BPFO", read_from="residual",
                matched_component="pump_nde", match_error_pct=-0.1)


def ring_firings(reasoner, facts) -> list:
    result = reasoner.reason(facts)
    return [f for h in result.reading_problems for f in h.support if f.rule_id == RULE]


def test_no_impacts_no_ring_sentence(reasoner):
    # 2.56 samples per cycle is the coarsest an envelope band below Fmax = fs / 2.56 can have
    assert ring_firings(reasoner, [acquisition(2.56)]) == []


def test_impacts_sampled_coarsely_are_named_with_their_channel(reasoner):
    (firing,) = ring_firings(reasoner, [acquisition(2.56), impacts()])
    assert "The impacts in P2H ring near 10000 Hz" in firing.because
    assert "2.56 times per cycle" in firing.because


@pytest.mark.parametrize("samples_per_cycle, fires", [(9.5, True), (10.5, False), (40.0, False)])
def test_ten_samples_per_cycle_keep_the_peak(reasoner, samples_per_cycle, fires):
    # cos(pi / 10) = 0.951: ten samples per cycle keep a tone's peak within 5 % (derived, the rule's source)
    assert bool(ring_firings(reasoner, [acquisition(samples_per_cycle), impacts()])) is fires


@functools.cache
def _rw2():
    return load_machine(CASES / "machines/rw2-raw-water-pump.yaml")


@pytest.mark.parametrize("fault, component, says", [("unbalance", "pump", False), ("outer-race", "pump_nde", True)])
def test_simulated_readings_at_8192_hz(reasoner, fault, component, says):
    # invented demo data (seeded): an unbalance has no impacts, an outer-race defect rings the structure;
    # at 8192 Hz sampling the kurtogram's band sits a few samples per cycle from the Nyquist frequency
    m = _rw2()
    reading = as_reading(simulate(m, fault, component, 3, None, 8192.0, 4.0, 3))
    result = diagnose(reading, m, reasoner)
    texts = [f.because for h in result.reasoning.reading_problems for f in h.support if f.rule_id == RULE]
    assert bool(texts) is says
