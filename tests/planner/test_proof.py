"""The proof by simulation: each purpose's fault is found with the proposed settings and missed with a
deliberately poor set, and the simulation agrees with the check."""

import numpy as np
import pytest
from scipy import signal

from engine.machine import load_machine
from engine.planner import CAN, CANNOT, MAY_MISS, check, given_settings, load_policy, propose, targets_at, verdicts
from engine.planner.proof import ANTI_ALIAS, physical_rate, prove, record
from engine.planner.routes import THRESHOLDS, judge, least
from engine.planner.settings import Settings
from engine.planner.targets import Target

from support import CASES, tone

POLICY = load_policy()
RW2 = load_machine(CASES / "machines" / "rw2-raw-water-pump.yaml")
CT1 = load_machine(CASES / "machines" / "ct1-cooling-tower-fan.yaml")

# (purpose, machine, point, fault, component or shaft, a deliberately poor set, what the check says of it)
PURPOSES = [
    ("severity", RW2, "P1H", "severity", "pump", dict(fmax_hz=50.0, lines=100), MAY_MISS),
    ("bearing outer race", RW2, "P1H", "outer-race", "pump_de", dict(fmax_hz=1000.0, lines=800), CANNOT),
    ("bearing inner race", RW2, "P1H", "inner-race", "pump_de", dict(fmax_hz=1000.0, lines=800), CANNOT),
    ("cracked tooth on the output shaft", CT1, "GINH", "gear-tooth", "fan",
     dict(sample_rate_hz=25600.0, duration_s=1.0), CANNOT),
    ("eccentric output gear", CT1, "GINH", "gear-eccentricity", "fan", dict(fmax_hz=2000.0, lines=400), CANNOT),
    ("looseness", RW2, "P1H", "looseness", "pump", dict(fmax_hz=100.0, lines=400), CANNOT),
    ("rotor bars", RW2, "M1H", "rotor-bar", "M-RW2", dict(fmax_hz=200.0, lines=200), CANNOT),
    ("stator", RW2, "M1H", "stator", "M-RW2", dict(fmax_hz=50.0, lines=200), CANNOT),
]


@pytest.mark.parametrize("name, machine, point, signature, where, poor, state", PURPOSES, ids=[p[0] for p in PURPOSES])
def test_found_with_the_proposal_and_missed_with_a_poor_set(name, machine, point, signature, where, poor, state):
    p = machine.point(point)
    purpose = "severity" if signature == "severity" else next(
        u for u in ("bearing", "gear", "shaft", "electrical")
        if any(t.signature == signature for t in targets_at(machine, p, u)))
    target = next(t for t in targets_at(machine, p, purpose)
                  if t.signature == signature and where in (t.shaft, t.component))
    proposed = propose(machine, p, purpose, POLICY).settings()
    bad = given_settings(POLICY, **poor)
    expected = {label: verdicts([target], check(machine, s, POLICY, [point], [purpose]))[0].state
                for label, s in (("proposed", proposed), ("poor", bad))}
    assert expected == {"proposed": CAN, "poor": state}
    item = prove(machine, target, p, {"proposed": proposed, "poor": bad}, POLICY, expected)
    assert item.trials["proposed"].found, item.trials["proposed"].measure
    assert not item.trials["poor"].found, item.trials["poor"].measure
    assert item.agrees("proposed") is True
    assert item.agrees("poor") in ((True,) if state == CANNOT else (None,))


def test_both_settings_record_one_simulated_signal():
    s = Settings(1000.0, 400, 2560.0, 0.4, "a")
    fast = Settings(10000.0, 4000, 25600.0, 0.4, "b")
    fs = physical_rate([s, fast])
    assert fs == 51200.0 and fs % fast.sample_rate_hz == 0
    rng = np.random.default_rng(5)
    x = rng.standard_normal(int(0.6 * fs))
    a, rate_a = record(x, fs, s)
    b, rate_b = record(x, fs, fast)
    assert rate_a == pytest.approx(2560.0) and rate_b == pytest.approx(25600.0)
    assert len(a) == s.n_samples and len(b) == fast.n_samples
    # the slow record is the fast one seen through a narrower filter: their low band agrees
    low_a = np.abs(np.fft.rfft(a))[:int(0.4 * 100)]
    low_b = np.abs(np.fft.rfft(signal.resample_poly(b, 1, 10)))[:int(0.4 * 100)]
    assert np.corrcoef(low_a, low_b)[0, 1] > 0.95


def test_the_recorder_keeps_the_band_to_fmax_and_removes_what_lies_above():
    # Reference: the elliptic design of scipy.signal.ellip (0.1 dB ripple to Fmax, 80 dB stop band),
    # run forward and backward: 0.2 dB ripple at most below Fmax.
    fs, n = 51200.0, 51200 * 2
    s = Settings(1000.0, 1000, 2560.0, 1.0, "x")
    for f_hz, low, high in ((400.0, 0.97, 1.03), (1500.0, 0.0, 1e-3)):
        y, rate = record(tone(f_hz, fs, n), fs, s, start_s=0.5)
        amplitude = np.sqrt(2) * np.std(y)
        assert low <= amplitude <= high, (f_hz, amplitude)
    assert ANTI_ALIAS["ripple_db"] == 0.1 and ANTI_ALIAS["stop_db"] == 80.0


def test_routes_read_their_bounds_from_the_rules_they_mirror():
    from engine.reasoning import load_rulebook

    book = load_rulebook()
    for rule_id, fields in THRESHOLDS.items():
        rule = book.rule(rule_id)
        for kind, field in fields:
            bounds = [c.value if c.op != "between" else c.value[0] for p in rule.needs if p.kind == kind
                      for c in p.conditions if c.field == field and c.op in ("at_least", "above", "between")]
            assert bounds and least(rule_id, kind, field) == bounds[0], (rule_id, kind, field)


def _facts(**envelope):
    return [{"kind": "envelope_tone", "component": "pump_de", "defect": "BPFO", "channel": "P1H"} | envelope]


@pytest.mark.parametrize("harmonics, snr, found", [(3, 10.0, True), (2, 30.0, False), (5, 9.0, False)])
def test_bearing_route_uses_the_rule_s_thresholds(harmonics, snr, found):
    target = Target("bearing", "outer-race", "outer-race", "pump_de", "pump")
    ok, outcomes = judge(_facts(harmonics_owned=harmonics, first_snr_db=snr), target)
    assert ok is found and outcomes["envelope"].measure.startswith("BPFO")
