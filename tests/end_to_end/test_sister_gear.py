"""Two gears on one shaft, a tooth comb over a bearing's rate, and a late inner race beside a coupling.

GC-1 (tests/machines/gc1-grit-conveyor-drive.yaml, an invented machine) carries two gears on its
intermediate shaft: the 71-tooth wheel of the first stage and the 17-tooth pinion of the second. Both
meshes are whole orders of that shaft (GMF = teeth x shaft speed), so a once-per-turn event, impacts
once per turn and sidebands at its 1X belong to either gear; the damaged gear's own mesh is the one
the tooth modulates (Randall 2011, Vibration-based Condition Monitoring, ch. 2 and 5). Before this
change a damaged second-stage tooth named the first stage too at the same certainty (0.68-0.70 at full
speed), and at 85 % speed the output bearing (its BPFO 1.98 orders of the intermediate shaft, one
line from the tooth comb's second order) at 0.61-0.68.

RW-2's pump drive-end inner race at stage 4 was also called angular misalignment on the coupling at
0.65-0.72 (3 of 240 stage readings): the simulator's displacement-shaped rings put a random-phase 1X
and 2X into every direction alike.
"""

from __future__ import annotations

import numpy as np
import pytest

from bench.confusion import on_a_drive
from engine.evidence import extract_evidence
from engine.machine import load_machine
from engine.reasoning import CONFIDENT, Reasoner, load_rulebook
from engine.simulation import as_reading, simulate
from engine.simulation.bearings import _below_rate_cut

from support import CASES, TEST_MACHINES

# on a variable-speed drive down to 85 % of nominal, as bench.confusion runs them
GC1 = on_a_drive(load_machine(TEST_MACHINES / "gc1-grit-conveyor-drive.yaml"), 0.85)
RW2 = on_a_drive(load_machine(CASES / "machines" / "rw2-raw-water-pump.yaml"), 0.85)
NOMINAL_RPM = 1480.0


@pytest.fixture(scope="module")
def reasoner():
    return Reasoner(load_rulebook())


def _certainty(result, fault, component) -> float:
    return next((h.certainty for h in result.hypotheses if (h.fault, h.component) == (fault, component)), 0.0)


def _listing(result) -> str:
    return ", ".join(f"{h.fault} on {h.component} {h.certainty:.2f}" for h in result.hypotheses[:5])


def test_both_meshes_are_orders_of_the_shared_shaft():
    # GMF = teeth x shaft speed (Randall 2011, ch. 2): 71 and 17 orders of the intermediate shaft
    mesh = {g.id: g for g in GC1.gears}
    assert mesh["first_stage"].driven_shaft == mesh["second_stage"].driving_shaft == "intermediate"
    assert (mesh["first_stage"].driven_teeth, mesh["second_stage"].driving_teeth) == (71, 17)


@pytest.fixture(scope="module")
def tooth_facts():
    """Evidence of a damaged second-stage pinion tooth (stage 2, full speed), by seed."""
    out = {}
    for seed in (0, 1, 2):
        sim = simulate(GC1, "gear-tooth", "second_stage", 2, NOMINAL_RPM, 25600.0, 4.0, seed)
        out[seed] = extract_evidence(as_reading(sim), GC1)
    return out


def test_the_simulator_modulates_the_faulty_gear_s_own_mesh(tooth_facts):
    # the simulated tooth modulates the second-stage mesh only (Randall 2011, ch. 5): round its GMF the
    # intermediate shaft's sidebands stand higher over their carrier than round the first stage's GMF on
    # every channel, and 10 dB higher at the shared shaft's own bearing; the first stage shows only the comb
    for facts in tooth_facts.values():
        fams = {(f["channel"], f["component"]): f for f in facts if f["kind"] == "sideband_family"
                and f["carrier"] == "GMF" and f["spacing_shaft"] == "intermediate" and f["carrier_found"]}
        channels = {ch for ch, _ in fams}
        assert channels
        for ch in channels:
            own, sister = fams[(ch, "second_stage")], fams.get((ch, "first_stage"))
            assert own["pairs"] >= 2
            assert own["sideband_to_carrier_db"] == pytest.approx(20 * np.log10(own["sideband_to_carrier"]), abs=1e-6)
            if sister is not None:
                margin = own["sideband_to_carrier_db"] - sister["sideband_to_carrier_db"]
                assert margin >= (10.0 if ch == "GIMH" else 3.0), (ch, margin)


def test_a_second_stage_tooth_does_not_name_the_sister_gear(reasoner, tooth_facts):
    for seed, facts in tooth_facts.items():
        result = reasoner.reason(facts)
        assert _certainty(result, "gear-tooth", "second_stage") >= CONFIDENT, _listing(result)
        assert _certainty(result, "gear-tooth", "first_stage") < CONFIDENT, _listing(result)
        against = next(h for h in result.hypotheses if (h.fault, h.component) == ("gear-tooth", "first_stage"))
        assert "gear.tooth.other-mesh-on-shaft" in {f.rule_id for f in against.against}, seed


