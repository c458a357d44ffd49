"""A wrong stated speed or sample rate gives no confident wrong call: real records stated wrong.

Source of the records and their labels: the CWRU Bearing Data Center, records 130 (outer race,
0.007 in, drive end, 1796 rpm) and 105 (inner race, 0.007 in, drive end, 1797 rpm), 12 kHz, and
the MFPT Society's OuterRaceFault_vload_1 (outer race, 25 Hz shaft, 48 828 S/s); the excerpts in
tests/data (provenance in tests/data/README.md). Each is stored again stating its speed 20 %
high or low (a wrong tach reading or sidecar) or its sample rate 1.1, 2 or 0.5 times the true rate
(a wrong recorder setting; the samples are untouched, so every frequency reads that much too
high or low), and diagnosed through the command line. A wrong stated value can only mislead: the
diagnosis must be withheld (exit code 7, README "Exit codes") or call nothing but the label's
fault at 50 % or more. Where the spectrum shows the shaft's own family away from the stated
speed, the report says so and says what to check (a tachometer or strobe, the sample rate).
"""

from __future__ import annotations

import json
import shutil

import numpy as np
import pytest

from engine.cli import main
from engine.common.errors import EXIT_WITHHELD
from engine.reasoning import CONFIDENT

from support import ROOT, TEST_DATA, TEST_MACHINES

RECORDS = {
    # excerpt: (machine file, the label's fault and bearing)
    "cwru-130": ("cwru-motor.yaml", ("outer-race", "drive_end")),
    "cwru-105": ("cwru-motor.yaml", ("inner-race", "drive_end")),
    "mfpt-OuterRaceFault_vload_1": ("mfpt-rig.yaml", ("outer-race", "test_bearing")),
}
WRONG = {"speed x1.2": ("speed_rpm", 1.2), "speed x0.8": ("speed_rpm", 0.8),
         "rate x1.1": ("sample_rate_hz", 1.1), "rate x2": ("sample_rate_hz", 2.0),
         "rate x0.5": ("sample_rate_hz", 0.5)}


def stated_wrong(tmp_path, record: str, key: str, factor: float):
    source = TEST_DATA / f"{record}.npz"
    with np.load(source) as archive:
        contents = {k: archive[k] for k in archive.files}
    contents[key] = np.array(float(contents[key]) * factor)
    path = tmp_path / source.name
    np.savez(path, **contents)
    shutil.copy(source.with_name(source.name + ".yaml"), path.with_name(path.name + ".yaml"))
    return path


def diagnosed(path, machine: str, capsys) -> tuple[int, dict]:
    code = main(["diagnose", str(path), "--machine", str(TEST_MACHINES / machine), "--format", "json"])
    return code, json.loads(capsys.readouterr().out)


@pytest.mark.parametrize("record", sorted(RECORDS))
@pytest.mark.parametrize("wrong", sorted(WRONG))
def test_a_wrong_stated_speed_or_rate_gives_no_confident_wrong_call(tmp_path, capsys, record, wrong):
    machine, label = RECORDS[record]
    code, doc = diagnosed(stated_wrong(tmp_path, record, *WRONG[wrong]), machine, capsys)
    if code == EXIT_WITHHELD:
        assert doc["verdict"]["withheld"] is True
        return
    assert code == 0, f"exit {code}"
    confident = {(h["fault"], h["component"]) for h in doc["hypotheses"] if h["certainty"] >= CONFIDENT}
    assert confident <= {label}, f"{wrong}: confident wrong call {confident - {label}}"


@pytest.mark.parametrize("record, wrong", [("cwru-130", "rate x1.1"), ("cwru-105", "rate x1.1")])
def test_the_shaft_family_away_from_the_stated_speed_withholds_and_says_what_to_check(tmp_path, capsys,
                                                                                      record, wrong):
    machine, _ = RECORDS[record]
    code, doc = diagnosed(stated_wrong(tmp_path, record, *WRONG[wrong]), machine, capsys)
    assert code == EXIT_WITHHELD
    text = json.dumps(doc)
    assert "reading.speed.family-elsewhere" in text or "reading.speed.clear-family-elsewhere" in text
    assert "tachometer" in text and "sample rate" in text


