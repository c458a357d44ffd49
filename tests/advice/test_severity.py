"""Severity and urgency (engine/advice.py, policy in rulebooks/advice/): the ISO 20816-3 zones against
the standard's table, an assumed machine group said, urgency from the clean channels of a withheld
reading, and a clipped channel's zone flagged.
"""

from __future__ import annotations

import pytest

from engine.advice import load_advice, zone_of, zone_scale
from engine.machine import load_machine
from engine.pipeline import diagnose, document_of
from engine.report import render
from engine.simulation import as_reading, simulate

from support import CASES, RW2
from support import reasoner as shared_reasoner


@pytest.fixture(scope="module")
def reasoner():
    return shared_reasoner()


# ISO 20816-3:2022 zone boundaries, mm/s RMS (same values as ISO 10816-3:2009 Annex A),
# recalled from memory with high confidence for the 2009 tables: ../shared/notes/check-values.md
ISO_TABLE = [(1, "rigid", 2.3, 4.5, 7.1), (1, "flexible", 3.5, 7.1, 11.0),
             (2, "rigid", 1.4, 2.8, 4.5), (2, "flexible", 2.3, 4.5, 7.1)]


@pytest.mark.parametrize("group, support, ab, bc, cd", ISO_TABLE)
def test_iso_20816_3_zones_match_the_standards_table(group, support, ab, bc, cd):
    data = load_advice()
    m = load_machine(RW2)
    scale = zone_scale(type(m)(**{**m.__dict__, "iso_group": group, "support": support}), data)
    assert (scale.ab, scale.bc, scale.cd) == (ab, bc, cd)
    assert [zone_of(v, scale) for v in (0.5 * ab, ab, 0.5 * (ab + bc), bc, cd, 2 * cd)] == \
        ["A", "B", "B", "C", "D", "D"]


def test_missing_group_is_assumed_and_said(tmp_path):
    text = RW2.read_text().replace("iso_group: 2\n", "")
    (tmp_path / "m.yaml").write_text(text)
    scale = zone_scale(load_machine(tmp_path / "m.yaml"), load_advice())
    assert scale.assumed and scale.group == 2


def test_a_clipped_channel_is_left_out_and_the_clean_channels_act(reasoner):
    # nu25 item 2: one bad channel withheld the whole diagnosis; now it is left out and the rest decide
    from engine.simulation import clip_channel
    m = load_machine(RW2)
    sim = clip_channel(simulate(m, "unbalance", "pump", 4, None, 12800.0, 3.0, 2), "M2A", 0.3)
    d = diagnose(as_reading(sim), m, reasoner)
    assert not d.reasoning.withheld
    assert "M2A" not in {z.channel for z in d.advice.zones}
    assert d.advice.urgency.id == "act-now"    # stage-4 unbalance: zone D on the unclipped pump points
    assert any("M2A" in line and "left out" in line for line in d.advice.limitations)


def test_a_clipped_channel_s_zone_carries_its_signal_issue(reasoner):
    # issue 13: a clipped channel got a zone in the levels table with no flag; a channel is analysed
    # clipped (and its zone shown) when no channel of the reading is clean
    from engine.simulation import clip_channel
    m = load_machine(RW2)
    sim = clip_channel(simulate(m, "unbalance", "pump", 3, None, 12800.0, 3.0, 2, ["M2A"]), "M2A", 0.3)
    doc = document_of(diagnose(as_reading(sim), m, reasoner))
    rows = {z["channel"]: z for z in doc["zones"]["points"]}
    assert "clipping" in rows["M2A"]["signal_issues"]
    assert "M2A" in render(doc, "text") and "the level is not to be trusted" in render(doc, "text")


def test_a_high_level_no_pattern_explains_says_what_to_measure_next(reasoner):
    # a parallel offset on a belt-driven motor (no coupling to place it on): zone D at the motor and no
    # hypothesis shown; an analyst then looks from more directions, by phase and at finer resolution
    # (common practice)
    machine = load_machine(CASES / "machines/bw1-backwash-blower.yaml")
    sim = simulate(machine, "misalignment-parallel", "motor", 3, None, 25600.0, 4.0, 1)
    result = diagnose(as_reading(sim), machine, reasoner)
    assert result.advice.worst_zone == "D" and not [h for h in result.reasoning.hypotheses if h.certainty >= 0.2]
    high = sorted(z.point for z in result.advice.zones if z.zone in ("C", "D"))
    assert len(result.advice.measure_next) == len(load_advice()["unexplained_level"]["measure_next"])
    assert high[0] in result.advice.measure_next[0] and "all three directions" in result.advice.measure_next[0]
    text = render(document_of(result), "text")
    assert "MEASURE NEXT" in text and "1X phase" in text


def test_nothing_to_measure_next_when_a_hypothesis_explains_the_level_or_the_level_is_low(reasoner):
    machine = load_machine(RW2)
    unbalance = diagnose(as_reading(simulate(machine, "unbalance", "pump", 4, None, 12800.0, 2.0, 3)), machine,
                         reasoner)
    assert unbalance.advice.worst_zone in ("C", "D") and unbalance.advice.measure_next == ()
    healthy = diagnose(as_reading(simulate(machine, "healthy", None, 1, None, 12800.0, 2.0, 3)), machine, reasoner)
    assert healthy.advice.worst_zone in ("A", "B") and healthy.advice.measure_next == ()
