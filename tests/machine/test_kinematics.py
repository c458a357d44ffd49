"""Forcing frequencies against published worked examples and exact identities."""

import math

import pytest
from hypothesis import given
from hypothesis import strategies as st

from engine.machine import Bearing, load_machine
from engine.machine.kinematics import bearing_multiples, forcing_frequencies

from support import CASES, TEST_MACHINES


def _by_name(table, name, component):
    hits = [f for f in table if f.name == name and f.component == component]
    assert len(hits) == 1, (name, component, hits)
    return hits[0]


def test_cwru_drive_end_6205_multiples():
    # Source: CWRU Bearing Data Center documentation, 6205-2RS drive-end bearing:
    # BPFI 5.4152, BPFO 3.5848, FTF 0.39828, BSF 2.3567 x shaft speed
    # (../shared/notes/check-values.md, [published]; "rolling element 4.7135" is 2 x BSF).
    m = load_machine(TEST_MACHINES / "cwru-motor.yaml")
    de = bearing_multiples(m.bearings[0])
    assert de["bpfi"] == pytest.approx(5.4152, abs=5e-4)
    assert de["bpfo"] == pytest.approx(3.5848, abs=5e-4)
    assert de["ftf"] == pytest.approx(0.39828, abs=5e-4)
    assert de["bsf"] == pytest.approx(2.3567, abs=5e-4)
    assert 2 * de["bsf"] == pytest.approx(4.7135, abs=1e-3)


def test_cwru_fan_end_6203_multiples():
    # Source: CWRU Bearing Data Center documentation, 6203-2RS fan-end bearing:
    # BPFI 4.9469, BPFO 3.0530, FTF 0.3817, 2 x BSF 3.9874 (check-values.md, [published]).
    fe = bearing_multiples(load_machine(TEST_MACHINES / "cwru-motor.yaml").bearings[1])
    assert fe["bpfi"] == pytest.approx(4.9469, abs=5e-4)
    assert fe["bpfo"] == pytest.approx(3.0530, abs=5e-4)
    assert fe["ftf"] == pytest.approx(0.3817, abs=5e-4)
    assert 2 * fe["bsf"] == pytest.approx(3.9874, abs=1e-3)


def test_cwru_frequencies_at_1797_rpm_in_hz():
    # Source: check-values.md [published; derived] - at 1797 r/min: BPFI 162.19 Hz,
    # BPFO 107.36 Hz, FTF 11.93 Hz, BSF 70.58 Hz.
    table = forcing_frequencies(load_machine(TEST_MACHINES / "cwru-motor.yaml"), speed_rpm=1797)
    assert _by_name(table, "BPFI", "drive_end").frequency_hz == pytest.approx(162.19, abs=0.02)
    assert _by_name(table, "BPFO", "drive_end").frequency_hz == pytest.approx(107.36, abs=0.02)
    assert _by_name(table, "FTF", "drive_end").frequency_hz == pytest.approx(11.93, abs=0.01)
    assert _by_name(table, "BSF", "drive_end").frequency_hz == pytest.approx(70.58, abs=0.02)


def test_mfpt_test_bearing():
    # Source: MFPT Society bearing data set documentation: BPFO 3.245, BPFI 4.755,
    # FTF 0.406, BSF 2.555 x fr; at 25 Hz BPFO 81.1 Hz, BPFI 118.9 Hz (check-values.md).
    table = forcing_frequencies(load_machine(TEST_MACHINES / "mfpt-rig.yaml"))
    assert _by_name(table, "BPFO", "test_bearing").frequency_hz == pytest.approx(81.1, abs=0.06)
    assert _by_name(table, "BPFI", "test_bearing").frequency_hz == pytest.approx(118.9, abs=0.06)
    assert _by_name(table, "FTF", "test_bearing").order == pytest.approx(0.406, abs=5e-4)
    assert _by_name(table, "BSF", "test_bearing").order == pytest.approx(2.555, abs=1e-3)


@given(n=st.integers(3, 40), ratio=st.floats(0.05, 0.45), angle=st.floats(0, 40))
def test_bearing_identities(n, ratio, angle):
    # Source: derived from the standard kinematic formulas: BPFO + BPFI = n fr; BPFO = n FTF.
    b = Bearing("b", "s", None, n, ratio * 100.0, 100.0, angle, None)
    m = bearing_multiples(b)
    assert m["bpfo"] + m["bpfi"] == pytest.approx(n)
    assert m["bpfo"] == pytest.approx(n * m["ftf"])


def test_contact_angle_moves_defect_rates():
    # Source: formulas with cos(phi) (Randall & Antoni 2011, eqs. 1-4): phi = 60 deg halves d/D.
    flat = bearing_multiples(Bearing("b", "s", None, 10, 20.0, 100.0, 0.0, None))
    steep = bearing_multiples(Bearing("b", "s", None, 10, 20.0, 100.0, 60.0, None))
    assert flat["bpfo"] == pytest.approx(5 * (1 - 0.2))
    assert steep["bpfo"] == pytest.approx(5 * (1 - 0.1))


