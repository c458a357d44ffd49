"""`tellwave diagnose` of a reading that does not fit its machine file: a point the machine lacks, a speed
its drive cannot give, a speed stated at twice or half the true one. Each user case of issue 19 is here."""

from __future__ import annotations

import json

import pytest
import yaml

from engine.cli import main
from engine.machine import load_machine
from engine.simulation import as_reading, simulate, write_simulation

from support import ROOT

RW2 = ROOT / "cases/machines/rw2-raw-water-pump.yaml"
BW1 = ROOT / "cases/machines/bw1-backwash-blower.yaml"
RW2_RPM = 1486.0          # the machine file's speed, and the speed every reading here is simulated at


def _wav(tmp_path, fault="unbalance", component="pump", seed=7, points=None):
    sim = simulate(load_machine(RW2), fault, component, 2, None, 12800.0, 4.0, seed, points=points)
    return write_simulation(sim, tmp_path / f"{fault}.wav")[0]


def _diagnose_json(capsys, *argv):
    code = main(["diagnose", *map(str, argv), "--format", "json"])
    out = capsys.readouterr()
    return code, (json.loads(out.out) if out.out else None), out.err


def _problems(doc):
    return {p["fault"]: p for p in doc["reading_problems"] if p["certainty"] >= 0.5}


# ---------------------------------------------------------------- part 1: points the machine lacks


def test_a_reading_of_another_machine_is_refused_naming_channels_points_and_the_machine_s_points(tmp_path, capsys):
    # user case: a reading of RW-2 (points M1H ... P2H) diagnosed with BW-1's machine file
    wav = _wav(tmp_path)
    assert main(["diagnose", str(wav), "--machine", str(BW1)]) == 4          # a reading error (README, exit codes)
    err = capsys.readouterr().err
    assert err.startswith(f"tellwave: error: {wav}: channels 'M1H' at point 'M1H'") and err.count("\n") == 1
    assert "BW-1 backwash blower" in err and "its points are MDEH, BDEH, BDEV" in err and "and 3 more" in err


def test_channels_names_the_stray_it_keeps_and_passes_when_it_leaves_them_out(tmp_path, capsys):
    wav = _wav(tmp_path)
    assert main(["diagnose", str(wav), "--machine", str(BW1), "--channels", "P1H"]) == 4
    err = capsys.readouterr().err
    assert "channel 'P1H' at point 'P1H'" in err and "M1H" not in err
    # a reading of BW-1 whose file also holds a channel at a point of another machine
    side = wav.with_name(wav.name + ".yaml")
    data = yaml.safe_load(side.read_text())
    data["channels"][0]["point"] = "BDEH"
    side.write_text(yaml.safe_dump(data))
    code, doc, _ = _diagnose_json(capsys, wav, "--machine", BW1, "--channels", "BDEH")
    assert doc is not None and [c["name"] for c in doc["reading"]["channels"]] == ["M1H"]


# ---------------------------------------------------------------- part 2: a speed the drive cannot give


def test_a_reading_without_points_at_half_the_machine_s_speed_is_withheld_with_both_numbers(tmp_path, capsys):
    # the same RW-2 reading with no points in its sidecar: nothing places it, but it runs at 1486 rpm and BW-1's
    # 2-pole motor on 50 Hz turns between 3000 rpm (120 f / p, standard relation) and 10 % less (common practice)
    wav = _wav(tmp_path)
    side = wav.with_name(wav.name + ".yaml")
    data = yaml.safe_load(side.read_text())
    data["channels"] = [{"name": c["name"]} for c in data["channels"]]
    side.write_text(yaml.safe_dump(data))
    code, doc, _ = _diagnose_json(capsys, wav, "--machine", BW1)
    assert code == 7 and doc["verdict"]["withheld"]
    because = " ".join(f["because"] for f in _problems(doc)["speed-outside-drive"]["support"])
    assert "1486 rpm" in because and "2700 rpm to 3000 rpm" in because and "nominal 2955 rpm" in because


@pytest.mark.parametrize("fault, component", [("healthy", None), ("unbalance", "pump"),
                                              ("looseness-structural", "motor_de"), ("outer-race", "pump_nde")])
