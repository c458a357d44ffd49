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


# A machine file that lists no rolling bearing at all (tests/machines/mfpt-rig-unlisted.yaml, the MFPT rig of
# mfpt-rig.yaml with its sensor's point on the shaft). Before the envelope was taken on such a file, the
# rig's outer race at stage 3 (simulated) and every MFPT race record read "no fault": with no
# bearing rate there was no envelope, no impact train and nothing for the rules to read.
RIG = TEST_MACHINES / "mfpt-rig.yaml"
RIG_BARE = TEST_MACHINES / "mfpt-rig-unlisted.yaml"
CWRU_BARE = TEST_MACHINES / "cwru-motor-unlisted.yaml"
DATA = TEST_MACHINES.parent / "data"
SHARED_MFPT = TEST_MACHINES.parent.parent.parent / "shared" / "datasets" / "mfpt"


@functools.cache
def _rig_reading(fault: str, stage: int, seed: int):
    component = "test_bearing" if fault in ("outer-race", "inner-race", "rolling-element") else None
    return as_reading(simulate(load_machine(RIG), fault, component, stage, None, 25600.0, 4.0, seed))


def _unlisted_because(d) -> list[str]:
    return [f.because for h in d.reading_problems if h.fault == "parts-unlisted"
            for f in h.support + h.same_evidence if f.rule_id == "reading.machine.unlisted-bearing-family"]


@pytest.mark.parametrize(("fault", "stage", "seed"), [("outer-race", 3, 1), ("inner-race", 2, 2),
                                                      ("rolling-element", 3, 1)])
def test_a_bearing_defect_on_a_machine_file_without_bearings_withholds_the_diagnosis(fault, stage, seed):
    d = diagnose(_rig_reading(fault, stage, seed), load_machine(RIG_BARE), reasoner()).reasoning
    assert "parts-unlisted" in _problems(d)
    assert d.withheld
    because = _unlisted_because(d)
    assert because and all("lists no rolling bearing" in b for b in because)


@pytest.mark.parametrize(("fault", "seed"), [("healthy", 1), ("unbalance", 2), ("looseness-rotating", 1),
                                             ("misalignment-angular", 2)])
def test_a_machine_file_without_bearings_is_not_withheld_for_readings_without_a_defect(fault, seed):
    d = diagnose(_rig_reading(fault, 3, seed), load_machine(RIG_BARE), reasoner()).reasoning
    assert "parts-unlisted" not in _problems(d)


def test_the_envelope_family_of_an_unlisted_bearing_is_at_its_defect_rate():
    # the simulated outer race of the MFPT rig: BPFO = 3.245 x 25 Hz = 81.1 Hz (mfpt-rig.yaml's geometry,
    # BPFO = (Z/2)(1 - d/D) x 1X, Randall & Antoni 2011 eq. 1); the simulator slips it by up to 2 %
    from engine.evidence import extract_evidence

    facts = extract_evidence(_rig_reading("outer-race", 3, 1), load_machine(RIG_BARE))
    family = [f for f in facts if f["kind"] == "envelope_family"]
    assert len(family) == 1
    assert family[0]["rate_hz"] == pytest.approx(8 / 2 * (1 - 0.235 / 1.245) * 25, rel=0.02)
    assert family[0]["harmonics_found"] >= 3
    # a file that lists the bearing has its own families (envelope_tone): no stand-in family is reported
    assert not [f for f in extract_evidence(_rig_reading("outer-race", 3, 1), load_machine(RIG))
                if f["kind"] == "envelope_family"]


@pytest.mark.parametrize(("name", "machine", "withheld"), [
    # MFPT outer race record 1 (MFPT Society data set; excerpt, tests/data/README.md) on the rig without its bearing
    ("mfpt-OuterRaceFault_vload_1.npz", RIG_BARE, True),
    # CWRU 130 (outer race) and 105 (inner race), drive-end records, on the CWRU motor without its bearings
    ("cwru-130.npz", CWRU_BARE, True),
    ("cwru-105.npz", CWRU_BARE, True),
    # CWRU 97, the normal baseline: nothing to withhold for
    ("cwru-97.npz", CWRU_BARE, False),
])
def test_real_excerpts_on_a_machine_file_without_bearings(name, machine, withheld):
    from engine.readings import load_reading

    d = diagnose(load_reading(DATA / name), load_machine(machine), reasoner()).reasoning
    assert ("parts-unlisted" in _problems(d)) == withheld
    assert not [h for h in d.hypotheses if h.certainty >= CONFIDENT]


@pytest.mark.slow
@pytest.mark.skipif(not SHARED_MFPT.is_dir(), reason="../shared/datasets is not beside this checkout")
def test_every_mfpt_race_record_on_the_rig_without_its_bearing_is_withheld():
    # the MFPT Society data set's seven outer-race and seven inner-race records (labels: ../shared/datasets/
    # index.csv), 48 828 Hz, 25 Hz shaft, read as bench.real_data reads them
    import dataclasses

    from engine.readings import load_reading

    bare = load_machine(RIG_BARE)
    files = sorted(SHARED_MFPT.glob("*_race_vload/*.mat"))
    assert len(files) == 14
    for path in files:
        r = load_reading(path, sample_rate_hz=48828, unit="g", speed_rpm=1500, channels=["gs"])
        r = dataclasses.replace(r, channels=tuple(dataclasses.replace(c, point="TB", direction="vertical")
                                                  for c in r.channels))
        d = diagnose(r, bare, reasoner()).reasoning
        assert "parts-unlisted" in _problems(d), path.name
        assert not [h for h in d.hypotheses if h.certainty >= CONFIDENT], path.name
