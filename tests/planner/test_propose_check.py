"""Proposals meet their own checks; checks find what deliberately poor settings cannot show."""

import math
from dataclasses import replace
from types import SimpleNamespace

import pytest

from engine.machine import load_machine
from engine.machine.kinematics import bearing_multiples
from engine.planner import (
    CAN,
    CANNOT,
    MAY_MISS,
    check,
    given_settings,
    limitations_of_reading,
    load_policy,
    propose,
    purposes_at,
    reading_settings,
    reading_verdicts,
    targets_at,
    verdicts,
)
from engine.readings.length import check_record_length

from support import CASES, TEST_MACHINES

POLICY = load_policy()
MACHINES = sorted((CASES / "machines").glob("*.yaml")) + sorted(TEST_MACHINES.glob("*.yaml"))
RW2 = load_machine(CASES / "machines" / "rw2-raw-water-pump.yaml")
CT1 = load_machine(CASES / "machines" / "ct1-cooling-tower-fan.yaml")


@pytest.mark.parametrize("path", MACHINES, ids=[p.stem for p in MACHINES])
def test_every_proposal_passes_its_own_checks(path):
    machine = load_machine(path)
    for point in machine.points:
        for purpose in purposes_at(machine, point):
            p = propose(machine, point, purpose, POLICY)
            missed = check(machine, p.settings(), POLICY, points=[point.id], purposes=[purpose])
            # only what no standard setting reaches may stay, and each such need has a note
            assert {lim.what for lim in missed} == {n.what for n in p.unmet}, (point.id, purpose)
            assert not p.unmet or p.notes
            assert all(reason and "\n" not in reason for reason in p.reasons.values())
            assert p.sample_rate_hz == pytest.approx(POLICY.sample_rate_per_fmax * p.fmax_hz)
            assert p.fmax_hz in POLICY.fmax_steps_hz
            if purpose == "bearing":   # two spectra, each with standard lines; the record is the envelope's
                assert p.raw_lines in POLICY.standard_lines and p.envelope_lines in POLICY.standard_lines
                assert p.envelope_fmax_hz in POLICY.fmax_steps_hz
                assert p.record_s == pytest.approx(p.envelope_lines / p.envelope_fmax_hz)
            else:
                assert p.lines in POLICY.standard_lines and p.raw_lines is None


@pytest.mark.parametrize("path", MACHINES, ids=[p.stem for p in MACHINES])
def test_every_proposal_passes_the_diagnosis_s_length_and_rate_gates(path):
    # a proposal the analysis refuses (engine/readings/length.py: Fmax below 1X of the fastest shaft, or
    # fewer than 2 turns of the slowest shaft the point sees) or one record a turn short of the turns a
    # check asks is no proposal: one record holds the longest turn need, the waveform too
    machine = load_machine(path)
    for point in machine.points:
        for purpose in purposes_at(machine, point):
            p = propose(machine, point, purpose, POLICY)
            for settings in (p.settings(), replace(p.settings(), duration_s=p.record_s)):
                reading = SimpleNamespace(speed_rpm=None, fs_hz=settings.sample_rate_hz, source=str(path),
                                          duration_s=settings.duration_s, channels=[SimpleNamespace(point=point.id)])
                check_record_length(reading, machine)
            turns = [n for n in p.requirements.needs if n.setting == "duration" and n.noun.startswith("turns of")]
            assert all(p.record_s >= n.value * (1 - 1e-9) for n in turns) or p.lines == POLICY.standard_lines[-1] \
                or (p.envelope_lines == POLICY.standard_lines[-1]), (point.id, purpose)


def test_the_conveyor_s_slow_shaft_proposal_is_sampled_above_the_motor_s_1x():
    # SC-5: motor 1480 rpm (24.67 Hz), pulley 54.73 rpm. 10 x 1X of the pulley needs only 9.1 Hz, but a
    # record whose Fmax (sample rate / 2.56) is below the motor's 1X is refused; and one record holds
    # 10 turns of the output shaft (10.96 s), not 9.1
    machine = load_machine(TEST_MACHINES / "sc5-sludge-cake-conveyor.yaml")
    p = _proposal(machine, "H1H", "shaft")
    assert p.fmax_hz == 50 and p.sample_rate_hz == 128 and p.record_s >= 10 * 60 / 54.73
    bearing = _proposal(machine, "H1H", "bearing")
    assert bearing.record_revolutions >= 10 and "raised to" in bearing.reasons["envelope lines"]


def _proposal(machine, point, purpose):
    return propose(machine, machine.point(point), purpose, POLICY)