@pytest.mark.parametrize("record", sorted(RECORDS))
def test_the_true_speed_and_rate_raise_no_doubt(capsys, record):
    machine, label = RECORDS[record]
    code, doc = diagnosed(TEST_DATA / f"{record}.npz", machine, capsys)
    assert code == 0
    assert (doc["hypotheses"][0]["fault"], doc["hypotheses"][0]["component"]) == label
    text = json.dumps(doc)
    assert "family-elsewhere" not in text
    assert "reading.speed.no-one-x" not in text and "reading.speed.half-order" not in text


def test_a_rate_stated_twice_leaves_1x_empty_and_withholds(tmp_path, capsys):
    # CWRU 130 at 1796 rpm: stated at twice its rate its true 1X (29.9 Hz) reads at 59.9 Hz, beside the 60 Hz
    # line frequency, and nothing stands at the stated 1X (residual unbalance always gives one: common practice)
    code, doc = diagnosed(stated_wrong(tmp_path, "cwru-130", "sample_rate_hz", 2.0), "cwru-motor.yaml", capsys)
    assert code == EXIT_WITHHELD
    text = json.dumps(doc)
    assert "reading.speed.no-one-x" in text
    assert "tachometer" in text and "sample rate" in text


def test_a_rate_stated_half_shows_the_half_order_series_and_withholds(tmp_path, capsys):
    # stated at half its rate every frequency reads halved: the machine's 1X, 3X, 5X .. at 0.5X, 1.5X, 2.5X ..
    # (which of the half-order rules fires depends on how many half orders stand over the floor in the
    # excerpt at the speed its family gives; each withholds with the same advice)
    code, doc = diagnosed(stated_wrong(tmp_path, "cwru-130", "sample_rate_hz", 0.5), "cwru-motor.yaml", capsys)
    assert code == EXIT_WITHHELD
    text = json.dumps(doc)
    assert "reading.speed.half-order-family" in text or "reading.speed.half-orders-twice-1x" in text
    assert "tachometer" in text and "sample rate" in text


def test_a_rate_stated_half_is_named_when_four_half_orders_stand(tmp_path, capsys):
    # CWRU 105's excerpt (lines 0.5 Hz apart) stated at half its rate: at the speed its shaft family gives
    # four of the five half orders to 4.5X stand on its louder channel (the fifth lies 0.7 % off its order,
    # beyond the 0.5 % a line is matched within): the contradiction is named, with what to check, and no
    # fault but the label's is called at 50 % or more
    code, doc = diagnosed(stated_wrong(tmp_path, "cwru-105", "sample_rate_hz", 0.5), "cwru-motor.yaml", capsys)
    text = json.dumps(doc)
    assert "reading.speed.half-orders-dominate" in text and "sample rate" in text
    confident = {(h["fault"], h["component"]) for h in doc["hypotheses"] if h["certainty"] >= CONFIDENT}
    assert code == EXIT_WITHHELD or confident <= {RECORDS["cwru-105"][1]}


@pytest.fixture(scope="module")
def pump_outer_race(tmp_path_factory):
    """The demo pump RW2 (tellwave's simulator) with a stage-3 outer race on pump_nde, 25.6 kHz, 4 s."""
    from support import CASES
    path = tmp_path_factory.mktemp("speed") / "rw2.wav"
    assert main(["synth", str(CASES / "machines/rw2-raw-water-pump.yaml"), "-o", str(path), "--fault", "outer-race",
                 "--component", "pump_nde", "--stage", "3", "--seed", "11"]) == 0
    return path


def test_a_stated_speed_5_percent_off_either_way_is_corrected_or_explained(pump_outer_race, capsys):
    # nu27 item 15. 5 % high puts the true speed 1/1.05 - 1 = -4.8 % from the stated one, within the 5 % a stated
    # speed is corrected within; 5 % low puts it 1/0.95 - 1 = +5.3 % away, beyond it (arithmetic). The first is
    # corrected with a warning; the second is withheld, and its message names the spectrum's speed and says why.
    from support import CASES
    machine = str(CASES / "machines/rw2-raw-water-pump.yaml")
    true_rpm = 1486.0                                    # the machine file's nominal speed, which synth runs at
    capsys.readouterr()
    high = main(["diagnose", str(pump_outer_race), "--machine", machine, "--rpm", f"{1.05 * true_rpm:.0f}",
                 "--format", "json"])
    doc = json.loads(capsys.readouterr().out)
    assert high == 0 and "speed-differs" in {p["fault"] for p in doc["reading_problems"]}
    low = main(["diagnose", str(pump_outer_race), "--machine", machine, "--rpm", f"{0.95 * true_rpm:.0f}"])
    out = capsys.readouterr().out
    assert low == EXIT_WITHHELD
    assert f"The spectrum gives {true_rpm:.0f} rpm" in " ".join(out.split())
    assert "one 5 % below, which puts it 5.3 % above, is not" in " ".join(out.split())


