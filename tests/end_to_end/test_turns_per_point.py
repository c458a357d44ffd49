"""Turns per point (issue 24, item 1): a record needs the turns of the shafts its points see, and a
fault the turns of its own shaft, not those of the machine's slowest shaft.

The train is tests/machines/conveyor-55rpm-drive.yaml (invented): a 4-pole motor at 1475 rpm, a
flexible coupling, a two-stage gearbox 17:89 and 16:82 and a head pulley coupled to the output at
1475 x 17/89 x 16/82 = 54.97 rpm (gear ratios, derived). Readings are simulated (engine.simulation,
seeded).
"""

from __future__ import annotations

import pytest

from engine.common.errors import ReadingError
from engine.machine import load_machine
from engine.pipeline import diagnose
from engine.reasoning import Reasoner, load_rulebook
from engine.simulation import as_reading, simulate

from support import TEST_MACHINES

CONVEYOR = TEST_MACHINES / "conveyor-55rpm-drive.yaml"
FS = 25600.0


@pytest.fixture(scope="module")
def machine():
    return load_machine(CONVEYOR)


@pytest.fixture(scope="module")
def reasoner():
    return Reasoner(load_rulebook())


def _diagnose(machine, reasoner, fault, component, point, duration_s, seed=1):
    sim = simulate(machine, fault, component, 3, None, FS, duration_s, seed, points=[point])
    return diagnose(as_reading(sim), machine, reasoner)


def _acquisition(d):
    return next(f for f in d.evidence.facts if f["kind"] == "acquisition")


def _turn_reasons(d, component=None):
    """The reach's reasons that ask for turns, of every fault or of the faults on ``component``."""
    return [reason for v in d.reach if component is None or v["component"] == component
            for reason in v["reasons"] if "turns of" in reason]


def test_the_train_turns_as_its_gears_say(machine):
    speeds = machine.shaft_speeds_hz
    # 1475 rpm x 17/89 x 16/82 (gear ratios, derived)
    assert speeds["lss"] * 60 == pytest.approx(1475 * 17 / 89 * 16 / 82)
    assert speeds["pulley"] == speeds["lss"]
    assert 54.5 < speeds["lss"] * 60 < 55.5     # "about 55 rpm", as the machine file says


def test_each_point_sees_its_shaft_the_coupled_one_and_across_the_meshes_on_it(machine):
    by_point = {p.id: machine.shafts_seen_from(p.shaft) for p in machine.points}
    assert by_point["MDEH"] == {"motor", "hss"}                  # the coupling; no mesh on the motor shaft
    assert by_point["GINH"] == {"hss", "motor", "ims"}           # the coupling and the first mesh
    assert by_point["GIMH"] == {"ims", "hss", "lss"}             # both meshes
    assert by_point["GOUTH"] == {"lss", "ims", "pulley"}         # the second mesh and the pulley's coupling
    assert by_point["PDEH"] == {"pulley", "lss"}                 # only the low-speed shafts
    assert machine.shafts_seen_at([]) == set(machine.shaft_speeds_hz)
    assert machine.shafts_seen_at(["MDEH", "PDEH"]) == {"motor", "hss", "pulley", "lss"}


def test_a_one_second_motor_point_reading_is_diagnosed(machine, reasoner):
    # 1 s holds 24.6 motor turns and 0.92 turns of the 55 rpm shafts the motor point cannot see
    d = _diagnose(machine, reasoner, "outer-race", "motor_de", "MDEH", 1.0)
    a = _acquisition(d)
    assert a["slowest_shaft"] in ("motor", "hss")
    assert a["revolutions"] == pytest.approx(1475 / 60, rel=0.02)
    assert not d.reasoning.withheld
    assert d.reasoning.top is not None and (d.reasoning.top.fault, d.reasoning.top.component) == \
        ("outer-race", "motor_de")
    assert _turn_reasons(d) == []
    # the sidebands the resolution must split are those the motor point sees (its motor's pole pass,
    # the first stage's), not the output stage's 55 rpm ones
    assert a["sideband_for"] == "pole pass sidebands of M-SC2"
    assert "second_stage" not in a["sideband_for"]


def test_a_one_second_pulley_point_reading_is_still_refused(machine, reasoner):
    with pytest.raises(ReadingError, match=r"revolutions of shaft '(pulley|lss)' .*the slowest its points see"):
        _diagnose(machine, reasoner, "outer-race", "pulley_drive_end", "PDEH", 1.0)


@pytest.mark.parametrize("fault, component", [("stator", "M-SC2"), ("outer-race", "motor_de")])
def test_six_seconds_at_the_motor_say_no_may_miss_for_turns(machine, reasoner, fault, component):
    d = _diagnose(machine, reasoner, fault, component, "MDEH", 6.0)
    assert _turn_reasons(d) == []
    assert not any("lss" in reason or "pulley" in reason for v in d.reach for reason in v["reasons"]
                   if "turns" in reason)
    assert "reading.settings.revolutions" not in _fired(d)


def _fired(d):
    return {f.rule_id for h in (*d.reasoning.reading_problems, *d.reasoning.hypotheses) for f in h.support}


def test_a_low_speed_fault_at_a_point_that_sees_only_the_low_speed_shafts_still_needs_turns(machine, reasoner):
    # 6 s at 54.97 rpm hold 5.5 turns of the pulley: fewer than the 10 the reading rules ask (common practice)
    d = _diagnose(machine, reasoner, "outer-race", "pulley_drive_end", "PDEH", 6.0)
    a = _acquisition(d)
    assert a["slowest_shaft"] in ("pulley", "lss")
    assert a["revolutions"] == pytest.approx(6 * 1475 * 17 / 89 * 16 / 82 / 60, rel=0.02)
    reasons = _turn_reasons(d, "pulley_drive_end")
    assert reasons and all("turns of pulley, the shaft of the fault" in r for r in reasons)
    assert "reading.settings.revolutions" in _fired(d)
