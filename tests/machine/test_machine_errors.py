"""Bad machine files: one clear error naming file, line and field; no traceback."""

import textwrap

import pytest

from engine.cli import main
from engine.common.errors import MachineError
from engine.machine import load_machine

GOOD_HEAD = "machine: m\nshafts:\n  - id: motor\n    speed_rpm: 1480\n"

BAD_FILES = [
    pytest.param("machine: m\nshafts: [\n", 3, "not valid YAML", id="yaml-syntax"),
    pytest.param("- just\n- a list\n", 1, "expected a mapping", id="not-a-mapping"),
    pytest.param("shafts:\n  - {id: a, speed_rpm: 10}\n", 1, "'machine' is required", id="missing-name"),
    pytest.param(GOOD_HEAD + "    speed_rmp: 3\n", 5, "speed_rmp: unknown field; did you mean 'speed_rpm'",
                 id="unknown-field"),
    pytest.param("machine: m\nshafts:\n  - id: motor\n    speed_rpm: fast\n", 4,
                 "shafts.0.speed_rpm: expected number", id="wrong-type"),
    pytest.param(GOOD_HEAD + "bearings:\n  - id: b1\n    shaft: pump\n    rolling_elements: 8\n"
                 "    element_diameter: 10\n    pitch_diameter: 50\n", 7,
                 "bearings.0.shaft: unknown shaft 'pump'", id="unknown-shaft"),
    pytest.param(GOOD_HEAD + "bearings:\n  - id: b1\n    shaft: motor\n    rolling_elements: 8\n"
                 "    element_diameter: 60\n    pitch_diameter: 50\n", 9,
                 "smaller than the pitch diameter", id="impossible-geometry"),
    pytest.param(GOOD_HEAD + "points:\n  - {id: P1, at: nowhere, direction: horizontal}\n", 6,
                 "neither a bearing nor a shaft", id="point-nowhere"),
    pytest.param(GOOD_HEAD + "points:\n  - {id: P1, at: motor, direction: sideways}\n", 6,
                 "expected one of horizontal, vertical, axial", id="bad-direction"),
    pytest.param("machine: m\nshafts:\n  - {id: a, same_as: b}\n  - {id: b, same_as: a}\n", 3,
                 "loop", id="speed-loop"),
    pytest.param(GOOD_HEAD + "  - {id: motor, speed_rpm: 100}\n", 5, "already used", id="duplicate-id"),
    pytest.param("machine: m\nshafts:\n  - {id: a, speed_hz: 10}\n  - {id: b, speed_hz: 10}\n"
                 "gears:\n  - {id: g, driving: {shaft: a, teeth: 20}, driven: {shaft: b, teeth: 40}}\n",
                 6, "gives 300.0 rpm", id="ratio-disagrees"),
]


@pytest.mark.parametrize("text, line, words", BAD_FILES)
def test_bad_machine_file_names_file_line_and_problem(tmp_path, text, line, words):
    path = tmp_path / "machine.yaml"
    path.write_text(textwrap.dedent(text))
    with pytest.raises(MachineError) as info:
        load_machine(path)
    message = str(info.value)
    assert message.startswith(f"{path}:{line}: "), message
    assert words in message
    assert "\n" not in message


def test_cli_prints_one_line_and_exits_with_machine_code(tmp_path, capsys):
    path = tmp_path / "machine.yaml"
    path.write_text(GOOD_HEAD + "    speed_rmp: 3\n")
    assert main(["frequencies", str(path)]) == MachineError.exit_code
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and err.startswith("tellwave: error: ")
    assert "Traceback" not in err


def test_missing_file(tmp_path, capsys):
    assert main(["frequencies", str(tmp_path / "nope.yaml")]) == MachineError.exit_code
    assert "no such file" in capsys.readouterr().err


def test_usage_error_exit_code(capsys):
    assert main(["frequencies"]) == 2
    assert capsys.readouterr().err.startswith("tellwave: error: ")


def test_shaft_without_speed_lists_the_alternatives(tmp_path):
    path = tmp_path / "m.yaml"
    path.write_text("machine: m\nshafts:\n  - id: motor\n")
    with pytest.raises(MachineError, match=r":3: shafts.0: needs speed_rpm or speed_hz or same_as"):
        load_machine(path)


def test_shaft_with_two_speeds(tmp_path):
    path = tmp_path / "m.yaml"
    path.write_text("machine: m\nshafts:\n  - {id: motor, speed_rpm: 10, speed_hz: 3}\n")
    with pytest.raises(MachineError,
                       match="give only one of speed_rpm or speed_hz|give only one of speed_rpm, speed_hz"):
        load_machine(path)