@pytest.mark.parametrize("factor", [2.0, 0.5])
def test_a_speed_stated_at_twice_or_half_is_withheld_on_a_line_fed_machine(tmp_path, capsys, fault, component,
                                                                            factor):
    # user case: RW-2 stated at 2 x (and 0.5 x) its true speed; its 4-pole motor on 50 Hz turns at 1350 to
    # 1500 rpm (120 f / p less 10 % slip: standard relation, common practice for the slip)
    wav = _wav(tmp_path, fault, component)
    code, doc, _ = _diagnose_json(capsys, wav, "--machine", RW2, "--rpm", factor * RW2_RPM)
    assert code == 7
    found = _problems(doc)
    because = " ".join(f["because"] for f in found["speed-outside-drive"]["support"])
    used = doc["speed"]["measured_rpm"]       # the stated speed, or a speed measured within 5 % of it
    assert used == pytest.approx(factor * RW2_RPM, rel=0.05)
    assert f"{used:.0f} rpm" in because and "1350 rpm to 1500 rpm" in because


# ---------------------------------------------------------------- part 3: variable speed, stated within range


@pytest.fixture
def variable_speed_rw2(tmp_path):
    """RW-2 on a variable-speed drive from 600 to 3000 rpm: twice and half its speed are both in range."""
    path = tmp_path / "rw2-vsd.yaml"
    path.write_text(RW2.read_text().replace("speed_rpm: 1486\n", "speed_rpm: 1486\n    speed_range_rpm: [600, 3000]\n"))
    assert load_machine(path).speed_range is not None
    return path


@pytest.mark.parametrize("fault, component", [("healthy", None), ("unbalance", "pump"),
                                              ("looseness-structural", "motor_de")])
@pytest.mark.parametrize("factor, words", [(2.0, "stated at twice the true speed"),
                                           (0.5, "stated at half the true speed")])
def test_a_speed_stated_at_twice_or_half_within_the_drive_s_range_is_caught_from_the_lines(
        tmp_path, capsys, variable_speed_rw2, fault, component, factor, words):
    # the user case's reading holds a 1X and weak 2X and 3X only: one line at 0.5X, or one at 2X, must do
    wav = _wav(tmp_path, fault, component)
    code, doc, _ = _diagnose_json(capsys, wav, "--machine", variable_speed_rw2, "--rpm", factor * RW2_RPM)
    found = _problems(doc)
    assert code == 7 and "speed-outside-drive" not in found
    assert any(words in f["because"] for f in found["rate-contradicted"]["support"])


@pytest.mark.parametrize("fault, component", [("healthy", None), ("looseness-rotating", "pump")])
def test_at_its_true_speed_a_variable_speed_reading_raises_no_speed_problem(tmp_path, capsys, variable_speed_rw2,
                                                                            fault, component):
    # rotating looseness puts real half orders in the spectrum, weaker than 1X (common practice)
    wav = _wav(tmp_path, fault, component)
    code, doc, _ = _diagnose_json(capsys, wav, "--machine", variable_speed_rw2)
    assert code == 0 and not {"rate-contradicted", "speed-outside-drive"} & set(_problems(doc))


def test_a_slow_shaft_s_sensor_hiding_the_motor_s_1x_raises_no_speed_problem():
    # CT-1's gearbox output sensor is the loudest: the fan's 3X sits 3 % from the motor's 1X and hides it while
    # the motor's 2X stands clear. The motor's own sensors show its 1X, and they are the ones the check reads.
    from engine.evidence import extract_evidence
    from engine.reasoning import Reasoner, load_rulebook

    ct1 = load_machine(ROOT / "cases/machines/ct1-cooling-tower-fan.yaml")
    sim = simulate(ct1, "gear-wear", "bevel_stage", 2, None, 25600.0, 4.0, 1)
    facts = extract_evidence(as_reading(sim), ct1)
    (check,) = [f for f in facts if f["kind"] == "speed_check"]
    assert check["one_x_found"] and check["odd_to_two_x"] > 1
    result = Reasoner(load_rulebook()).reason(facts)
    assert not result.withheld and result.top.fault == "gear-wear"
