"""Values in a machine file: counts written as 23.0, fractional teeth, absurd multiples and speeds,
non-finite numbers; each is read as meant or refused in one line naming file, line and field.

The tests named ``test_defect_NN_*`` reproduce issue 12's defects and keep their names.
"""

from __future__ import annotations

import pytest

from engine.common.errors import MachineError
from engine.machine import load_machine
from engine.machine.kinematics import forcing_frequencies

from support import one_error_line


def test_defect_04_teeth_written_as_float(tmp_path):
    path = tmp_path / "m.yaml"
    path.write_text("machine: m\nshafts:\n  - {id: pinion, speed_hz: 30}\n  - {id: wheel, driven_through: g}\n"
                    "gears:\n  - {id: g, driving: {shaft: pinion, teeth: 23.0}, driven: {shaft: wheel, teeth: 67.0}}\n"
                    "rotors:\n  - {id: fan, shaft: wheel, type: fan, vanes: 6.0}\n")
    m = load_machine(path)
    assert m.gears[0].driving_teeth == 23 and isinstance(m.gears[0].driving_teeth, int)
    lines = {f.name: f.frequency_hz for f in forcing_frequencies(m)}
    # check-values.md [derived]: 23 and 67 teeth, pinion at 30 Hz: GMF 690 Hz, hunting tooth 0.4478 Hz
    assert lines["GMF"] == pytest.approx(690.0)
    assert lines["HTF"] == pytest.approx(0.4478, abs=1e-4)


def test_defect_04_fractional_teeth_are_refused(tmp_path):
    path = tmp_path / "m.yaml"
    path.write_text("machine: m\nshafts:\n  - {id: a, speed_hz: 30}\n  - {id: b, driven_through: g}\n"
                    "gears:\n  - {id: g, driving: {shaft: a, teeth: 23.5}, driven: {shaft: b, teeth: 67}}\n")
    with pytest.raises(MachineError, match=r"m.yaml:6: gears.0.driving.teeth: expected integer, got 23.5"):
        load_machine(path)


def test_defect_07_absurd_bearing_multiple(tmp_path, capsys):
    path = tmp_path / "m.yaml"
    path.write_text("machine: m\nshafts:\n  - {id: s, speed_rpm: 1500}\nbearings:\n"
                    "  - {id: b, shaft: s, multiples: {bpfo: 1.0e300, bpfi: 5.4, bsf: 2.3, ftf: 0.4}}\n")
    err = one_error_line(capsys, MachineError.exit_code, ["frequencies", path])
    assert "m.yaml:5: bearings.0.multiples.bpfo: must be at most 200, got 1e+300" in err


def test_defect_07_absurd_derived_speed(tmp_path, capsys):
    path = tmp_path / "m.yaml"
    path.write_text("machine: m\nshafts:\n  - {id: a, speed_rpm: 1500}\n  - {id: b, ratio_to: {shaft: a, ratio: 300}}\n"
                    "  - {id: c, ratio_to: {shaft: b, ratio: 300}}\n")
    err = one_error_line(capsys, MachineError.exit_code, ["frequencies", path])
    assert "m.yaml:5: shafts.2: shaft 'c' comes out at 1.35e+08 rpm, outside 0.1 to 600000 rpm" in err


@pytest.mark.parametrize("value", [".nan", ".inf", "-.inf", "1e400"])
def test_defect_08_machine_file_with_non_finite_number(tmp_path, value):
    path = tmp_path / "m.yaml"
    path.write_text(f"machine: m\nshafts:\n  - id: s\n    speed_rpm: {value}\n")
    with pytest.raises(MachineError, match=r"m.yaml:4: shafts.0.speed_rpm: expected a finite number"):
        load_machine(path)


NUMBERED = """machine: 4012
plant: Tallow Ridge Water Works
description: 17
shafts:
  - {id: fan, speed_rpm: 1480, description: 2}
bearings:
  - {id: fan_de, shaft: fan, model: 6309, rolling_elements: 8, element_diameter: 17.46, pitch_diameter: 72.5}
  - {id: fan_nde, shaft: fan, model: 0022212, multiples: {bpfo: 7.1, bpfi: 9.9, bsf: 3.0, ftf: 0.44}}
  - {id: spare, shaft: fan, model: 6310.10, rolling_elements: 8, element_diameter: 17.46, pitch_diameter: 72.5}
points:
  - {id: FDEH, at: fan_de, direction: horizontal}
"""


def test_a_number_where_a_name_is_expected_is_read_as_the_name_written(tmp_path):
    # issue 24: an unquoted bearing model (6309) is a name; YAML reads it as a number
    path = tmp_path / "m.yaml"
    path.write_text(NUMBERED)
    m = load_machine(path)
    assert m.name == "4012"
    assert [b.model for b in m.bearings] == ["6309", "0022212", "6310.10"]    # as written, zeros kept
    assert m.descriptions["fan"] == "2"
    # a number where a number is expected stays one
    assert m.shaft_speeds_hz["fan"] == pytest.approx(1480 / 60)
    assert m.bearings[0].rolling_elements == 8


def test_a_number_where_a_name_must_start_with_a_letter_is_still_refused(tmp_path, capsys):
    path = tmp_path / "m.yaml"
    path.write_text(NUMBERED.replace("at: fan_de", "at: 6309"))
    err = one_error_line(capsys, 3, ["frequencies", path])
    assert "points.0.at" in err and "'6309'" in err