def test_a_reading_that_states_no_speed_is_not_said_to_state_0_rpm():
    """No speed given: the machine file's speed is looked for, and the withholding sentence says so. It read
    "The reading states 0 rpm for the driving shaft" (a new user's 0.33 s excerpt of CWRU 130, no --rpm)."""
    import dataclasses

    from engine.machine import load_machine
    from engine.pipeline import diagnose
    from engine.simulation import as_reading, simulate

    from support import reasoner

    rig = load_machine(TEST_MACHINES / "mfpt-rig.yaml")
    reading = as_reading(simulate(rig, "unbalance", None, 2, 25 * 60 * 1.12, 25600.0, 4.0, 2))
    reasoning = diagnose(dataclasses.replace(reading, speed_rpm=None), rig, reasoner()).reasoning
    assert reasoning.withheld
    said = [f.because for h in reasoning.reading_problems if h.fault == "rate-contradicted" for f in h.support]
    assert said and all(b.startswith("The reading states no speed, so the shaft shaft was looked for at the "
                                     "machine file's 1500 rpm") for b in said)
    assert not any("states 0" in b for b in said)


def _withheld_for_impacts_at_a_multiple(reading, machine, rule: str = "reading.rate.impacts-at-multiple") -> str:
    """The reasons ``reading`` is withheld for, as one text; fails unless ``rule`` is among them."""
    from engine.pipeline import diagnose

    from support import reasoner

    reasoning = diagnose(reading, machine, reasoner()).reasoning
    assert reasoning.withheld, [(h.fault, h.component, h.certainty) for h in reasoning.hypotheses[:3]]
    firings = [f for h in reasoning.reading_problems if h.fault == "rate-contradicted" for f in h.support]
    assert rule in {f.rule_id for f in firings}, [f.rule_id for f in firings]
    return " ".join(f.because for f in firings if f.rule_id == rule)


@pytest.mark.parametrize("fault", ["outer-race", "inner-race"])
def test_impacts_at_twice_a_defect_rate_with_no_speed_stated_withhold(fault):
    # user trial 33, item 4 in the simulator: the CWRU rig (tests/machines/cwru-motor.yaml) with a stage-3
    # race defect on its drive-end bearing, stated at twice its sample rate and with no speed. Every frequency
    # reads twice too high, so the impacts repeat at 2 x BPFO or 2 x BPFI of the file's speed, a rate no part
    # gives; the shaft's own lines are too weak for the half/twice rules. It read as a sound machine.
    import dataclasses

    from engine.machine import load_machine
    from engine.readings.quality import check_channel
    from engine.simulation import as_reading, simulate

    rig = load_machine(TEST_MACHINES / "cwru-motor.yaml")
    reading = as_reading(simulate(rig, fault, "drive_end", 3, None, 25600.0, 4.0, 1))
    fs = 2 * reading.fs_hz
    reading = dataclasses.replace(reading, fs_hz=fs, speed_rpm=None,
                                  quality=tuple(q for ch in reading.channels for q in check_channel(ch, fs)))
    said = _withheld_for_impacts_at_a_multiple(reading, rig)
    assert "2 times" in said and ("BPFO" if fault == "outer-race" else "BPFI") in said
    assert "sample rate" in said and "tachometer" in said


SHARED = ROOT.parent / "shared" / "datasets"


@pytest.mark.slow
@pytest.mark.skipif(not (SHARED / "index.csv").exists(),
                    reason="../shared/datasets is not beside this checkout")
