"""1X phase: the sidecar's and route's phase_1x, its checks, the pairs compared, and the phase rules.

The expected relations are the trade's reading of phase: unbalance about 90 degrees between
horizontal and vertical at a bearing with radial phases alike across the coupling;
misalignment about 180 degrees across the coupling (axially for angular, radially for
parallel); a bent shaft about 180 degrees axially end to end of one shaft; looseness a
phase that changes between readings (Scheffer & Girdhar (2004), Practical Machinery
Vibration Analysis and Predictive Maintenance, ch. 5, from memory; common practice).
The simulator makes the spectrum; the phases are given as a sidecar gives them.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from engine.common.errors import ReadingError, RouteError
from engine.evidence import extract_evidence
from engine.machine import load_machine
from engine.machine.phase import PhasePlace, folded_difference_deg, phase_pairs
from engine.readings import PhaseReading, check_points, load_reading
from engine.reasoning import Reasoner, load_rulebook
from engine.route.files import load_route
from engine.simulation import as_reading, simulate

from support import CASES

RW2 = load_machine(CASES / "machines" / "rw2-raw-water-pump.yaml")


@pytest.fixture(scope="module")
def reasoner():
    return Reasoner(load_rulebook())


def _phases(*entries) -> tuple[PhaseReading, ...]:
    return tuple(PhaseReading(point, direction, deg, None, "test.yaml", i + 1)
                 for i, (point, direction, deg) in enumerate(entries))


def _certainty(result, fault, component) -> float:
    return next((h.certainty for h in result.hypotheses if (h.fault, h.component) == (fault, component)), 0.0)


def _phase_rules(result) -> set[str]:
    return {f.rule_id for h in result.hypotheses for f in (*h.support, *h.against) if f.rule_id.startswith("phase.")}


@pytest.fixture(scope="module")
def unbalance_reading():
    return as_reading(simulate(RW2, "unbalance", "pump", 2, None, 25600.0, 4.0, 3))


def _reason(reasoner, reading, phases):
    return reasoner.reason(extract_evidence(replace(reading, phase_1x=phases), RW2))


# --- input -------------------------------------------------------------------------------------------

def _write_npz(tmp_path, sidecar: str):
    x = np.random.default_rng(4).normal(0.0, 0.01, 4096)
    np.savez(tmp_path / "r.npz", P1H=x, sample_rate_hz=np.array(4096.0), unit=np.array("g"))
    (tmp_path / "r.npz.yaml").write_text("channels: [{name: P1H, point: P1H, direction: horizontal}]\n" + sidecar)
    return tmp_path / "r.npz"


def test_sidecar_phase_is_read_with_its_place(tmp_path):
    path = _write_npz(tmp_path, "phase_1x:\n  - {point: P1H, phase_deg: -30, amplitude_mm_s_rms: 2.5}\n"
                                "  - {point: pump_de, direction: vertical, phase_deg: 60}\n")
    reading = load_reading(path)
    assert [(p.point, p.direction, p.phase_deg, p.amplitude_mm_s_rms) for p in reading.phase_1x] == [
        ("P1H", None, -30.0, 2.5), ("pump_de", "vertical", 60.0, None)]
    check_points(reading, RW2)       # both name places of RW-2


@pytest.mark.parametrize("entry, words", [
    ("{point: P1H, phase_deg: 400}", "phase_1x.0.phase_deg"),
    ("{point: P1H, phase_deg: -361}", "phase_1x.0.phase_deg"),
    ("{point: P1H, phase_deg: forty}", "phase_1x.0.phase_deg"),
    ("{point: P1H, phase_deg: 40, amplitude_mm_s_rms: -1}", "amplitude_mm_s_rms"),
    ("{point: P1H}", "phase_deg"),
    ("{point: P1H, phase_deg: 40, direction: sideways}", "direction"),
])
def test_a_bad_phase_entry_is_one_line_naming_the_sidecar(tmp_path, entry, words):
    path = _write_npz(tmp_path, f"phase_1x:\n  - {entry}\n")
    with pytest.raises(ReadingError) as err:
        load_reading(path)
    text = str(err.value)
    assert "r.npz.yaml" in text and words in text and "\n" not in text


@pytest.mark.parametrize("entry, words", [
    ("{point: P9X, phase_deg: 40}", "no point or bearing 'P9X'"),
    ("{point: pump_de, phase_deg: 40}", "give its direction"),
    ("{point: P1H, direction: vertical, phase_deg: 40}", "horizontal in the machine file"),
])
def test_a_phase_at_no_place_of_the_machine_is_refused_with_its_line(tmp_path, entry, words):
    path = _write_npz(tmp_path, f"phase_1x:\n  - {entry}\n")
    reading = load_reading(path)
    with pytest.raises(ReadingError) as err:
        check_points(reading, RW2)
    assert words in str(err.value) and "r.npz.yaml:3" in str(err.value)   # the entry's own line


def test_a_route_carries_phase_and_checks_it(tmp_path):
    path = _write_npz(tmp_path, "")
    machine = CASES / "machines" / "rw2-raw-water-pump.yaml"
    route = tmp_path / "route.yaml"
    route.write_text(f"readings:\n  - file: {path.name}\n    machine: {machine}\n"
                     "    phase_1x: [{point: M2H, phase_deg: 12.5}]\n")
    (task,) = load_route(route).tasks
    assert [(p.point, p.phase_deg) for p in task.phase_1x] == [("M2H", 12.5)]
    route.write_text(f"readings:\n  - file: {path.name}\n    machine: {machine}\n"
                     "    phase_1x: [{point: M2H, phase_deg: 720}]\n")
    with pytest.raises(RouteError, match="phase_deg"):
        load_route(route)


# --- pairs -------------------------------------------------------------------------------------------

@pytest.mark.parametrize("given, shown", [([360.0], 0.0), ([-360.0], 0.0), ([-90.0], 270.0), ([350.0, 10.0], 0.0),
                                          ([359.96], 0.0)])
def test_a_phase_is_shown_from_0_to_under_360(given, shown):
    # plain arithmetic of angles: a full turn is no turn; the mean of 350 and 10 degrees is 0
    from engine.evidence.phase import _circular_mean_deg
    assert round(_circular_mean_deg(given), 1) % 360.0 == pytest.approx(shown)


def test_differences_fold_to_0_180():
    # plain arithmetic of angles: 350 and 10 degrees are 20 apart; -90 and 90 are 180 apart
    assert folded_difference_deg(350, 10) == pytest.approx(20)
    assert folded_difference_deg(-90, 90) == pytest.approx(180)
    assert folded_difference_deg(30, 300) == pytest.approx(90)


def test_pairs_on_rw2_follow_the_bearings_and_the_coupling():
    places = [PhasePlace("pump_de", "pump", "horizontal"), PhasePlace("pump_de", "pump", "vertical"),
              PhasePlace("motor_de", "motor", "horizontal"), PhasePlace("motor_nde", "motor", "horizontal"),
              PhasePlace("motor_de", "motor", "axial"), PhasePlace("motor_nde", "motor", "axial")]
    got = {(p.relation, p.first.location, p.first.direction, p.second.location, p.second.direction)
           for p in phase_pairs(RW2, places)}
    assert got == {
        ("horizontal-vertical", "pump_de", "horizontal", "pump_de", "vertical"),
        ("end to end", "motor_de", "axial", "motor_nde", "axial"),
        # RW-2's coupling joins motor (driving) and pump: across it, the drive-end bearings only (not motor_nde)
        ("across coupling", "motor_de", "horizontal", "pump_de", "horizontal"),
    }


# --- rules -------------------------------------------------------------------------------------------

def test_unbalance_phase_raises_unbalance(reasoner, unbalance_reading):
    without = _certainty(_reason(reasoner, unbalance_reading, ()), "unbalance", "pump")
    # unbalance: H against V about 90 deg, radial across the coupling alike (Scheffer & Girdhar 2004, from memory)
    result = _reason(reasoner, unbalance_reading, _phases(("P1H", None, 40), ("pump_de", "vertical", 128),
                                                          ("M2H", None, 52)))
    assert {"phase.unbalance.quadrature", "phase.unbalance.alike-across-coupling"} <= _phase_rules(result)
    assert _certainty(result, "unbalance", "pump") > without


def test_misalignment_phase_lowers_unbalance(reasoner, unbalance_reading):
    without = _certainty(_reason(reasoner, unbalance_reading, ()), "unbalance", "pump")
    # misalignment: radial 180 deg across the coupling; H and V in one line (Scheffer & Girdhar 2004, from memory)
    result = _reason(reasoner, unbalance_reading, _phases(("P1H", None, 40), ("pump_de", "vertical", 45),
                                                          ("M2H", None, 215)))
    assert {"phase.unbalance.against-straight-line",
            "phase.unbalance.against-opposed-across-coupling"} <= _phase_rules(result)
    assert _certainty(result, "unbalance", "pump") < without


def _top(result, fault):
    return max((h for h in result.hypotheses if h.fault == fault), key=lambda h: h.certainty)


@pytest.mark.parametrize("fault, direction_points, opposed_rule, in_step_rule", [
    ("misalignment-parallel", ("M2H", "P1H"), "phase.misalignment-parallel.opposed-radial",
     "phase.misalignment-parallel.against-in-step-radial"),
    ("misalignment-angular", ("M2A", "P1A"), "phase.misalignment-angular.opposed-axial",
     "phase.misalignment-angular.against-in-step-axial"),
])
def test_misalignment_phase_across_the_coupling(reasoner, fault, direction_points, opposed_rule, in_step_rule):
    reading = as_reading(simulate(RW2, fault, None, 3, None, 25600.0, 4.0, 5))
    base = _top(_reason(reasoner, reading, ()), fault)
    one, other = direction_points
    # misalignment: about 180 deg across the coupling (Scheffer & Girdhar 2004, ch. 5, from memory)
    opposed = _reason(reasoner, reading, _phases((one, None, 10), (other, None, 188)))
    assert opposed_rule in _phase_rules(opposed)
    assert _certainty(opposed, fault, base.component) > base.certainty
    # in step across the coupling: the two shafts move together, not against each other (common practice)
    in_step = _reason(reasoner, reading, _phases((one, None, 10), (other, None, 25)))
    assert in_step_rule in _phase_rules(in_step)
    assert _certainty(in_step, fault, base.component) < base.certainty


def test_axial_phase_opposed_end_to_end_names_a_bent_shaft_only_as_possible(reasoner):
    reading = as_reading(simulate(RW2, "misalignment-angular", "motor", 3, None, 25600.0, 4.0, 5))
    assert _certainty(_reason(reasoner, reading, ()), "bent-shaft", "motor") == 0.0
    # bent shaft: axial about 180 deg end to end of one shaft (Scheffer & Girdhar 2004, ch. 5, from memory)
    result = _reason(reasoner, reading, _phases(("motor_nde", "axial", 0), ("M2A", None, 175)))
    c = _certainty(result, "bent-shaft", "motor")
    assert 0.2 <= c < 0.5        # phase raises it to possible, never to a conclusion on its own


def test_unsteady_phase_raises_looseness(reasoner):
    reading = as_reading(simulate(RW2, "looseness-rotating", "pump", 3, None, 25600.0, 4.0, 6))
    base = _top(_reason(reasoner, reading, ()), "looseness-rotating")
    # looseness: phase unsteady from one reading to the next (common practice)
    point = next(p for p in RW2.points if p.at == base.component or p.shaft == base.component)
    result = _reason(reasoner, reading, _phases((point.id, None, 10), (point.id, None, 95), (point.id, None, 170)))
    assert "phase.looseness.unsteady" in _phase_rules(result)
    assert _certainty(result, "looseness-rotating", base.component) > base.certainty


def test_phase_alone_makes_no_hypothesis(reasoner):
    healthy = as_reading(simulate(RW2, "healthy", None, 2, None, 25600.0, 4.0, 7))
    result = _reason(reasoner, healthy, _phases(("P1H", None, 40), ("pump_de", "vertical", 130), ("M2H", None, 45),
                                                ("motor_nde", "axial", 0), ("M2A", None, 180)))
    raised = {f.rule_id for h in result.hypotheses for f in h.support if f.rule_id.startswith("phase.")}
    assert not raised                    # no spectral sign, so no phase rule raises anything
    assert all(h.certainty <= 0 for h in result.hypotheses
               if h.support and all(f.rule_id.startswith("phase.") for f in h.support))
