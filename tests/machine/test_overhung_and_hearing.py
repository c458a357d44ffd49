"""An overhung rotor in the machine file, and which shafts' bearings a point can hear.

`overhung: true` on a rotor is checked by the schema (a boolean; a one-line error naming the file
otherwise) and reaches the rules as an `overhung_rotor` fact. A bearing's impacts reach a sensor
through housings, casing and frame, not across a belt drive (common practice: a bearing's
high-frequency signal is read at its own housing), so a point on a belt fan does not weigh its
motor's bearings, while a gear mesh's two shafts share a casing and a coupled shaft stands next door.
"""

from __future__ import annotations

import textwrap

import pytest

from engine.common.errors import MachineError
from engine.evidence import acquisition
from engine.machine import load_machine

from support import TEST_MACHINES

FAN = textwrap.dedent("""\
    machine: m
    shafts:
      - {{id: motor, speed_rpm: 1475}}
      - {{id: fan, driven_through: vbelt}}
    belts:
      - id: vbelt
        driving: {{shaft: motor, sheave_diameter_mm: 200}}
        driven: {{shaft: fan, sheave_diameter_mm: 315}}
        belt_length_mm: 2240
    rotors:
      - {{id: wheel, shaft: fan, type: fan, vanes: 10{extra}}}
    points:
      - {{id: MH, at: motor, direction: horizontal}}
    """)


def machine_of(tmp_path, extra: str):
    path = tmp_path / "m.yaml"
    path.write_text(FAN.format(extra=extra))
    return load_machine(path)


def test_overhung_is_read_from_the_rotor_and_defaults_to_between_the_bearings(tmp_path):
    assert machine_of(tmp_path, ", overhung: true").rotors[0].overhung is True
    assert machine_of(tmp_path, ", overhung: false").rotors[0].overhung is False
    assert machine_of(tmp_path, "").rotors[0].overhung is False


def test_an_overhung_that_is_not_true_or_false_is_one_error_naming_the_file(tmp_path):
    with pytest.raises(MachineError) as err:
        machine_of(tmp_path, ", overhung: maybe")
    message = str(err.value)
    assert "m.yaml" in message and "overhung" in message and "\n" not in message


def test_the_rules_get_one_fact_per_overhung_rotor(tmp_path):
    class Analysed:          # overhung_rotors reads only the analysis's machine
        machine = machine_of(tmp_path, ", overhung: true")
    assert acquisition.overhung_rotors(Analysed()) == [   # type: ignore[arg-type]
        {"kind": "overhung_rotor", "component": "wheel", "shaft": "fan", "type": "fan"}]
    Analysed.machine = machine_of(tmp_path, "")
    assert acquisition.overhung_rotors(Analysed()) == []   # type: ignore[arg-type]


def test_a_point_hears_the_bearings_of_its_own_shaft_not_across_a_belt(tmp_path):
    m = machine_of(tmp_path, "")
    assert m.shafts_seen_from("fan") == {"fan", "motor"}      # the motor's 1X reaches the fan as belt modulation
    assert m.shafts_heard_from("fan") == {"fan"}              # its bearings' ringing does not
    assert m.shafts_heard_from("motor") == {"motor"}


def test_a_gear_mesh_and_a_coupling_still_carry_a_bearing_s_impacts():
    gc1 = load_machine(TEST_MACHINES / "gc1-grit-conveyor-drive.yaml")
    for shaft in gc1.shaft_speeds_hz:
        assert gc1.shafts_heard_from(shaft) == gc1.shafts_seen_from(shaft)     # no belt: nothing changes