@pytest.mark.parametrize("record, factor, rule, said", [
    # user trial 33, item 4: CWRU 130 stated at 24 kHz with no speed; its drive-end impacts (kurtosis 7.6) were
    # read at every other one, 107.8 Hz, matched to BPFO by chance, and the report said no fault, zone A, no action
    ("12k_drive_end/130.mat", 2.0, "reading.rate.impacts-at-multiple", "2 times BPFO of drive_end"),
    # reproduction 3: CWRU 161 (48 kHz) stated at half its rate read its impacts at 53.9 Hz with the train's own
    # lines between BPFI's; it was called inner race at 67 %, then a possible looseness at 45 %
    ("48k_drive_end/161.mat", 0.5, "reading.rate.impacts-at-fraction", "impacts read"),
])
def test_a_cwru_record_stated_off_by_a_factor_with_no_speed_is_withheld(record, factor, rule, said):
    # the whole record (outer race 0.007 in on the drive end; ../shared/datasets/index.csv, CWRU Bearing Data
    # Center), its sample rate stated off by ``factor`` and no speed stated
    import dataclasses

    from bench import real_data
    from engine.machine import load_machine

    row = next(r for r in real_data.records(SHARED) if r["path"].endswith("/" + record))
    reading = real_data.injected(real_data.reading_of(SHARED / row["path"], row), "rate", factor)
    reading = dataclasses.replace(reading, speed_rpm=None)
    text = _withheld_for_impacts_at_a_multiple(reading, load_machine(TEST_MACHINES / "cwru-motor.yaml"), rule)
    assert said in text and "sample rate" in text and "tachometer" in text


@pytest.mark.slow
@pytest.mark.skipif(not (SHARED / "index.csv").exists(),
                    reason="../shared/datasets is not beside this checkout")
def test_no_real_record_stated_at_twice_its_rate_with_no_speed_gets_a_confident_wrong_call():
    # every bearing record of ../shared/datasets (labels: its index.csv; CWRU Bearing Data Center, MFPT Society,
    # HIT-SM) stated at twice its sample rate with no speed: 10 CWRU fault records were called a wrong fault at 50 %
    # or more (rolling element for inner and outer races, up to 85 %), since a 4-pole 60 Hz motor's true 1X then
    # reads at 59.9 Hz, on the line frequency no speed rule counts, and nothing near the file's 1X was asked for.
    # Known, not yet fixed: CWRU 211 (inner race) so stated shows two harmonics without a 1X that put the speed at
    # 1818 rpm, just over the 4-pole motor's 1800 and within the 5 % the drive rules allow, so the file's speed
    # counts as measured and the ball family it then shows is called at 82 %
    known = {"cwru/12k_drive_end/211.mat"}
    import dataclasses

    from bench import real_data
    from engine.machine import load_machine
    from engine.pipeline import diagnose

    from support import reasoner

    machines = {k: load_machine(p) for k, p in real_data.MACHINES.items()}
    wrong = []
    for row in real_data.records(SHARED):
        reading = real_data.injected(real_data.reading_of(SHARED / row["path"], row), "rate", 2.0)
        result = diagnose(dataclasses.replace(reading, speed_rpm=None), machines[row["dataset"]], reasoner()).reasoning
        name, certainty, right = real_data.score(result, row)
        if not result.withheld and certainty >= CONFIDENT and not right:
            wrong.append((row["path"], name, round(certainty, 2)))
    assert {path for path, _, _ in wrong} <= known, wrong


@pytest.mark.parametrize("factor", [1.12, 1.08, 0.92])
def test_a_blower_running_off_its_file_speed_with_no_speed_stated_is_withheld(factor):
    # user trial 33, item 4: BW-1 (the demo plant's 2-pole, 50 Hz blower motor, file speed 2955 rpm) with a
    # stage-2 unbalance, simulated 8-12 % off its file's speed and stating no speed. Its 1X stands 75 dB over the
    # floor with 2X and 3X; the family read 2 lines, short of the 3 the speed rules ask, and nothing was withheld
    # (1.12: no hypothesis, zone D "act now" with no reason). The speed or the sample rate must be checked first.
    import dataclasses

    from engine.machine import load_machine
    from engine.pipeline import diagnose
    from engine.simulation import as_reading, simulate

    from support import CASES, reasoner

    bw1 = load_machine(CASES / "machines/bw1-backwash-blower.yaml")
    reading = as_reading(simulate(bw1, "unbalance", None, 2, 2955 * factor, 25600.0, 4.0, 2))
    reasoning = diagnose(dataclasses.replace(reading, speed_rpm=None), bw1, reasoner()).reasoning
    assert reasoning.withheld
    said = " ".join(f.because for h in reasoning.reading_problems if h.fault == "rate-contradicted"
                    for f in h.support)
    import re

    rpm = [float(v) for v in re.findall(r"harmonics of ([0-9.]+) rpm", said)]
    # the family's speed to within half a line at its 1X (0.25 Hz lines: 0.5 % of 46-55 Hz)
    assert rpm and all(abs(v / (2955 * factor) - 1) < 0.005 for v in rpm), rpm
    assert "tachometer" in said and "sample rate" in said