def test_gear_mesh_and_hunting_tooth(tmp_path):
    # Source: check-values.md [derived]: 23 and 67 teeth, pinion at 30 Hz: GMF 690 Hz,
    # f_HT = GMF gcd / (z1 z2) = 0.4478 Hz; no APPF line when gcd = 1.
    path = tmp_path / "gb.yaml"
    path.write_text("machine: gb\nshafts:\n  - {id: pinion, speed_hz: 30}\n"
                    "  - {id: wheel, driven_through: mesh}\n"
                    "gears:\n  - id: mesh\n    driving: {shaft: pinion, teeth: 23}\n"
                    "    driven: {shaft: wheel, teeth: 67}\n")
    m = load_machine(path)
    table = forcing_frequencies(m)
    assert _by_name(table, "GMF", "mesh").frequency_hz == pytest.approx(690.0)
    assert _by_name(table, "HTF", "mesh").frequency_hz == pytest.approx(0.4478, abs=1e-4)
    assert not [f for f in table if f.name == "APPF"]
    assert m.shaft_speeds_hz["wheel"] == pytest.approx(30 * 23 / 67)
    # the mesh frequency is the same seen from the wheel: 67 x wheel speed
    assert 67 * m.shaft_speeds_hz["wheel"] == pytest.approx(690.0)


def test_assembly_phase_passing_with_common_factor(tmp_path):
    # Source: check-values.md [derived]: APPF = GMF / gcd(z1, z2); 20 and 30 teeth, gcd 10.
    path = tmp_path / "gb.yaml"
    path.write_text("machine: gb\nshafts:\n  - {id: a, speed_hz: 10}\n  - {id: b, driven_through: m}\n"
                    "gears:\n  - {id: m, driving: {shaft: a, teeth: 20}, driven: {shaft: b, teeth: 30}}\n")
    table = forcing_frequencies(load_machine(path))
    assert _by_name(table, "APPF", "m").frequency_hz == pytest.approx(200.0 / 10)
    assert _by_name(table, "HTF", "m").frequency_hz == pytest.approx(200.0 * 10 / 600)


def test_belt_pass_and_driven_speed():
    # Source: handbook formula (common practice): belt pass = pi D1 f1 / L, driven speed
    # = f1 D1 / D2. BW-1: 160 mm sheave at 2955 rpm, 1800 mm belt.
    m = load_machine(CASES / "machines" / "bw1-backwash-blower.yaml")
    table = forcing_frequencies(m)
    f1 = 2955 / 60
    assert _by_name(table, "belt pass", "vbelt").frequency_hz == pytest.approx(math.pi * 160 * f1 / 1800)
    assert m.shaft_speeds_hz["blower"] == pytest.approx(f1 * 160 / 250)
    assert _by_name(table, "blade pass", "blower_wheel").frequency_hz == pytest.approx(12 * f1 * 160 / 250)


def test_induction_motor_lines():
    # Source: common practice for induction motors: synchronous speed 2 f_L / p;
    # 4 poles at 50 Hz -> 25 Hz; at 1470 rpm slip 0.5 Hz, pole pass 4 x 0.5 = 2 Hz; 2xLF 100 Hz.
    m = load_machine(CASES / "machines" / "rw2-raw-water-pump.yaml")
    table = forcing_frequencies(m, speed_rpm=1470)
    assert _by_name(table, "slip", "M-RW2").frequency_hz == pytest.approx(0.5)
    assert _by_name(table, "pole pass", "M-RW2").frequency_hz == pytest.approx(2.0)
    assert _by_name(table, "2xLF", "M-RW2").frequency_hz == pytest.approx(100.0)
    assert _by_name(table, "rotor bar pass", "M-RW2").frequency_hz == pytest.approx(40 * 24.5)
    assert _by_name(table, "vane pass", "impeller").frequency_hz == pytest.approx(6 * 24.5)


@given(rpm=st.floats(100, 6000))
def test_speed_scales_every_shaft_locked_frequency(rpm):
    # Source: derived - every shaft-locked frequency is order x shaft speed, so it scales
    # with the running speed; line-locked 2xLF does not.
    m = load_machine(CASES / "machines" / "ct1-cooling-tower-fan.yaml")
    nominal = {(f.name, f.component): f for f in forcing_frequencies(m)}
    scaled = {(f.name, f.component): f for f in forcing_frequencies(m, speed_rpm=rpm)}
    k = rpm / 985.0
    for key, f in nominal.items():
        if f.family == "electrical":
            continue
        assert scaled[key].frequency_hz == pytest.approx(f.frequency_hz * k, rel=1e-9)
    assert scaled[("2xLF", "M-CT1")].frequency_hz == pytest.approx(100.0)


def test_rpm_for_another_shaft():
    m = load_machine(CASES / "machines" / "ct1-cooling-tower-fan.yaml")
    speeds = m.speeds_at(300, shaft="fan")
    assert speeds["fan"] == pytest.approx(5.0)
    assert speeds["motor"] == pytest.approx(5.0 * 67 / 23)