def test_severity_covers_the_iso_band():
    p = _proposal(RW2, "P1H", "severity")
    # Source: ISO 20816-3:2022 band 10-1000 Hz (from memory, check-values.md); the lower edge
    # 4 lines above 0 Hz since the Hann main lobe spans +-2 lines (Heinzel et al. 2002) [derived].
    # 400 lines (2.5 Hz) would do for the band, but a record of 0.4 s holds 9.9 turns of the pump at
    # 1486 rpm, one short of its own turn need (10 turns, policy min_revolutions): the lines are raised to 800
    assert p.fmax_hz == 1000 and p.lines == 800 and p.resolution_hz == pytest.approx(1.25)
    assert p.record_revolutions == pytest.approx(0.8 * 1486 / 60) and "raised to 800" in p.reasons["lines"]
    assert p.sample_rate_hz == 2560                               # 2.56 x Fmax, common practice


def test_slow_machine_gets_the_low_iso_band():
    p = _proposal(CT1, "GOUTH", "severity")
    # Source: ISO 20816-3:2022 (from memory): 2-1000 Hz at 600 r/min and below; the fan runs at 338 r/min.
    assert p.resolution_hz <= 2.0 / 4


def test_gear_settings_split_sidebands_hold_the_turns_and_the_hunting_tooth_period():
    p = _proposal(CT1, "GINH", "gear")
    f_in = 985 / 60
    f_fan = f_in * 23 / 67
    gmf = 23 * f_in
    # Source: GMF = z x fr; f_HT = GMF gcd(z1, z2) / (z1 z2) (check-values.md, "Gears") [derived]
    f_ht = gmf * math.gcd(23, 67) / (23 * 67)
    assert f_ht == pytest.approx(0.24502, rel=1e-4)
    # Source: common practice: two lines between a carrier and its sideband -> 3 line spacings
    assert p.resolution_hz <= f_fan / 3
    # Source: common practice: 10 turns of the slowest shaft; one hunting-tooth period
    assert p.waveform_s >= 10 / f_fan and p.waveform_s >= 1 / f_ht
    # Source: derived (check-values.md): 10 samples on one tooth impact, which lasts one mesh period
    assert p.sample_rate_hz >= 10 * gmf
    # 3 x GMF with 3 orders of sidebands under Fmax (policy harmonics)
    assert p.fmax_hz >= 3 * gmf + 3 * f_in


def test_bearing_settings_reach_the_ringing_band_and_the_cage_turns():
    p = _proposal(RW2, "P2H", "bearing")
    lo, hi = POLICY.bearing_resonance_hz
    assert p.envelope_band_hz == (lo, hi) and p.fmax_hz >= hi
    assert p.envelope_band_hz[1] <= p.sample_rate_hz / 2            # the band fits under Nyquist
    b = next(b for b in RW2.bearings if b.id == "pump_nde")
    ftf = bearing_multiples(b)["ftf"] * RW2.shaft_speeds_hz["pump"]
    # Source: standard bearing kinematics, FTF = fr/2 (1 - d/D cos phi) (Randall & Antoni 2011)
    assert ftf == pytest.approx(1486 / 60 / 2 * (1 - 22.225 / 95.0), rel=1e-9)
    assert p.waveform_s >= 10 / ftf                                  # 10 cage turns, common practice


def test_electrical_settings_split_pole_pass_sidebands():
    p = _proposal(RW2, "M1H", "electrical")
    # Source: pole pass = poles x slip frequency (kinematics module docstring, standard motor formula)
    pole_pass = 4 * (2 * 50 / 4 - 1486 / 60)
    assert pole_pass == pytest.approx(0.9333, rel=1e-3)
    assert p.resolution_hz <= pole_pass / 3                           # two lines between, common practice


def test_a_slow_shaft_below_the_low_frequency_limit_is_a_note_not_a_setting():
    planet = load_machine(TEST_MACHINES / "mfpt-planet.yaml")
    p = _proposal(planet, "FB", "shaft")
    assert p.waveform_s >= 10 / 0.62288                              # 10 turns of a 37 r/min shaft
    assert any("low-frequency limit" in n for n in p.notes)


