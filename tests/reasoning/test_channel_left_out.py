"""A corrupted channel is left out and the reading's other channels are diagnosed without it;
the diagnosis is withheld only when no clean channel remains (rulebooks/reading.yaml,
reading.signal.broken, reading.signal.channel-left-out, reading.signal.point-unseen)."""

from __future__ import annotations

import dataclasses
from types import SimpleNamespace

import numpy as np
import pytest

from engine.analysis import analyse
from engine.evidence import run_extractors
from engine.evidence.acquisition import data_quality
from engine.machine import load_machine
from engine.readings.model import QualityIssue
from engine.readings.quality import CORRUPTING_ISSUES, ISSUE_NAMES
from engine.reasoning import CONFIDENT, Reasoner, load_rulebook
from engine.simulation import as_reading, simulate

from support import ROOT


@pytest.fixture(scope="module")
def reasoner():
    return Reasoner(load_rulebook())


@pytest.fixture(scope="module")
def pump():
    return load_machine(ROOT / "cases/machines/rw2-raw-water-pump.yaml")


def _inner_race(pump, points):
    # an inner race defect on the pump's drive-end bearing, stage 3: P1H and P1A sit at that bearing
    return simulate(pump, "inner-race", "pump_de", 3, None, 12800.0, 3.0, 5, points)


def _reason(reasoner, pump, sim):
    analysis = analyse(as_reading(sim), pump)
    return analysis, reasoner.reason(run_extractors(analysis))


def _left_out(result):
    return [h for h in result.reading_problems if h.fault == "channel-left-out"]


def test_one_nan_sample_leaves_its_channel_out_and_the_rest_is_diagnosed(reasoner, pump):
    sim = _inner_race(pump, ["P1H", "P2H"])
    sim.channels["P2H"][1000] = np.nan                   # one sample the recorder lost
    analysis, result = _reason(reasoner, pump, sim)
    assert [c.name for c in analysis.channels] == ["P1H"]
    assert analysis.left_out == ("P2H",)
    assert not result.withheld
    assert result.top is not None and result.top.fault == "inner-race" and result.top.certainty >= CONFIDENT
    left = _left_out(result)
    assert [h.component for h in left] == ["P2H"] and left[0].confident and not left[0].withholds
    words = " ".join(f.because for f in left[0].support)
    assert "P2H" in words and "nonfinite" in words
    assert "not judged" in words                         # no other channel sits at pump_nde


def test_a_clipped_channel_is_left_out_while_a_clean_one_remains(reasoner, pump):
    sim = _inner_race(pump, ["P1H", "P1A"])
    x = sim.channels["P1A"]
    sim.channels["P1A"] = x.clip(-0.3 * abs(x).max(), 0.3 * abs(x).max())   # a recorder at full scale
    analysis, result = _reason(reasoner, pump, sim)
    assert [c.name for c in analysis.channels] == ["P1H"]
    assert not result.withheld
    assert result.top is not None and result.top.fault == "inner-race"
    left = _left_out(result)
    assert [h.component for h in left] == ["P1A"]
    words = " ".join(f.because for f in left[0].support)
    assert "clipping" in words and "1 of them still sit at pump_de" in words and "not judged" not in words


def test_a_clipped_channel_that_names_no_point_is_left_out_in_words_that_say_so(reasoner, pump):
    # channels a recorder named itself ("ch1", "ch2"): no point, so no bearing to say the others still sit at
    sim = _inner_race(pump, ["P1H", "P1A"])
    x = sim.channels["P1A"]
    sim.channels["P1A"] = x.clip(-0.3 * abs(x).max(), 0.3 * abs(x).max())
    reading = as_reading(sim)
    names = {ch.name: f"ch{i + 1}" for i, ch in enumerate(reading.channels)}
    unnamed = tuple(dataclasses.replace(ch, name=names[ch.name], point=None, direction=None) for ch in reading.channels)
    quality = tuple(dataclasses.replace(q, channel=names[q.channel]) for q in reading.quality)
    analysis = analyse(dataclasses.replace(reading, channels=unnamed, quality=quality), pump)
    result = reasoner.reason(run_extractors(analysis))
    assert analysis.left_out == ("ch2",)
    (left,) = _left_out(result)
    assert [f.rule_id for f in left.support] == ["reading.signal.channel-left-out-unplaced"]
    words = " ".join(f.because for f in left.support)
    assert "names no measurement point" in words and "sit at" not in words