def _mesh_family(component: str, ratio: float) -> dict:
    db = float(20 * np.log10(ratio))
    return {"kind": "sideband_family", "id": f"sb-{component}", "channel": "GIMH", "point": "GIMH",
            "direction": "horizontal", "location": "intermediate_bearing", "location_shaft": "intermediate",
            "carrier": "GMF", "component": component, "carrier_hz": 100.0, "carrier_found": True,
            "spacing": "1X", "spacing_shaft": "intermediate", "spacing_hz": 6.6, "count": 12, "pairs": 6,
            "max_order": 6, "sideband_to_carrier_db": db, "sideband_to_carrier": ratio}


@pytest.mark.parametrize("sister_ratio, fires", [
    (0.01, True),      # 20 dB under the damaged mesh's: the sister only carries the comb
    (0.2 / 3.3, True),     # 10.4 dB under
    (0.2 / 3.0, False),    # 9.5 dB under: the two cannot be told apart by the meshes
    (0.2, False),      # the sister's sidebands are the stronger: the rule weighs against the other gear
])
def test_the_sister_mesh_rule_needs_a_10_db_difference(reasoner, sister_ratio, fires):
    # 10 dB = 3.16 x in amplitude (20 log10 3.16 = 10.0); the damaged mesh's sidebands at 0.2 of its carrier
    facts = [_mesh_family("second_stage", 0.2), _mesh_family("first_stage", sister_ratio)]
    rule = "gear.tooth.other-mesh-on-shaft"
    # only the sideband facts: the rule fires on its own, against the gear whose mesh carries less
    result = reasoner.reason(facts)
    against = {h.component for h in result.hypotheses for f in h.against if f.rule_id == rule}
    assert ("first_stage" in against) is fires
    assert "second_stage" not in against


def test_the_sister_mesh_rule_ignores_a_family_without_its_carrier(reasoner):
    # a family with no carrier found has a ratio of 0: it must not count as a quiet mesh
    quiet = _mesh_family("first_stage", 0.01) | {"carrier_found": False, "sideband_to_carrier": 0.0,
                                                  "sideband_to_carrier_db": 0.0}
    result = reasoner.reason([_mesh_family("second_stage", 0.2), quiet])
    assert not any(f.rule_id == "gear.tooth.other-mesh-on-shaft" for h in result.hypotheses for f in h.against)


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_a_tooth_comb_does_not_name_a_bearing_whose_rate_lies_on_its_orders(reasoner, seed):
    # at 85 % speed the output bearing's BPFO (9.65 orders of the output shaft, 17/83 of the intermediate's
    # speed: 1.98 orders of it) lies one line from the tooth comb's 2nd order in a 4 s record
    sim = simulate(GC1, "gear-tooth", "second_stage", 3, 0.85 * NOMINAL_RPM, 25600.0, 4.0, seed)
    result = reasoner.reason(extract_evidence(as_reading(sim), GC1))
    assert _certainty(result, "gear-tooth", "second_stage") >= CONFIDENT, _listing(result)
    assert _certainty(result, "outer-race", "output_bearing") < CONFIDENT, _listing(result)


@pytest.mark.parametrize("seed", [0, 1])
def test_an_output_bearing_outer_race_is_still_named(reasoner, seed):
    # no tooth comb: the output bearing's own family stands, as before
    sim = simulate(GC1, "outer-race", "output_bearing", 3, 0.85 * NOMINAL_RPM, 25600.0, 4.0, seed)
    result = reasoner.reason(extract_evidence(as_reading(sim), GC1))
    assert result.top is not None and (result.top.fault, result.top.component) == ("outer-race", "output_bearing"), \
        _listing(result)
    assert result.top.certainty >= CONFIDENT


def test_impacts_below_half_the_defect_rate_are_cut():
    fs, n, rate = 25600.0, 25600, 200.0
    t = np.arange(n) / fs
    low, high = np.sin(2 * np.pi * 25.0 * t), np.sin(2 * np.pi * rate * t)
    out = _below_rate_cut(low + high, fs, rate)
    spectrum = np.abs(np.fft.rfft(out)) / (n / 2)
    assert spectrum[25] < 1e-6          # 1 Hz lines: 25 Hz, an eighth of the rate, is gone
    assert spectrum[200] == pytest.approx(1.0, abs=1e-6)   # the rate itself is kept whole


@pytest.mark.parametrize("seed, scale, fs", [(1, 1.0, 25600.0), (2, 0.85, 12800.0), (2, 1.0, 25600.0)])
def test_a_stage_4_inner_race_is_not_called_misalignment(reasoner, seed, scale, fs):
    # the three stage-bench readings that called angular misalignment on RW-2's coupling at 0.65-0.72
    sim = simulate(RW2, "inner-race", "pump_de", 4, scale * 1486.0, fs, 4.0, seed)
    facts = extract_evidence(as_reading(sim), RW2)
    result = reasoner.reason(facts)
    assert _certainty(result, "inner-race", "pump_de") >= CONFIDENT, _listing(result)
    assert _certainty(result, "misalignment-angular", "coupling") < CONFIDENT, _listing(result)
    # with no random-phase 1X of its own the defect leaves the residual 1X alone: axial 1X at the bearing
    # stays under radial 1X, as the background has it (axial 0.3 of radial 0.6 mm/s)
    ratio = next(f for f in facts if f["kind"] == "direction_ratio" and f["location"] == "pump_de")
    assert ratio["axial_1x_to_radial"] < 0.6