POOR = [
    # (machine, point, purpose, settings, target signature, expected state, words in a reason)
    ("bearing: Fmax below the ringing band", RW2, "P1H", "bearing", dict(fmax_hz=1000.0, lines=800),
     "outer-race", CANNOT, "above Fmax"),
    ("gear: a record too short for the output shaft", CT1, "GINH", "gear",
     dict(sample_rate_hz=25600.0, duration_s=1.0), "gear-tooth", CANNOT, "turns of fan"),
    ("gear: lines too coarse for the output shaft's sidebands", CT1, "GINH", "gear",
     dict(fmax_hz=2000.0, lines=400), "gear-eccentricity", CANNOT, "sidebands at 1X of fan"),
    ("looseness: Fmax below 5X", RW2, "P1H", "shaft", dict(fmax_hz=100.0, lines=400), "looseness", CANNOT,
     "above Fmax"),
    ("rotor bars: pole pass sidebands inside one line", RW2, "M1H", "electrical", dict(fmax_hz=200.0, lines=200),
     "rotor-bar", CANNOT, "pole-pass"),
    ("severity: Fmax below the ISO band's top", RW2, "P1H", "severity", dict(fmax_hz=200.0, lines=400),
     "severity", MAY_MISS, "ISO 20816-3"),
]


@pytest.mark.parametrize("name, machine, point, purpose, given, signature, state, words", POOR,
                         ids=[p[0] for p in POOR])
def test_poor_settings_are_caught_with_their_reason(name, machine, point, purpose, given, signature, state, words):
    s = given_settings(POLICY, **given)
    lims = check(machine, s, POLICY, points=[point], purposes=[purpose])
    targets = [t for t in targets_at(machine, machine.point(point), purpose) if t.signature == signature]
    found = verdicts(targets, lims)
    assert any(v.state == state for v in found)
    assert any(words in r for v in found if v.state == state for r in v.reasons)
    # each limitation names what it is about, why and what would show it
    assert all(lim.what and lim.why and lim.needs for lim in lims)


def test_samples_on_a_tooth_impact_are_the_sample_rate_times_the_mesh_period():
    s = given_settings(POLICY, fmax_hz=1000.0, lines=400)
    lims = check(CT1, s, POLICY, points=["GINH"], purposes=["gear"])
    impact = next(lim for lim in lims if "tooth impact" in lim.what)
    gmf = 23 * 985 / 60
    assert impact.effect == "view"
    assert f"{2560 / gmf:.1f} samples on one tooth impact" in impact.why   # fs x 1/GMF [derived]


def test_a_reading_is_checked_as_its_settings():
    by_reading = limitations_of_reading(CT1, 2560.0, 1024, POLICY)
    by_settings = check(CT1, reading_settings(POLICY, 2560.0, 1024, "reading"), POLICY)
    assert by_reading == by_settings and by_reading
    states = {v.target.label: v.state for v in reading_verdicts(CT1, 2560.0, 1024, POLICY, points=["GINH"])}
    assert states["outer-race on input_front"] == CANNOT
    assert states["gear-tooth on bevel_stage (fan gear)"] == CANNOT
    assert "outer-race on motor_de" not in states          # a point the reading does not hold


def test_settings_that_cover_every_proposal_show_everything():
    proposals = [propose(RW2, p, u, POLICY) for p in RW2.points for u in purposes_at(RW2, p)]
    fmax = max(p.fmax_hz for p in proposals)
    duration = max(p.waveform_s for p in proposals)
    # the finest resolution any proposal asks, at the highest Fmax (a bearing proposal's raw spectrum has
    # fewer lines than its record holds: the record is what the envelope's resolution needs)
    lines = max(round(fmax / p.resolution_hz) for p in proposals)
    s = given_settings(POLICY, fmax_hz=fmax, lines=lines, duration_s=max(duration, lines / fmax))
    # limits no setting can lift (two rates sharing lines: the bearings' geometry) are left out
    lims = [lim for lim in check(RW2, s, POLICY) if lim.effect != "view" and lim.setting != "twin"]
    targets = [t for p in RW2.points for u in purposes_at(RW2, p) for t in targets_at(RW2, p, u)]
    assert all(v.state == CAN for v in verdicts(targets, lims)), [lim.what for lim in lims]


def test_the_band_edge_reason_reads_as_a_span_of_lines():
    # nu27 item 21: "puts 6.4 lines across the ISO band's lower edge (2 Hz) above 0 Hz" was hard to parse;
    # the reason names the span the lines fall across: 10 Hz / 1.25 Hz = 8 lines (ISO 20816-3 band from
    # 10 Hz, from memory, check-values.md)
    p = _proposal(RW2, "P1H", "severity")
    reason = p.reasons["lines"]
    assert "puts 8.0 lines across the 10 Hz from 0 Hz up to the ISO band's lower edge (at least 4)" in reason
    assert "above 0 Hz" not in p.reasons["lines"]
