"""The report says when a shaft's turns were order tracked (engine/analysis/tracking.py), and only then.

A reader judging a once-per-turn tooth call should know whether the average followed a wandering
speed or was cut at one constant speed. The readings are invented (the demo plant's cooling-tower
fan drive, seeded, its clock warped by bench/wander.py's +-1 % at 0.5 Hz, a loaded induction motor's
fluctuation: common practice)."""

import pytest

from bench.wander import MACHINES, with_speed_wander
from engine.machine import load_machine
from engine.pipeline import diagnose, document_of
from engine.simulation import as_reading, simulate

from support import reasoner

pytestmark = pytest.mark.slow


def _speed(wander: float) -> dict:
    machine = load_machine(MACHINES["ct1"])
    sim = simulate(machine, "gear-tooth", "bevel_stage", 3, None, 25600.0, 4.0, 0)
    return document_of(diagnose(as_reading(with_speed_wander(sim, wander)), machine, reasoner()))["speed"]


def test_a_wandering_speed_is_said_to_be_order_tracked():
    speed = _speed(0.01)
    assert speed["order_tracked_shafts"], speed
    assert "order tracking" in speed["text"]
    assert all(s in speed["text"] for s in speed["order_tracked_shafts"])


def test_a_steady_speed_says_nothing_of_it():
    speed = _speed(0.0)
    assert speed["order_tracked_shafts"] == []
    assert "order tracking" not in speed["text"]
