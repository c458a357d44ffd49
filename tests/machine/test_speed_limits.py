"""What a machine's drive lets it run at: a stated speed range, or its line-fed induction motors."""

from __future__ import annotations

import textwrap

import pytest

from engine.common.errors import MachineError
from engine.machine import load_machine
from engine.machine.kinematics import MAX_LINE_FED_SLIP, speed_limits, synchronous_hz

from support import CASES, TEST_MACHINES

BELTED = """\
    machine: m
    shafts:
      - {{id: motor, speed_rpm: 2955{range}}}
      - {{id: fan, driven_through: vbelt}}
    belts:
      - {{id: vbelt, driving: {{shaft: motor, sheave_diameter_mm: 160}},
         driven: {{shaft: fan, sheave_diameter_mm: 250}}, belt_length_mm: 1800}}
    motors:
      - {{id: M1, shaft: motor, line_frequency_hz: 50, poles: 2}}
"""


def _machine(tmp_path, text):
    path = tmp_path / "m.yaml"
    path.write_text(textwrap.dedent(text))
    return load_machine(path)


@pytest.mark.parametrize("line_hz, poles, rpm", [(50, 2, 3000), (50, 4, 1500), (60, 4, 1800), (50, 6, 1000)])
def test_synchronous_speed_is_120_f_over_p(line_hz, poles, rpm):
    # standard induction-motor relation: synchronous speed = 120 f / p r/min
    assert synchronous_hz(line_hz, poles) * 60 == pytest.approx(rpm)


def test_a_line_fed_motor_holds_its_shaft_between_synchronous_less_its_largest_slip_and_synchronous():
    # RW-2: 4 poles at 50 Hz, synchronous 120 x 50 / 4 = 1500 rpm (standard relation); a line-fed
    # motor slips at most MAX_LINE_FED_SLIP (10 %, common practice: rated slip is 1-5 %)
    limits = speed_limits(load_machine(CASES / "machines/rw2-raw-water-pump.yaml"), "pump")
    assert (limits.low_rpm, limits.high_rpm) == pytest.approx((1500 * (1 - MAX_LINE_FED_SLIP), 1500))
    assert "M-RW2" in limits.set_by and "synchronous 1500 rpm" in limits.set_by


def test_limits_follow_a_belt_ratio_to_the_driven_shaft(tmp_path):
    m = _machine(tmp_path, BELTED.format(range=""))
    fan = speed_limits(m, "fan")
    # 160/250 sheaves: the fan turns at 0.64 of the motor (belt ratio = driving / driven diameter)
    assert (fan.low_rpm, fan.high_rpm) == pytest.approx((0.64 * 2700, 0.64 * 3000))


def test_a_stated_range_wins_over_the_motor_and_scales_to_every_shaft(tmp_path):
    m = _machine(tmp_path, BELTED.format(range=", speed_range_rpm: [600, 3000]"))
    assert m.speed_range.shaft == "motor"
    motor, fan = speed_limits(m, "motor"), speed_limits(m, "fan")
    assert (motor.low_rpm, motor.high_rpm) == (600, 3000)
    assert (fan.low_rpm, fan.high_rpm) == pytest.approx((0.64 * 600, 0.64 * 3000))
    assert "speed range" in motor.set_by


def test_a_motor_off_its_line_fed_band_is_on_a_drive_of_unknown_range(tmp_path):
    # 2000 rpm on a 2-pole 50 Hz motor is 33 % slip: not line-fed, and the file gives no range
    m = _machine(tmp_path, BELTED.format(range="").replace("2955", "2000"))
    assert speed_limits(m, "motor") is None


def test_a_machine_without_motors_or_range_has_no_limits():
    assert speed_limits(load_machine(TEST_MACHINES / "mfpt-rig.yaml"), "shaft") is None


BAD_RANGES = [
    pytest.param(", speed_range_rpm: [3000, 600]", "must be below the highest", id="reversed"),
    pytest.param(", speed_range_rpm: [600, 2000]", "outside its speed range of 600 to 2000 rpm", id="nominal-outside"),
    pytest.param(", speed_range_rpm: [600]", "speed_range_rpm", id="one-number"),
    pytest.param(", speed_range_rpm: [0, 3000]", "speed_range_rpm", id="zero"),
]


@pytest.mark.parametrize("text, words", BAD_RANGES)
def test_a_bad_speed_range_is_a_one_line_machine_error_at_its_line(tmp_path, text, words):
    with pytest.raises(MachineError) as err:
        _machine(tmp_path, BELTED.format(range=text))
    assert "m.yaml:3: " in str(err.value) and words in str(err.value) and "\n" not in str(err.value)


def test_only_one_shaft_may_state_a_range(tmp_path):
    text = BELTED.format(range=", speed_range_rpm: [600, 3000]").replace(
        "driven_through: vbelt}", "driven_through: vbelt, speed_range_rpm: [300, 1900]}")
    with pytest.raises(MachineError, match=r"m\.yaml:4: shafts\.1\.speed_range_rpm: only one shaft"):
        _machine(tmp_path, text)
