"""A family at k times the rate of impacts that match nothing: every k-th line of the impacts' own comb.

CWRU record 161 (an outer race, 0.007 in at 12 o'clock, 48 kHz; ../shared/datasets/index.csv) read with its
sample rate stated at half (24 kHz) puts every line at half its frequency: the impacts repeat at half BPFO,
and three times that lies 0.7 % from BPFI, so the drive end read "inner race" at 67 %. Rule
bearing.defect.impacts-slower-than-family opposes a family whose rate is 2 to 4 times an unexplained train's
where the train's own lines fill the places between. MFPT's outer race under load 3 (the MFPT data set's
label) has its impacts read at a third of BPFO by the autocorrelation, but no comb between: its call stands.
"""

from __future__ import annotations

import functools
from pathlib import Path

import pytest

from bench.real_data import MACHINES, injected, reading_of, records
from engine.machine import load_machine
from engine.pipeline import diagnose
from engine.reasoning import CONFIDENT

from support import SHARED_DATASETS, reasoner

pytestmark = [pytest.mark.slow,
              pytest.mark.skipif(not (SHARED_DATASETS / "index.csv").exists(), reason="needs ../shared/datasets")]

RULE = "bearing.defect.impacts-slower-than-family"


@functools.cache
def _diagnosis(stem: str, rate_factor: float = 1.0):
    row = next(r for r in records(SHARED_DATASETS) if Path(r["path"]).stem == stem)
    reading = reading_of(SHARED_DATASETS / row["path"], row)
    if rate_factor != 1.0:
        reading = injected(reading, "rate", rate_factor)
    return diagnose(reading, load_machine(MACHINES[row["dataset"]]), reasoner())


def test_half_the_sample_rate_gives_no_confident_call_and_names_the_check():
    d = _diagnosis("161", 0.5)
    assert not [h for h in d.reasoning.hypotheses if h.certainty >= CONFIDENT]
    trains = [f for f in d.facts if f["kind"] == "impact_train" and f["read_from"] == "residual"]
    assert any(f["slower_than_name"] == "BPFI" and f["slower_by"] == 3 for f in trains)
    inner = next(h for h in d.reasoning.hypotheses if (h.fault, h.component) == ("inner-race", "drive_end"))
    held = [f for f in inner.against if f.rule_id == RULE]
    assert held and "sample rate" in held[0].because


def test_impacts_at_a_third_of_a_real_outer_races_rate_leave_its_call():
    d = _diagnosis("OuterRaceFault_vload_3")
    train = next(f for f in d.facts if f["kind"] == "impact_train" and f["read_from"] == "residual")
    assert train["slower_than_name"] == "BPFO" and train["slower_lines_between"] < 0.75
    top = d.reasoning.top
    assert (top.fault, top.component) == ("outer-race", "test_bearing") and top.certainty >= CONFIDENT
