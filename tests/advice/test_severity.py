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

from support import RW2
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
