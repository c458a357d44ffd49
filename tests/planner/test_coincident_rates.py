"""Rates that coincide exactly: twice line frequency on a 1X harmonic is a limit the plan reports, not a crash.

At 1500 rpm a 4-pole 50 Hz motor turns at 25 Hz and 2 x 50 Hz = 100 Hz is its 4X (2xLF = 2 x line
frequency, 1X = rpm / 60: textbook kinematics); the pole pass frequency is zero (no slip), so the
electrical purpose has no spacing to split at all. Before, `plan` ended in "min() arg is an empty sequence".
"""

from __future__ import annotations

import json

import pytest

from engine.cli import main
from engine.common.errors import TellwaveError
from engine.machine import load_machine
from engine.planner import load_policy
from engine.planner.needs import requirements
from engine.planner.propose import propose
from engine.simulation import simulate, write_simulation

from support import CASES

MACHINES = sorted((CASES / "machines").glob("*.yaml"))
RW2 = CASES / "machines" / "rw2-raw-water-pump.yaml"
SPEEDS = range(100, 3601, 100)


@pytest.mark.parametrize("path", MACHINES, ids=[p.stem for p in MACHINES])
def test_every_speed_from_100_to_3600_rpm_plans_or_says_why_not(path, capsys):
    for rpm in SPEEDS:
        try:
            code = main(["plan", str(path), "--rpm", str(rpm), "--no-proof", "--format", "json"])
        except TellwaveError:          # main turns these into one line; a direct call may still raise one
            code = 2
        out, err = capsys.readouterr()
        assert "Traceback" not in err and "Error:" not in err, (rpm, err)
        if code == 0:
            assert json.loads(out)["proposals"], rpm
        else:
            assert code in (2, 3, 4) and err.strip().startswith("tellwave:") and len(err.strip().splitlines()) == 1, \
                (rpm, code, err)


def test_twice_line_frequency_on_a_shaft_harmonic_is_reported_as_inseparable():
    machine = load_machine(RW2)
    policy = load_policy()
    point = next(p for p in machine.points if p.shaft == "motor")
    req = requirements(machine, point, "electrical", policy, 1500.0)
    twins = [n for n in req.needs if n.setting == "twin"]
    assert len(twins) == 1 and "2xLF of M-RW2 (100 Hz) falls on 4X of motor" in twins[0].what
    assert not [n for n in req.needs if n.setting == "resolution"]
    proposal = propose(machine, point, "electrical", policy, 1500.0)
    # no spacing to split: the fewest standard lines whose record holds 10 turns of the motor (policy
    # min_revolutions) at 1500 rpm, 0.4 s: 800 lines at Fmax 2000 Hz
    assert proposal.lines == min(n for n in policy.standard_lines if n / proposal.fmax_hz >= 10 / 25 * (1 - 1e-9))
    assert proposal.fmax_hz == 2000 and proposal.lines == 800
    assert any("no setting separates them: 2xLF" in n for n in proposal.notes)
    assert twins[0] in proposal.unmet
    # one rpm away the two lines are 4/60 Hz apart: a spacing to split again, no twin
    req = requirements(machine, point, "electrical", policy, 1499.0)
    assert not [n for n in req.needs if n.setting == "twin"]
    assert [n for n in req.needs if n.setting == "resolution" and "2xLF" in n.what]


def test_a_reading_at_1500_rpm_is_checked_and_the_coincidence_named(tmp_path, capsys):
    machine = load_machine(RW2)
    sim = simulate(machine, speed_rpm=1500.0, duration_s=1.0, seed=3)
    path = write_simulation(sim, tmp_path / "r1500.npz")[0]
    assert main(["plan", str(RW2), "--reading", str(path), "--no-proof", "--format", "json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    limits = [lim for lim in doc["check"]["limitations"] if lim["setting"] == "twin" and "2xLF" in lim["what"]]
    assert limits and limits[0]["why"] == "the two rates coincide exactly"
