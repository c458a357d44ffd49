"""Impacts once per turn read from the waveform with its synchronous parts kept (``read_from: waveform``).

A gear tooth struck once per turn is locked to its shaft: the synchronous part taken out before the bearing
envelope takes it along, so the residual's impact train cannot show it on a steady speed. The waveform's own
train does, and only the gear rule reads it; the bearing rules keep reading the residual. The readings are
simulated (the demo plant's cooling-tower fan, seeded): they show what the measurement reads, not how well it
judges real gearboxes.
"""

from __future__ import annotations

import functools

import pytest

from engine.analysis import analyse
from engine.evidence import fields_of, run_extractors
from engine.machine import load_machine
from engine.reasoning import Reasoner, load_rulebook
from engine.simulation import as_reading, simulate

from support import CASES

CT1 = CASES / "machines" / "ct1-cooling-tower-fan.yaml"
RW2 = CASES / "machines" / "rw2-raw-water-pump.yaml"
DEFAULTS = {"string": "", "number": 0.0, "integer": 0, "boolean": False}


@functools.cache
def _analysed(path, fault: str, component: str | None, stage: int, seed: int):
    machine = load_machine(path)
    return analyse(as_reading(simulate(machine, fault, component, stage, None, 25600.0, 4.0, seed)), machine)


@pytest.fixture(scope="module")
def reasoner():
    return Reasoner(load_rulebook())


def _fact(kind: str, fid: str, **fields) -> dict:
    return {name: DEFAULTS[f.type] for name, f in fields_of(kind).items()} | {"kind": kind, "id": fid} | fields


@pytest.mark.parametrize("seed", [0, 15])
def test_a_tooth_struck_once_per_turn_shows_in_the_waveform_not_in_the_residual(seed):
    # a broken tooth (stage 4) knocks hard enough to reach the motor's sensor across the drive shaft; the
    # simulator's stage-3 spall (a quarter of a g) stands out in the synchronous average, not in every turn there
    a = _analysed(CT1, "gear-tooth", "bevel_stage", 4, seed)
    gear_hz = a.speeds_hz["gear_input"]          # the bevel pinion's shaft: the simulator strikes once per its turn
    for c in a.channels:
        # the synchronous part taken out exactly leaves no train at the gear shaft's speed in the residual
        assert c.impacts is None or abs(c.impacts.rate_hz / gear_hz - 1) > 0.03, c.name
    near = [c for c in a.channels if c.point.shaft in ("motor", "gear_input")]    # sensors on the pinion's side
    assert near
    for c in near:
        train = c.waveform_impacts
        assert train is not None, c.name
        # the rate is the shaft's to the record's resolution (1 / 4 s = 0.25 Hz over 16.4 Hz: 1.5 %)
        assert abs(train.rate_hz / gear_hz - 1) < 0.015, (c.name, train.rate_hz, gear_hz)
        assert train.periodicity >= 0.3 and train.regularity_cv <= 0.2, (c.name, train)


@pytest.mark.parametrize("fault", ["gear-wear", "gear-eccentricity", "healthy"])
def test_no_waveform_train_without_a_struck_tooth(fault):
    # wear spreads the mesh and eccentricity modulates it smoothly at 1X: neither strikes once per turn
    a = _analysed(CT1, fault, "bevel_stage" if fault != "healthy" else None, 3, 1)
    assert [c.name for c in a.channels if c.waveform_impacts is not None] == []


def test_the_waveform_is_read_only_on_a_geared_machine():
    a = _analysed(RW2, "outer-race", "pump_nde", 3, 1)
    assert not a.rates.meshes
    assert all(c.waveform_impacts is None for c in a.channels)
    assert all(c.impacts is not None for c in a.channels if c.point.at == "pump_nde")


def test_the_facts_say_which_signal_each_train_was_read_from_and_the_residual_s_come_first():
    analysed = _analysed(CT1, "gear-tooth", "bevel_stage", 3, 15)
    facts = [f for f in run_extractors(analysed) if f["kind"] == "impact_train"]
    kinds = [f["read_from"] for f in facts]
    assert "waveform" in kinds
    assert kinds == sorted(kinds, key=("residual", "waveform").index)    # residual first: their ids stay
    for f in facts:
        if f["read_from"] == "waveform":
            assert f["signs"] == {f"{f['channel']}|impacts:waveform": 1.0}


def _gear_facts(read_from: str) -> list[dict]:
    """A once-per-turn train on GINH, the TSA spike on gear_input and the bevel mesh's 1X sidebands."""
    base = {"channel": "GINH", "point": "GINH", "direction": "horizontal", "location": "gear_input_de",
            "location_shaft": "gear_input"}
    return [
        _fact("impact_train", "impact_train-1", **base, read_from=read_from, rate_hz=16.4, spacing_ms=61.0,
              periodicity=0.5, count=64, regularity_cv=0.01, impacts_per_rev=1.0, matched_name="1X",
              matched_component="gear_input"),
        _fact("once_per_rev_event", "once_per_rev_event-1", **base, shaft="gear_input", revolutions=65, fm4=60.0,
              peak_to_rms=9.0, repeat_fraction=1.0),
        _fact("sideband_family", "sideband_family-1", **base, carrier="GMF", spacing="1X", spacing_shaft="gear_input",
              component="bevel_stage", pairs=3, carrier_found=True),
    ]


def _fired(result) -> set[str]:
    return {f.rule_id for h in result.hypotheses for f in h.support + h.against + h.same_evidence}


@pytest.mark.parametrize(("read_from", "fires"), [("waveform", True), ("residual", False)])
def test_the_gear_rule_reads_the_waveform_s_train_only(reasoner, read_from, fires):
    assert ("gear.tooth.impacts-per-turn" in _fired(reasoner.reason(_gear_facts(read_from)))) is fires


def test_the_bearing_rule_reads_the_residual_s_train_only(reasoner):
    # a pump's outer race: its train in the residual's envelope fires the rule; the same train said to be read
    # from the waveform does not
    facts = run_extractors(_analysed(RW2, "outer-race", "pump_nde", 3, 1))
    relabelled = [f | {"read_from": "waveform"} if f["kind"] == "impact_train" else f for f in facts]
    assert "bearing.defect.impacts" in _fired(reasoner.reason(facts))
    assert "bearing.defect.impacts" not in _fired(reasoner.reason(relabelled))