def test_every_channel_clipped_still_withholds(reasoner, pump):
    sim = _inner_race(pump, ["P1H", "P2H"])
    for name, x in sim.channels.items():
        sim.channels[name] = x.clip(-0.3 * abs(x).max(), 0.3 * abs(x).max())
    analysis, result = _reason(reasoner, pump, sim)
    assert sorted(c.name for c in analysis.channels) == ["P1H", "P2H"]   # nothing clean: analysed as they are
    assert result.withheld
    assert {h.fault for h in result.reading_problems if h.withholds and h.confident} == {"signal-corrupted"}
    assert not _left_out(result)


def test_the_rules_read_the_one_corrupting_field_not_a_list_of_issues():
    rulebook = load_rulebook()
    for rid in ("reading.signal.broken", "reading.signal.channel-left-out", "reading.signal.point-unseen"):
        rule = next(r for r in rulebook.rules if r.id == rid)
        conditions = {c.field: (c.op, c.value) for p in rule.needs for c in p.conditions}
        assert conditions["corrupting"] == ("is", True), rid
        # no second copy of CORRUPTING_ISSUES to keep in step (broken leaves drift to its own rule's words)
        assert conditions.get("issue") in (None, ("is_not", "drift")), rid
    assert not rulebook.faults["channel-left-out"].withholds_diagnosis
    assert rulebook.faults["signal-corrupted"].withholds_diagnosis


def test_the_corrupting_field_is_the_one_list_for_every_issue_kind(pump):
    # every issue the gates can raise, on channel A (left out) of a stub analysis, channel B analysed
    kinds = sorted(ISSUE_NAMES)
    stub = SimpleNamespace(
        machine=pump, channel_points={"A": "P1H", "B": "P1A"}, left_out=("A",),
        channels=(SimpleNamespace(name="B"),),
        quality=tuple(QualityIssue(kind, "A", "stub", 1.0) for kind in kinds))
    facts = data_quality(stub)
    assert [f["issue"] for f in facts] == kinds
    assert {f["issue"] for f in facts if f["corrupting"]} == set(CORRUPTING_ISSUES)
    assert {f["issue"] for f in facts if not f["corrupting"]} == set(kinds) - set(CORRUPTING_ISSUES)
    assert all(f["left_out"] and f["location_channels"] == 1 for f in facts)   # P1H and P1A sit at pump_de


def _ramp(x, fs_hz=12800.0):
    # a settling sensor: a slow ramp of 5 x the channel's RMS over the record
    t = np.arange(x.size) / fs_hz
    return x + 5.0 * float(np.sqrt(np.mean(x ** 2))) * t / t[-1]


def test_one_drifting_channel_is_left_out_and_the_rest_is_diagnosed(reasoner, pump):
    sim = _inner_race(pump, ["P1H", "P1A"])
    sim.channels["P1A"] = _ramp(sim.channels["P1A"])
    analysis, result = _reason(reasoner, pump, sim)
    assert "drift" in [q.kind for q in analysis.quality if q.channel == "P1A"]
    assert [c.name for c in analysis.channels] == ["P1H"] and analysis.left_out == ("P1A",)
    assert not result.withheld                            # it withheld the whole reading before
    assert result.top is not None and result.top.fault == "inner-race" and result.top.certainty >= CONFIDENT
    left = _left_out(result)
    assert [h.component for h in left] == ["P1A"]
    words = " ".join(f.because for f in left[0].support)
    assert "drift" in words and "1 of them still sit at pump_de" in words
    assert not [f for h in result.reading_problems for f in h.support if f.rule_id == "reading.signal.drift"]


def test_every_channel_drifting_still_withholds(reasoner, pump):
    sim = _inner_race(pump, ["P1H", "P2H"])
    for name, x in sim.channels.items():
        sim.channels[name] = _ramp(x)
    analysis, result = _reason(reasoner, pump, sim)
    assert sorted(c.name for c in analysis.channels) == ["P1H", "P2H"] and not analysis.left_out
    assert result.withheld
    corrupted = [h for h in result.reading_problems if h.fault == "signal-corrupted" and h.withholds and h.confident]
    assert sorted(h.component for h in corrupted) == ["P1H", "P2H"]
    rules = {f.rule_id for h in corrupted for f in h.support}
    assert "reading.signal.drift" in rules and "reading.signal.broken" not in rules   # its own words, once
    assert not _left_out(result)
