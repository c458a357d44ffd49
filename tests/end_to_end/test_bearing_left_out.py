"""A bearing left out of the machine file must not give a sound-looking report.

A new user who lacked one bearing's geometry left it out of the machine file and put its point on
the shaft (tests/machines/cwru-motor-de-unlisted.yaml, the CWRU rig motor of cwru-motor.yaml
without its drive-end bearing). Before rule reading.machine.unexplained-impacts, CWRU record 130
(outer race 0.007 in at 6 o'clock, ../shared/datasets; Smith & Randall 2015 rate it clearly
diagnosable) so described read "No fault ... zone A, urgency: no action", although its DE waveform
holds 619 impacts 9.31 ms apart at kurtosis 7.65. The readings here are simulated (the simulator's
drive-end bearing defects, seeded): the diagnosis is withheld and says the machine file lacks the
part; with the whole machine file the same readings are diagnosed, and readings without impacts
are not withheld for it.
"""

from __future__ import annotations

import functools

import pytest

from engine.machine import load_machine
from engine.pipeline import diagnose
from engine.reasoning import CONFIDENT
from engine.simulation import as_reading, simulate

from support import TEST_MACHINES, reasoner

FULL = TEST_MACHINES / "cwru-motor.yaml"
BARE = TEST_MACHINES / "cwru-motor-de-unlisted.yaml"


@functools.cache
def _reading(fault: str, component: str | None, stage: int, seed: int):
    return as_reading(simulate(load_machine(FULL), fault, component, stage, None, 25600.0, 4.0, seed))


def _problems(reasoning) -> set[str]:
    return {h.fault for h in reasoning.reading_problems if h.certainty >= CONFIDENT}


@pytest.mark.parametrize(("fault", "stage", "seed"), [("outer-race", 2, 1), ("inner-race", 3, 2)])
def test_impacts_of_a_bearing_the_file_leaves_out_withhold_the_diagnosis(fault, stage, seed):
    d = diagnose(_reading(fault, "drive_end", stage, seed), load_machine(BARE), reasoner()).reasoning
    assert "parts-unlisted" in _problems(d)
    assert d.withheld
    assert not [h for h in d.hypotheses if h.certainty >= CONFIDENT]
    because = [f.because for h in d.reading_problems if h.fault == "parts-unlisted" for f in h.support]
    assert because and all("missing from the machine file" in b for b in because)


@pytest.mark.parametrize(("fault", "stage", "seed"), [("outer-race", 2, 1), ("inner-race", 3, 2)])
def test_the_whole_machine_file_diagnoses_the_same_reading(fault, stage, seed):
    d = diagnose(_reading(fault, "drive_end", stage, seed), load_machine(FULL), reasoner()).reasoning
    assert "parts-unlisted" not in _problems(d)
    assert (d.top.fault, d.top.component) == (fault, "drive_end") and d.top.certainty >= CONFIDENT


@pytest.mark.parametrize(("fault", "seed"), [("healthy", 1), ("looseness-rotating", 2), ("unbalance", 1)])
def test_readings_without_a_bearing_s_impacts_are_not_withheld_for_it(fault, seed):
    d = diagnose(_reading(fault, None, 3, seed), load_machine(BARE), reasoner()).reasoning
    assert "parts-unlisted" not in _problems(d)
