"""Command-line mistakes are named as such: an unknown option before a missing argument, a shaft the
machine lacks as a usage error (exit 2) naming the option and the known shafts, and a motor speed at
which slip cannot be computed says why its slip and pole pass lines are left out."""

from __future__ import annotations

import json

import pytest

from engine.cli import main

from support import CASES, RW2, TEST_MACHINES, one_error_line

GC1 = TEST_MACHINES / "gc1-grit-conveyor-drive.yaml"
CT1 = CASES / "machines/ct1-cooling-tower-fan.yaml"     # a 6-pole motor on 50 Hz, 985 rpm


@pytest.mark.parametrize("argv", [
    ["frequencies", "--bogus"],                      # the machine is missing too: the option is named first
    ["frequencies", GC1, "--bogus"],
    ["frequencies", GC1, "--bogus=3"],
    ["diagnose", "--bogus", "reading.npz"],
    ["plan", "--bogus"],
    ["rulebook", "check", "--bogus"],
])
def test_an_unknown_option_is_named_as_one(capsys, argv):
    err = one_error_line(capsys, 2, argv)
    assert "unknown option --bogus" in err
    assert "required" not in err and "unrecognized" not in err


def test_an_unknown_option_before_the_command_is_named_too(capsys):
    err = one_error_line(capsys, 2, ["--bogus"])
    assert "unknown option --bogus ('tellwave --help'" in err


def test_a_known_option_abbreviated_and_a_negative_value_are_not_unknown(capsys):
    # argparse takes a unique prefix of a long option; "-5" is a value (refused as a speed, not as an option)
    assert main(["frequencies", str(GC1), "--rp", "1400"]) == 0
    capsys.readouterr()
    err = one_error_line(capsys, 2, ["frequencies", GC1, "--rpm", "-5"])
    assert "argument --rpm" in err and "unknown option" not in err


def test_a_missing_argument_is_still_named_when_no_option_is_unknown(capsys):
    err = one_error_line(capsys, 2, ["frequencies"])
    assert "required: machine" in err


@pytest.mark.parametrize("extra", [["--rpm", "1400"], []])
def test_an_unknown_shaft_is_a_usage_error_naming_the_option_and_the_shafts(capsys, extra):
    err = one_error_line(capsys, 2, ["frequencies", GC1, "--shaft", "nosuch", *extra])
    assert "--shaft 'nosuch'" in err
    assert "motor, gear_input, intermediate, output" in err


def test_a_known_shaft_still_sets_the_speed(capsys):
    assert main(["frequencies", str(GC1), "--shaft", "output", "--rpm", "60", "--json"]) == 0
    speeds = json.loads(capsys.readouterr().out)["shaft_speeds_hz"]
    assert speeds["output"] == pytest.approx(1.0)
    # the second stage is 17:83 and the first 19:71 (the machine file)
    assert speeds["motor"] == pytest.approx(83 / 17 * 71 / 19)


def _notes(capsys, argv):
    assert main([str(a) for a in argv]) == 0
    out = capsys.readouterr().out
    return [line for line in out.splitlines() if line.startswith("note:")], out


def test_a_speed_above_synchronous_says_why_slip_and_pole_pass_are_left_out(capsys):
    # 6 poles on 50 Hz: synchronous speed 120 f / p = 1000 rpm (the standard relation); 1200 rpm is above it
    notes, out = _notes(capsys, ["frequencies", CT1, "--rpm", "1200"])
    assert len(notes) == 1
    assert "slip and pole pass left out" in notes[0] and "above the synchronous speed" in notes[0]
    assert "1000 rpm" in notes[0] and "6 poles on 50 Hz" in notes[0]
    assert " pole pass " not in out.split("note:")[0]


def test_a_speed_slipping_too_far_says_so(capsys):
    # 800 rpm is 20 % below 1000 rpm; a line-fed motor slips a few per cent (common practice)
    notes, _ = _notes(capsys, ["frequencies", CT1, "--rpm", "800"])
    assert len(notes) == 1 and "slips 20 % below" in notes[0]


def test_a_line_fed_speed_gives_slip_and_pole_pass_and_no_note(capsys):
    # 985 rpm: slip 15 rpm = 0.25 Hz, pole pass = p x slip = 6 x 0.25 = 1.5 Hz (the standard relation)
    notes, out = _notes(capsys, ["frequencies", CT1])
    assert notes == []
    pole_pass = [line for line in out.splitlines() if " pole pass " in line]
    assert len(pole_pass) == 1 and float(pole_pass[0].split()[0]) == pytest.approx(1.5)


def test_the_json_output_carries_the_note(capsys):
    assert main(["frequencies", str(RW2), "--rpm", "1600", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert any("slip and pole pass left out" in note for note in data["notes"])
