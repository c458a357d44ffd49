"""The benches' scoring on hand-made answers: fault pairs and wrong calls (bench.confusion), calls
compared across gains and the severity-unknown flag (bench.real_data), the remaining-life methods
weighed against tellwave's (bench.femto_compare)."""

from __future__ import annotations

import argparse
from types import SimpleNamespace

import numpy as np
import pytest

from bench import confusion, real_data
from engine.readings.model import Channel, Reading


def _h(fault, component, certainty):
    return SimpleNamespace(fault=fault, component=component, certainty=certainty)

def _result(*hypotheses, withheld=False):
    return SimpleNamespace(hypotheses=tuple(hypotheses), withheld=withheld,
                           top=hypotheses[0] if hypotheses else None)

# a pump coupled to its motor and a fan behind a gear; a blower belt-driven by a motor of its own
MACHINE = SimpleNamespace(shaft_speeds_hz={"motor": 24.8, "pump": 24.8, "fan": 8.5, "drive": 49.0, "blower": 31.0},
                          couplings=(SimpleNamespace(id="coupling", shafts=("motor", "pump")),),
                          belts=(SimpleNamespace(id="vbelt", driving_shaft="drive", driven_shaft="blower"),))
PAIR = (("unbalance", "pump"), ("outer-race", "pump_nde"))

# ---------------------------------------------------------------- bench.confusion

def test_a_pair_is_right_when_both_are_named_and_nothing_else_is_called():
    result = _result(_h("outer-race", "pump_nde", 0.8), _h("unbalance", "pump", 0.6), _h("inner-race", "pump_de", 0.4))
    assert confusion.pair_verdict(result, MACHINE, PAIR) == ((True, True), (), True)

def test_a_pair_with_one_fault_below_half_is_not_right():
    result = _result(_h("outer-race", "pump_nde", 0.8), _h("unbalance", "pump", 0.49))
    assert confusion.pair_verdict(result, MACHINE, PAIR) == ((False, True), (), False)

def test_a_pair_with_a_third_call_is_not_right_and_lists_it():
    result = _result(_h("outer-race", "pump_nde", 0.8), _h("unbalance", "pump", 0.7), _h("outer-race", "pump_de", 0.5))
    named, wrong, right = confusion.pair_verdict(result, MACHINE, PAIR)
    assert (named, right) == ((True, True), False)
    assert wrong == ("outer-race on pump_de 0.50",)

def test_the_right_fault_on_the_wrong_component_does_not_name_the_truth():
    result = _result(_h("outer-race", "pump_de", 0.8), _h("unbalance", "fan", 0.7))
    named, wrong, right = confusion.pair_verdict(result, MACHINE, PAIR)
    assert named == (False, False) and not right
    assert len(wrong) == 2

def test_a_withheld_pair_names_nothing_and_calls_nothing():
    result = _result(_h("outer-race", "pump_nde", 0.8), _h("unbalance", "pump", 0.7), withheld=True)
    assert confusion.pair_verdict(result, MACHINE, PAIR) == ((False, False), (), False)

def test_misalignment_counts_on_the_coupling_of_its_shaft_and_either_kind():
    joint = (("misalignment-angular", "pump"),)
    assert confusion.wrong_calls(_result(_h("misalignment-parallel", "coupling", 0.7)), MACHINE, joint) == ()
    # misalignment is a fault of the coupling: a call on a shaft, the pump's own included, is wrong
    assert confusion.wrong_calls(_result(_h("misalignment-parallel", "pump", 0.7)), MACHINE, joint) \
        == ("misalignment-parallel on pump 0.70",)
    # without the machine only the very component counts
    assert confusion.wrong_calls(_result(_h("misalignment-parallel", "coupling", 0.7)), None, joint) \
        == ("misalignment-parallel on coupling 0.70",)

def test_misalignment_on_a_belt_drive_counts_as_the_sheaves_on_its_belt():
    joint = (("misalignment-angular", "blower"),)
    assert confusion.wrong_calls(_result(_h("sheave-misalignment", "vbelt", 0.7)), MACHINE, joint) == ()
    # no coupling joins the blower: a coupling misalignment on the belt is not the sheaves'
    assert confusion.wrong_calls(_result(_h("misalignment-angular", "vbelt", 0.7)), MACHINE, joint) \
        == ("misalignment-angular on vbelt 0.70",)

def test_every_call_on_a_single_fault_reading_that_is_not_the_truth_is_a_wrong_call():
    result = _result(_h("outer-race", "pump_nde", 0.85), _h("outer-race", "pump_de", 0.55),
                     _h("unbalance", "pump", 0.52), _h("inner-race", "pump_nde", 0.3))
    assert confusion.wrong_calls(result, MACHINE, (("outer-race", "pump_nde"),)) == \
        ("outer-race on pump_de 0.55", "unbalance on pump 0.52")
    # a healthy machine: every call is wrong
    assert len(confusion.wrong_calls(result, MACHINE, ())) == 3

def test_the_top_answer_verdict_is_unchanged():
    result = _result(_h("outer-race", "pump_nde", 0.85), _h("outer-race", "pump_de", 0.55))
    assert confusion.verdict(result, MACHINE, "outer-race", "pump_nde") == ("outer-race", True)
    assert confusion.verdict(result, MACHINE, "outer-race", "pump_de") == ("outer-race", False)
    assert confusion.verdict(_result(_h("outer-race", "pump_nde", 0.45)), MACHINE, "healthy", None) == ("none", True)
    assert confusion.verdict(result, MACHINE, "healthy", None) == ("outer-race", False)

# ---------------------------------------------------------------- bench.real_data

def _row(path, top, certainty, right=True, withheld=False, severity_unknown=None):
    return real_data.Row(path, "CWRU", "outer_race DE 0.007", "Y1", "clear", "withheld" if withheld else top,
                         certainty, right, withheld, 0.1, severity_unknown=severity_unknown)

def test_calls_compare_with_the_call_at_scale_one():
    base = _row("a.mat", "outer-race on drive_end", 0.8)
    assert real_data.compare_call(base, _row("a.mat", "outer-race on drive_end", 0.6)) == "same"
    assert real_data.compare_call(base, _row("a.mat", "outer-race on drive_end", 0.45)) == "lost"
    assert real_data.compare_call(base, _row("a.mat", "outer-race on drive_end", 0.8, withheld=True)) == "lost"
    assert real_data.compare_call(base, _row("a.mat", "inner-race on drive_end", 0.7, right=False)) == "changed"
    none = _row("a.mat", "outer-race on drive_end", 0.3)
    assert real_data.compare_call(none, _row("b.mat", "nothing", 0.0)) == "same"
    assert real_data.compare_call(none, _row("a.mat", "inner-race on fan_end", 0.6, right=False)) == "gained"

def test_the_scale_table_meets_its_goal_only_with_the_same_calls_and_no_new_wrong_one():
    base = [_row("a.mat", "outer-race on drive_end", 0.8), _row("b.mat", "inner-race on drive_end", 0.7, right=False)]
    same = [_row("a.mat", "outer-race on drive_end", 0.7), _row("b.mat", "inner-race on drive_end", 0.7, right=False)]
    lines = real_data.scale_table({1.0: base, 1000.0: same})
    assert lines[-1].endswith(": met")
    assert "x1000" in lines[-2] and "same 2, lost 0" in lines[-2] and "(0 not made at x1)" in lines[-2]
    changed = [_row("a.mat", "inner-race on drive_end", 0.6, right=False), same[1]]
    lines = real_data.scale_table({1.0: base, 1000.0: changed})
    assert lines[-1].endswith("not met")
    assert "changed 1" in lines[-2] and "confident wrong calls 2 (1 not made at x1)" in lines[-2]
    assert any("CHANGED to inner-race on drive_end 0.60 WRONG" in line for line in lines)
    lost = [_row("a.mat", "outer-race on drive_end", 0.8, withheld=True), same[1]]
    assert real_data.scale_table({1.0: base, 1000.0: lost})[-1].endswith("not met")

def test_the_severity_flag_is_read_from_the_verdict():
    assert real_data.severity_unknown_of({"verdict": {"severity_known": False}}) is True
    assert real_data.severity_unknown_of({"verdict": {"severity_known": True}}) is False

def test_scales_parse_with_scale_one_first():
    assert real_data.parse_scales("0.001,1000") == [1.0, 0.001, 1000.0]
    assert real_data.parse_scales("1000,1,1000") == [1.0, 1000.0]
    for bad in ("0", "-1", "a,b", "", "inf"):
        with pytest.raises(argparse.ArgumentTypeError):
            real_data.parse_scales(bad)
    assert real_data.positive("1000") == 1000.0 and real_data.positive("1") == 1.0
    for bad in ("1,1000", "0", "x"):
        with pytest.raises(argparse.ArgumentTypeError):
            real_data.positive(bad)

def test_a_scaled_reading_has_its_samples_multiplied_and_its_gates_run_again():
    x = np.random.default_rng(3).standard_normal(20000)     # about 1 m/s^2 RMS: plausible
    reading = Reading("r", 10000.0, (Channel("a", x, "acceleration", "g", "DE", "vertical"),))
    out = real_data.scaled(reading, 1e7)
    assert np.array_equal(out.channels[0].samples, 1e7 * x)
    assert (out.channels[0].point, out.fs_hz) == ("DE", 10000.0)
    # 1e7 m/s^2 RMS is past the physical range the gates allow (1e5 g, engine/readings/quality.py)
    assert not reading.quality and [q.kind for q in out.quality] == ["out_of_range"]

def test_injections_parse_and_state_a_wrong_speed_or_sample_rate():
    assert real_data.parse_injection("speed=0.8,1.2") == [("speed", 0.8), ("speed", 1.2)]
    assert real_data.parse_injection("rate=1,2") == [("rate", 2.0)]
    for bad in ("speed=1", "gain=2", "rate=0", "speed=a"):
        with pytest.raises(argparse.ArgumentTypeError):
            real_data.parse_injection(bad)
    x = np.random.default_rng(4).standard_normal(20000)
    reading = Reading("r", 10000.0, (Channel("a", x, "acceleration", "g", "DE", "vertical"),), speed_rpm=1800.0)
    fast = real_data.injected(reading, "speed", 1.2)
    assert fast.speed_rpm == pytest.approx(2160.0) and fast.fs_hz == 10000.0
    rate = real_data.injected(reading, "rate", 2.0)
    assert (rate.fs_hz, rate.speed_rpm) == (20000.0, 1800.0) and np.array_equal(rate.channels[0].samples, x)

def test_the_injection_table_meets_its_goal_only_without_a_confident_wrong_call():
    rows = [_row("a.mat", "withheld", 0.0, withheld=True), _row("b.mat", "outer-race on drive_end", 0.8)]
    lines = real_data.inject_table({("speed", 1.2): rows})
    assert lines[-1].endswith(": met") and lines[1].split()[:6] == ["speedx1.2", "2", "1", "1", "0", "0"]
    wrong = rows + [_row("c.mat", "inner-race on fan_end", 0.7, right=False)]
    lines = real_data.inject_table({("rate", 1.1): wrong})
    assert lines[-1].endswith("not met") and "c (inner-race on fan_end 0.70)" in lines[1]

def test_the_learning_bench_takes_each_label_as_what_a_repair_would_find():
    from bench.learning import finding_of
    from engine.reasoning.learning import NOTHING_FOUND, Finding

    assert finding_of({"dataset": "CWRU", "fault": "ball", "fault_bearing": "DE"}) == Finding("drive_end",
                                                                                              "rolling-element")
    assert finding_of({"dataset": "HIT-SM", "fault": "normal", "fault_bearing": ""}) == Finding("test_bearing",
                                                                                                NOTHING_FOUND)

# ---------------------------------------------------------------- bench.learning, the simulated sets

def test_the_simulated_set_has_every_fault_the_demo_machines_can_carry_on_every_component():
    from bench.learning import _machines, sim_cases
    from engine.simulation import FAULTS

    machines = _machines((1.0,))
    cases = sim_cases(1, (2, 3), (1.0,), machines)
    made = {(c.machine, c.fault, c.component) for c in cases}
    assert {f for _, f, _ in made} == set(FAULTS)          # every fault of the one table, healthy too
    # each bearing of the pump takes each bearing fault; each gear mesh of the fan's drive each gear fault
    for bearing in ("motor_nde", "motor_de", "pump_de", "pump_nde"):
        assert {f for m, f, c in made if m == "rw2" and c == bearing} == {
            "outer-race", "inner-race", "rolling-element", "cage", "looseness-structural"}
    assert {f for m, f, c in made if m == "ct1" and c == "bevel_stage"} == {
        "gear-eccentricity", "gear-tooth", "gear-wear"}
    assert ("bw1", "belt", "vbelt") in made and not any(m == "rw2" and f.startswith("gear") for m, f, _ in made)
    faulty = [c for c in cases if c.fault != "healthy"]
    assert {c.stage for c in faulty} == {2, 3} and {c.stage for c in cases if c.fault == "healthy"} == {1}
    # as many healthy readings per machine as one fault on one component gets
    assert sum(c.fault == "healthy" and c.machine == "rw2" for c in cases) == 2

def test_the_two_simulated_sets_differ_only_in_their_seeds_and_every_reading_has_its_own():
    from bench.learning import _machines, sim_cases

    machines = _machines((0.85, 1.0))
    a, b = sim_cases(1, (2,), (0.85, 1.0), machines), sim_cases(2, (2,), (0.85, 1.0), machines)
    assert [(c.machine, c.fault, c.component, c.stage, c.speed) for c in a] == \
        [(c.machine, c.fault, c.component, c.stage, c.speed) for c in b]
    seeds = [c.seed for c in a + b]
    assert len(set(seeds)) == len(seeds)
    assert a == sim_cases(1, (2,), (0.85, 1.0), machines)          # the same options, the same set
    assert {c.speed for c in a} == {0.85, 1.0}

def test_a_simulated_reading_is_judged_as_a_repair_would_find_it():
    from bench.learning import SimCase, _machines, sim_findings
    from engine.reasoning.learning import NOTHING_FOUND, Finding

    machines = _machines((1.0,))
    rw2, bw1 = machines["rw2"], machines["bw1"]
    assert sim_findings(rw2, SimCase("rw2", "outer-race", "pump_nde", 2, 1.0, 0)) == (Finding("pump_nde",
                                                                                              "outer-race"),)
    # the RW-2 pump is coupled to its motor: a misalignment is found at the coupling (machine file)
    assert sim_findings(rw2, SimCase("rw2", "misalignment-parallel", "pump", 2, 1.0, 0)) == (
        Finding("coupling", "misalignment-parallel"),)
    # the blower is belt-driven, no coupling: its drive's misalignment is the sheaves', on the belt
    assert sim_findings(bw1, SimCase("bw1", "misalignment-angular", "blower", 2, 1.0, 0)) == (
        Finding("vbelt", "sheave-misalignment"),)
    assert [f.fault for f in sim_findings(rw2, SimCase("rw2", "healthy", None, 1, 1.0, 0))] == [NOTHING_FOUND]

def test_the_learning_bench_never_learns_from_the_set_it_measures():
    from bench.learning import orderings

    plan = orderings(["CWRU", "MFPT", "HIT-SM", "sim-A", "sim-B"])
    assert plan == [("CWRU", ["MFPT", "HIT-SM", "sim-B"]), ("MFPT", ["CWRU", "HIT-SM", "sim-B"]),
                    ("HIT-SM", ["CWRU", "MFPT", "sim-B"]), ("sim-A", ["sim-B", "CWRU", "MFPT", "HIT-SM"])]
    assert all(source not in targets and "sim-A" not in targets for source, targets in plan)
    assert orderings(["sim-A", "sim-B"]) == [("sim-A", ["sim-B"])]
    assert orderings(["CWRU", "MFPT", "HIT-SM"])[0] == ("CWRU", ["MFPT", "HIT-SM"])

def test_a_simulated_reading_is_reasoned_over_again_with_the_same_facts():
    """A learned overlay changes rule weights only, so the bench reasons over the facts it kept: they
    give the same reasoning as the whole pipeline on the same simulated reading."""
    from bench.learning import Labelled, SimCase, _machines, judged, sim_facts, sim_findings
    from engine.pipeline import diagnose
    from engine.reasoning import Reasoner, load_rulebook
    from engine.reasoning.learning import firings_of
    from engine.simulation import as_reading, simulate

    rw2 = _machines((1.0,))["rw2"]
    case = SimCase("rw2", "inner-race", "pump_de", 3, 1.0, 7)
    reasoner = Reasoner(load_rulebook())
    kept = judged(reasoner, [Labelled(case.name, sim_facts(case, rw2, 12800.0, 1.0), sim_findings(rw2, case))])[0]
    nominal = rw2.shaft_speeds_hz[rw2.driver_shaft] * 60
    whole = diagnose(as_reading(simulate(rw2, "inner-race", "pump_de", 3, nominal, 12800.0, 1.0, 7)), rw2, reasoner)
    assert kept.firings == firings_of(whole.reasoning) and kept.firings

def test_a_wrong_call_is_a_top_hypothesis_at_half_or_more_no_finding_confirms():
    from bench.learning import wrong_calls
    from engine.reasoning.learning import NOTHING_FOUND, Finding, JudgedDiagnosis, RuleFiring

    def judged(name, top, certainty, *found):
        firing = RuleFiring("r", top[0], top[1], 0.4, certainty)
        return JudgedDiagnosis(name, (firing,), tuple(Finding(c, f) for f, c in found))

    diagnoses = [judged("right", ("outer-race", "pump_de"), 0.8, ("outer-race", "pump_de")),
                 judged("other bearing", ("outer-race", "pump_de"), 0.8, ("outer-race", "pump_nde")),
                 judged("healthy", ("unbalance", "pump"), 0.5, (NOTHING_FOUND, "pump")),
                 judged("below half", ("unbalance", "pump"), 0.49, (NOTHING_FOUND, "pump")),
                 judged("not judged", ("unbalance", "pump"), 0.9)]
    assert wrong_calls(diagnoses) == {"other bearing": "outer-race on pump_de 0.80",
                                      "healthy": "unbalance on pump 0.50"}

# ---------------------------------------------------------------- bench.femto_compare

def _library(rng):
    """Three runs whose degradation ratio rises exponentially from an onset to the end of the run."""
    from bench.femto_compare import Trajectory

    out = []
    for run, (onset, rate, life) in {"a": (1.0, 2.0, 3.0), "b": (0.5, 1.0, 4.0), "c": (2.0, 4.0, 3.0)}.items():
        t = np.arange(0.0, life + 1e-9, 100 / 3600)
        ratio = np.where(t < onset, 0.0, np.expm1(rate * (t - onset)))
        out.append(Trajectory(run, t, ratio + rng.normal(0.0, 0.01, len(t)), onset, life))
    return out

def test_similarity_finds_the_remaining_life_of_the_run_a_segment_was_cut_from(rng):
    # a segment of run "b" from its onset to 2.5 h: run "b" matches best (derived: its remaining life
    # there is 4.0 - 2.5 = 1.5 h, within one 100 s shift), and weighs most
    from bench.femto_compare import similarity_lives

    lib = _library(rng)
    b = lib[1]
    keep = (b.t_h >= b.onset_h) & (b.t_h <= 2.5 + 1e-9)
    t, y = b.t_h[keep] - b.onset_h, b.ratio[keep]
    lives, weights = similarity_lives(t, y, lib, 0.2, np.inf, (1.0,))
    assert int(np.argmax(weights)) == 1
    assert lives[1] == pytest.approx(1.5, abs=100 / 3600 + 1e-9)
    # the same segment on a clock running twice as slow matches "b" only with a dilation of 2, and
    # its remaining life is then on the segment's own clock: 2 x 1.5 h (derived)
    lives2, weights2 = similarity_lives(2 * t, y, lib, 0.2, np.inf, (0.5, 1.0, 2.0))
    assert int(np.argmax(weights2)) == 1 and lives2[1] == pytest.approx(3.0, abs=2 * 100 / 3600 + 1e-9)
    _, undilated = similarity_lives(2 * t, y, lib, 0.2, np.inf, (1.0,))
    assert undilated[1] < weights2[1]

def test_the_remaining_fraction_keeps_the_durations_longer_than_the_time_already_lasted(rng):
    from bench.femto_compare import remaining_fraction_lives

    lib = _library(rng)          # onset-to-end durations 2.0, 3.5 and 1.0 h
    lives, weights = remaining_fraction_lives(1.5, lib)
    assert sorted(lives) == pytest.approx([0.5, 2.0]) and weights.sum() == 2
    assert remaining_fraction_lives(5.0, lib)[0].tolist() == [0.0]

def test_the_weighted_act_by_agrees_with_the_models_act_by_on_equal_weights(rng):
    # the comparison's act-by on a weighted sample is degradation.act_by's rule; with equal weights
    # the two choose within one percentile of each other (same candidates, same expected score)
    from bench.femto_compare import act_by_weighted, weighted_quantile
    from engine.trend.degradation import Life, act_by

    x = np.sort(rng.lognormal(np.log(10.0), 0.5, 4000))
    w = np.ones_like(x)
    assert act_by_weighted(x, w) == pytest.approx(act_by(Life(None, None, None, None, tuple(x))), rel=0.02)
    assert weighted_quantile(x, w, 0.5) == pytest.approx(np.median(x), rel=0.01)
    # a weight moves the answer: all weight on the late half makes the act-by later
    late = np.where(x > np.median(x), 1.0, 1e-9)
    assert act_by_weighted(x, late) > act_by_weighted(x, w)

# ---------------------------------------------------------------- bench.femto_compare: proportional hazards

def _weibull_ph_runs(rng, n, beta, eta, gamma):
    """Runs of a Weibull proportional-hazards model with a constant condition each (z 0, 0.5 or 1):
    failure times drawn by inverting the survival exp(-exp(gamma z) (T / eta)^beta), readings on a
    grid that ends at the failure."""
    runs = []
    for _ in range(n):
        z = float(rng.choice([0.0, 0.5, 1.0]))
        life = eta * (-np.log(rng.uniform()) / np.exp(gamma * z)) ** (1 / beta)
        s = np.linspace(0.0, life, 12)
        runs.append((s, np.full(s.size, z)))
    return runs

def test_the_hazard_fit_finds_the_parameters_its_runs_were_drawn_with(rng):
    # 400 runs drawn from beta 2, eta 5 h, gamma 1.2: maximum likelihood lands within a few standard
    # errors (derived: for 400 failures the standard error of beta is about beta / sqrt(400) x 0.78,
    # 0.08; of gamma about 0.1)
    from engine.trend.pool import fit_hazard

    fit = fit_hazard(_weibull_ph_runs(rng, 400, 2.0, 5.0, 1.2), 0.0)
    assert fit.beta == pytest.approx(2.0, abs=0.25)
    assert fit.eta_h == pytest.approx(5.0, rel=0.12)
    assert fit.gamma == pytest.approx(1.2, abs=0.3)
    # a strong ridge holds gamma at 0 whatever the runs say
    assert abs(fit_hazard(_weibull_ph_runs(rng, 100, 2.0, 5.0, 1.2), 1e6).gamma) < 1e-3

def test_the_conditional_remaining_life_is_the_weibulls():
    # beta 1 and gamma 0 is the exponential law, memoryless: the median remaining life is eta ln 2 at
    # any age (derived). beta 2: S(u | s0) = exp(-((s0 + u)^2 - s0^2) / eta^2), so the median solves
    # (s0 + u)^2 = s0^2 + eta^2 ln 2 (derived)
    from engine.trend.pool import HazardFit, hazard_lives

    for s0 in (0.0, 3.0, 30.0):
        assert np.median(hazard_lives(HazardFit(1.0, 4.0, 0.0), s0, 0.0, 0.0)) == pytest.approx(4 * np.log(2), rel=0.01)
    median = np.median(hazard_lives(HazardFit(2.0, 4.0, 0.0), 3.0, 0.0, 0.0))
    assert median == pytest.approx(np.sqrt(9 + 16 * np.log(2)) - 3, rel=0.01)
    # a worse condition shortens the life by the factor exp(gamma z) of the cumulative hazard
    worse = np.median(hazard_lives(HazardFit(1.0, 4.0, 2.0), 0.0, 0.5, 0.0))
    assert worse == pytest.approx(4 * np.log(2) / np.e, rel=0.01)

def test_a_condition_going_on_at_its_slope_integrates_to_the_held_one_at_a_tiny_slope_and_shortens_life():
    # the numerical integration of the hazard (trend) against the closed form (hold), derived from
    # the same cumulative hazard; scipy's quad as reference for one quantile with a real slope
    from scipy.integrate import quad
    from scipy.optimize import brentq

    from engine.trend.pool import HazardFit, hazard_lives

    fit = HazardFit(2.0, 4.0, 1.5)
    held = hazard_lives(fit, 2.0, 0.4, 0.0)
    nearly = hazard_lives(fit, 2.0, 0.4, 1e-9)
    assert np.median(nearly) == pytest.approx(np.median(held), rel=0.01)
    rising = hazard_lives(fit, 2.0, 0.4, 0.5)
    assert np.median(rising) < np.median(held)

    def cum(u):
        return quad(lambda x: (2 / 4) * ((2 + x) / 4) * np.exp(1.5 * (0.4 + 0.5 * x)), 0, u)[0]

    assert np.median(rising) == pytest.approx(brentq(lambda u: cum(u) - np.log(2), 0, 50), rel=0.01)

def _histories(runs):
    """FEMTO-like histories: two points, acceleration RMS and peak flat for ``onset`` hours (reading
    to reading 5 % up and down), then rising exponentially to the run's end; readings 100 s apart."""
    out = {}
    for name, (onset, life, rate) in runs.items():
        t = np.arange(0.0, life * 3600 + 1e-6, 100.0)
        out[name] = {}
        for pt in ("H", "V"):
            rms = 0.4 * np.exp(np.where(t / 3600 > onset, rate * (t / 3600 - onset), 0.0)) \
                * np.exp(0.05 * (-1.0) ** np.arange(t.size))
            out[name][pt] = {"accel_rms_g": (t.tolist(), rms.tolist()),
                             "accel_peak_g": (t.tolist(), (4 * rms).tolist())}
    return out

def test_the_hazard_bench_answers_only_after_the_first_predicting_time_and_scores_each_cut():
    from bench.femto import CUTS
    from bench.femto_compare import Cut, condition_of, score_hazard_run
    from engine.trend.pool import HazardSetting

    h = _histories({"a": (1.0, 3.0, 1.5), "b": (2.0, 4.0, 1.2), "c": (1.5, 3.5, 1.4), "d": (2.3, 4.0, 2.0)})
    lives = {r: max(max(p["accel_rms_g"][0]) for p in h[r].values()) / 3600 for r in h}
    c = condition_of(h["d"])
    assert c.onset_h == pytest.approx(2.3, abs=0.1) and np.all(c.z >= 0)
    # the condition of a cut is found on the readings up to it: at 2 h run "d" has not left its band
    assert condition_of(h["d"], 2.0 * 3600).onset_h is None
    settings = [HazardSetting(clock, "highest", "hold", 10.0, points) for clock in ("run", "onset")
                for points in ("bearing", "each")]
    got = score_hazard_run(h, "d", ["a", "b", "c"], settings, lives)
    for s in settings:
        # cuts at 2.0, 2.4, 2.8, 3.2, 3.6 and 3.8 h: degradation declared 8 readings (0.22 h) after 2.3 h
        early = [cut * lives["d"] < 2.3 + 8 * 100 / 3600 for cut in CUTS]
        assert early == [True, True, False, False, False, False]
        assert [x is None for x in got[s]] == early
        assert all(isinstance(x, Cut) and 0 <= x.a <= 1 for x, e in zip(got[s], early) if not e)

def test_a_bearing_is_judged_by_the_worse_of_its_points_and_from_the_earlier_onset():
    from bench.femto_compare import _units, condition_of

    h = _histories({"a": (1.0, 3.0, 1.5)})
    late = _histories({"a": (2.0, 3.0, 1.5)})
    h["a"]["V"] = late["a"]["V"]            # the vertical point degrades an hour later
    bearing, (hor, ver) = condition_of(h["a"]), _units(h["a"], "each")
    assert bearing.onset_h == pytest.approx(hor.onset_h) and ver.onset_h > hor.onset_h + 0.8
    assert np.all(bearing.z >= hor.z) and np.all(bearing.z >= ver.z)
    assert np.allclose(bearing.z, np.maximum(hor.z, ver.z))

# ------------------------------------------- bench.femto_compare: a learned failure level; GP regression

def test_thresholds_stay_above_the_level_passed_and_follow_the_ended_runs():
    # ends of mean 2 and sd 0.5 (derived: 1.5, 2, 2.5): untruncated, the draws have their mean and sd
    from scipy.stats import norm

    from bench.femto_compare import threshold_draws

    ends = np.array([1.5, 2.0, 2.5])
    free = threshold_draws(ends, -10.0, 20000)
    assert free.mean() == pytest.approx(2.0, abs=0.02) and free.std() == pytest.approx(0.5, abs=0.02)
    # a run that has passed 2.5 without ending: every threshold lies above it, and their mean is that of
    # a normal truncated one sd above its mean, mu + sd pdf(1) / (1 - cdf(1)) (the inverse Mills ratio,
    # handbook formula: Johnson, Kotz & Balakrishnan, "Continuous univariate distributions" 1, ch. 13)
    held = threshold_draws(ends, 2.5, 20000)
    assert held.min() > 2.5
    assert held.mean() == pytest.approx(2.0 + 0.5 * norm.pdf(1.0) / norm.sf(1.0), abs=0.01)

def _histories_of(series):
    """A histories dict (run -> point -> indicator -> (seconds, values)) of accel_rms_g series."""
    return {run: {pt: {"accel_rms_g": (list(np.arange(len(v)) * 100.0), list(v))} for pt, v in pts.items()}
            for run, pts in series.items()}

def _rising(rng, n=80, onset=40, rate=0.08, end=1.0):
    """A healthy level ``end`` g, then an exponential rise from reading ``onset``."""
    k = np.arange(n)
    return end * (1.0 + np.where(k < onset, 0.0, np.expm1(rate * (k - onset)))) * rng.lognormal(0, 0.03, n)

def test_a_runs_end_level_is_the_higher_of_its_two_points(rng):
    from bench.femto_compare import end_levels

    h = _histories_of({"a": {"H": _rising(rng), "V": _rising(rng, rate=0.05)},
                       "b": {"H": _rising(rng, rate=0.04), "V": _rising(rng, rate=0.06)}})
    per_point = end_levels(h, ["a", "b"], "accel_rms_g", "point", False)
    per_run = end_levels(h, ["a", "b"], "accel_rms_g", "run", False)
    assert per_run.tolist() == [max(per_point[:2]), max(per_point[2:])]
    # the last reading over the healthy level in log units: about 0.08 x 39 for run a's H (derived)
    assert per_point[0] == pytest.approx(np.log(1 + np.expm1(0.08 * 39)), abs=0.15)

def test_the_exponential_model_to_one_fixed_level_is_the_models_own_projection(rng):
    # every draw's threshold at the limit's own level: the same draws as exponential_life gives (derived)
    from bench.femto_compare import exponential_to_levels
    from engine.trend.degradation import Prior
    from engine.trend.health import shipped_settings, smooth_log
    from engine.trend.pool import healthy_level
    from engine.trend.projection import exponential_life

    v = _rising(rng)[:70]
    days = np.arange(len(v)) * 100.0 / 86400.0
    hi = smooth_log(v, shipped_settings().smooth_readings)
    prior = Prior((-1.0, 60.0), ((1.0, 0.0), (0.0, 400.0)), 0.01, 0.3, 5, "test prior", 100.0 / 86400.0)
    _, life = exponential_life(days, v, 20.0, "20 g", hi, "x", {"x": prior})
    assert life is not None
    phi = healthy_level(v, hi)[0]
    mine = exponential_to_levels(days, v, hi, prior, np.full(2000, np.log(20.0 / phi)))
    assert mine is not None
    # the same draws, one for one (the crossing times are interpolated between steps, so compare the
    # draws themselves, not a median taken two ways)
    np.testing.assert_allclose(np.sort(mine), np.array(life.draws) * 24.0, rtol=1e-9)
    # a higher threshold is reached later
    later = exponential_to_levels(days, v, hi, prior, np.full(2000, np.log(40.0 / phi)))
    assert later is not None and np.median(later) > np.median(mine)

def test_the_gp_likelihood_is_the_normal_density_of_its_covariance(rng):
    # scipy as reference: minus the log marginal likelihood is minus the log density of N(0, K + noise)
    from scipy.stats import multivariate_normal

    from engine.trend.pool import _gp_cov, gp_neg_log_likelihood

    x = np.linspace(0.0, 1.0, 25)
    y = 2.0 * x + rng.normal(0.0, 0.1, 25)
    p = np.log([0.3, 0.4, 0.1])
    expected = -multivariate_normal(np.zeros(25), _gp_cov(x, p, 3.0)).logpdf(y)
    assert gp_neg_log_likelihood(p, x, y, 3.0) == pytest.approx(expected, rel=1e-9)

def test_the_gp_carries_a_straight_rise_forward_and_crosses_where_the_line_does(rng):
    # readings on y = 2x (x in times the time since the onset): the linear basis carries the line, so at
    # x = 2 the paths centre on 4 (derived), and a threshold of 3 is crossed near x = 1.5
    from bench.femto_compare import first_crossing, gp_paths
    from engine.trend.pool import gp_fit

    x = np.linspace(0.0, 1.0, 40)
    y = 2.0 * x + rng.normal(0.0, 0.02, 40)
    p = gp_fit(x, y, 5.0)
    future = 1.0 + np.linspace(0.01, 1.0, 100)
    paths = gp_paths(x, y, p, 5.0, future, 500)
    assert np.median(paths[:, -1]) == pytest.approx(4.0, abs=0.15)
    lives = first_crossing(future - 1.0, paths, np.full(500, 3.0))
    assert np.median(lives) == pytest.approx(0.5, abs=0.05)
    # a threshold no path reaches: never
    assert first_crossing(future - 1.0, paths, np.full(500, 100.0)).min() >= 1e6

def test_the_library_growth_is_the_slope_of_each_points_log_ratio_since_its_onset(rng):
    # a level that grows as exp(0.08 per reading) from reading 40, readings 100 s apart: the log ratio
    # rises 0.08 x 36 = 2.88 per hour (derived), at every point
    from bench.femto_compare import library_slopes

    def grown(rate):
        k = np.arange(80)
        return np.exp(np.where(k < 40, 0.0, rate * (k - 40))) * rng.lognormal(0, 0.01, 80)

    h = _histories_of({"a": {"H": grown(0.08), "V": grown(0.04)}})
    assert library_slopes(h, ["a"], "accel_rms_g") == pytest.approx([2.88, 1.44], rel=0.05)

# ------------------------------------- bench.femto_compare: the GP's quasi-random draws and recalibration

def test_quasi_random_paths_have_the_predictives_quantiles_under_every_seed():
    # a Gaussian of known mean and covariance (two components, derived): each coordinate's 10th, 50th and
    # 90th percentiles of the paths are the normal's own (scipy as reference), under each seed, to within
    # 0.02 sd (plain random draws of the same number: an sd of 0.02-0.027 sd, sqrt(q(1-q)) / pdf / 64)
    from scipy.stats import norm

    from bench.femto_compare import GP_SEEDS
    from engine.trend.pool import GP_MAX_MODES, principal_parts, rqmc_paths, rqmc_uniforms

    t = np.linspace(0.0, 1.0, 30)
    mean = 2.0 * t
    cov = 0.25 * np.outer(t, t) + 0.04 * np.exp(-0.5 * (t[:, None] - t[None, :]) ** 2 / 0.3 ** 2)
    m, parts = principal_parts(mean, cov)
    assert parts.shape[1] <= GP_MAX_MODES
    sd = np.sqrt(np.diag(cov))
    for seed in GP_SEEDS:
        paths = rqmc_paths(m, parts, rqmc_uniforms(GP_MAX_MODES + 2, seed))
        for q in (0.1, 0.5, 0.9):
            got = np.quantile(paths[:, -1], q)
            assert got == pytest.approx(mean[-1] + norm.ppf(q) * sd[-1], abs=0.02 * sd[-1])
        np.testing.assert_allclose(np.cov(paths.T), cov, atol=0.01)

def test_threshold_quantiles_are_the_truncated_normals_inverse():
    # scipy as reference: far below the ends the truncation does nothing, so level u is the normal's
    # quantile; passed above 2.5 every threshold is above it, and the median is that of the truncated normal
    from scipy.stats import norm, truncnorm

    from engine.trend.pool import threshold_quantiles

    ends = np.array([1.5, 2.0, 2.5])          # mean 2, sd 0.5 (derived)
    u = np.array([0.1, 0.5, 0.9])
    np.testing.assert_allclose(threshold_quantiles(ends, -10.0, u), 2.0 + 0.5 * norm.ppf(u), rtol=1e-9)
    held = threshold_quantiles(ends, 2.5, u)
    assert held.min() > 2.5 and held[1] == pytest.approx(truncnorm(1.0, np.inf, loc=2.0, scale=0.5).median())

def test_recalibration_maps_the_levels_to_where_the_librarys_actual_lives_fell():
    # lives evenly over 0-100 h; the library's actual lives all fell in the middle half of their
    # predictives (PIT values evenly over 0.25-0.75): the recalibrated 10th and 90th percentiles are the
    # old 30th and 70th (derived: the 0.1 quantile of a uniform on 0.25-0.75 is 0.3); PIT values evenly
    # over 0-1 (calibrated already) leave the lives as they were
    from bench.femto_compare import GpRaw, judge, pit
    from engine.trend.pool import recalibrated

    lives = np.linspace(0.0, 100.0, 4001)
    narrow = recalibrated(lives, np.linspace(0.25, 0.75, 501))
    assert np.quantile(narrow, 0.1) == pytest.approx(30.0, abs=0.2)
    assert np.quantile(narrow, 0.9) == pytest.approx(70.0, abs=0.2)
    same = recalibrated(lives, np.linspace(0.0, 1.0, 1001))
    assert np.quantile(same, 0.1) == pytest.approx(10.0, abs=0.2) and np.median(same) == pytest.approx(50.0, abs=0.2)
    # the actual life at the predictive's 95th percentile: PIT 0.95; outside the 80 % interval, inside
    # once the interval is widened by a library whose actual lives fell at 0 or 1 half the time
    raw = GpRaw(95.0, lives)
    assert pit(raw) == pytest.approx(0.95, abs=1e-3)
    plain = judge(raw)
    assert plain is not None and not plain.covered
    wide = judge(raw, np.r_[np.zeros(50), np.linspace(0.0, 1.0, 100), np.ones(50)])
    assert wide is not None and wide.covered

def test_the_interpolated_crossing_falls_where_the_straight_path_meets_the_threshold():
    # a path rising as y = t on a grid 1 h apart crosses 2.5 at 2.5 h (derived), not at the 3 h grid time
    # first_crossing gives; one already past at the first grid time crosses there; one never: NO_CROSSING_H
    from bench.femto_compare import first_crossing
    from engine.trend.pool import NO_CROSSING_H, crossing_interpolated

    future = np.arange(1.0, 11.0)
    paths = np.vstack([future, future + 5.0, np.zeros(10)])
    thresholds = np.array([2.5, 3.0, 1.0])
    np.testing.assert_allclose(crossing_interpolated(future, paths, thresholds), [2.5, 1.0, NO_CROSSING_H])
    assert first_crossing(future, paths, thresholds)[0] == 3.0

def test_the_fine_act_by_time_is_the_best_expected_score_of_a_lognormal():
    # scipy as reference: the expected challenge score over a lognormal (median 10 h, sigma 0.3) at each
    # estimate, integrated by quadrature; its maximum and the sample's act-by time agree within 1 %
    from scipy import integrate, optimize
    from scipy.stats import lognorm

    from bench.femto_compare import act_by_fine
    from engine.trend.degradation import challenge_score

    dist = lognorm(0.3, scale=10.0)

    def expected(c: float) -> float:
        return integrate.quad(lambda x: float(challenge_score(100 * (x - c) / x)) * dist.pdf(x), 0.0, 60.0,
                              points=[c], limit=200)[0]

    best = optimize.minimize_scalar(lambda c: -expected(c), bounds=(3.0, 15.0), method="bounded").x
    lives = dist.ppf((np.arange(16384) + 0.5) / 16384)
    assert act_by_fine(lives) == pytest.approx(best, rel=0.01)

# ------------------------------------- bench.femto_compare: the linear opinion pool's nested weights
# (the pool itself is engine/trend/pool.py: tests/trend/test_pool.py)

def test_the_nested_weights_are_the_best_on_the_grid_and_the_nearest_equal_among_ties():
    # method 1 certain and right (10 h), method 2 certain and half of it (5 h). Acting at 10 h expects
    # w1 + w2 2^-20 (late by 100 %), at 5 h w1 2^-2.5 + w2 (early by 50 %): the pool acts at 10 h, and
    # scores 1, when w1 > 1 / (2 - 2^-2.5) = 0.549 (derived from the challenge score), so the grid's best
    # weights are every w1 from 0.6 up, and the nearest equal of them is (0.6, 0.4); on a grid of 0.05, (0.55, 0.45)
    from bench.femto_compare import choose_weights, pool_cut, pool_judge, simplex

    assert len(simplex(3, 0.1)) == 66 and all(sum(w) == pytest.approx(1.0) for w in simplex(3, 0.1))
    cuts = [pool_cut("x", 10.0, 0.0, [np.full(50, 10.0), np.full(50, 5.0)])]
    assert choose_weights(cuts, 2) == pytest.approx((0.6, 0.4))
    assert choose_weights(cuts, 2, 0.05) == pytest.approx((0.55, 0.45))
    judged = pool_judge(cuts[0], (0.5, 0.5))
    assert judged is not None and judged[0].a == pytest.approx(2 ** -2.5)
    # two methods that agree: every weighting scores alike, and the choice is equal weights
    same = [pool_cut("x", 10.0, 0.0, [np.linspace(8.0, 12.0, 100), np.linspace(8.0, 12.0, 100)])]
    assert choose_weights(same, 2) == pytest.approx((0.5, 0.5))

def test_bench_femto_health_choice_is_onset_yaml_s_unless_another_is_named():
    from bench import femto

    h = {"accel_rms_g": ([0.0], [1.0]), "band[8000-10000 Hz]_g": ([0.0], [2.0]), "ring_band_g": ([0.0], [3.0])}
    assert femto.health_source(h) == "accel_rms_g"      # rulebooks/trend/onset.yaml's first preference
    saved = list(femto.HEALTH_SOURCE)
    try:
        femto.HEALTH_SOURCE[:] = ["band[2000-4000 Hz]_g", "band[8000-10000 Hz]_g"]
        assert femto.health_source(h) == "band[8000-10000 Hz]_g"     # the first named that the point has
        femto.HEALTH_SOURCE[:] = ["band[2000-4000 Hz]_g"]
        assert femto.health_source(h) == "accel_rms_g"
    finally:
        femto.HEALTH_SOURCE[:] = saved

# ---------------------------------------------------------------- bench.real_data, truthful acquisition variations

def _record(tmp_path, seconds=2.0, fs=12000.0):
    """A two-channel record (m/s^2, as the reading layer holds it) with a source in ``tmp_path``."""
    rng = np.random.default_rng(7)
    n = int(seconds * fs)
    t = np.arange(n) / fs
    de = 9.80665 * (0.2 * np.sin(2 * np.pi * 29.95 * t) + 0.05 * rng.standard_normal(n))
    fe = 9.80665 * (0.1 * np.sin(2 * np.pi * 59.9 * t) + 0.05 * rng.standard_normal(n))
    return Reading(str(tmp_path / "rec.mat"), fs, (Channel("X1_DE_time", de, "acceleration", "g", "DE", "vertical"),
                                                   Channel("X1_FE_time", fe, "acceleration", "g", "FE", "vertical")),
                   speed_rpm=1797.0)

def test_a_decimated_record_is_scipys_decimate_at_the_rate_divided(tmp_path):
    from scipy.signal import decimate
    reading = _record(tmp_path)
    out = real_data.acquired(reading, "decimate", 4, tmp_path)
    assert out.fs_hz == 3000.0 and out.speed_rpm == 1797.0 and out.source.endswith(".npz")
    assert [(c.name, c.point, c.direction, c.unit) for c in out.channels] == \
        [("X1_DE_time", "DE", "vertical", "g"), ("X1_FE_time", "FE", "vertical", "g")]
    for before, after in zip(reading.channels, out.channels):
        # scipy as reference: its default order-8 Chebyshev type I filter, run forward and back
        np.testing.assert_allclose(after.samples, decimate(before.samples, 4, zero_phase=True), rtol=1e-12, atol=1e-12)
    assert out.n_samples == reading.n_samples // 4
    # the same loading gates ran on it: nothing to report on a plain sine in noise
    assert out.quality == ()

def test_a_shortened_record_is_the_first_seconds_and_a_short_one_is_left_out(tmp_path):
    reading = _record(tmp_path, seconds=2.0)
    out = real_data.acquired(reading, "length", 0.5, tmp_path)
    assert (out.fs_hz, out.n_samples, out.speed_rpm) == (12000.0, 6000, 1797.0)
    np.testing.assert_allclose(out.channels[0].samples, reading.channels[0].samples[:6000], rtol=1e-12)
    assert real_data.acquired(reading, "length", 2.0, tmp_path) is None      # nothing would change
    assert real_data.acquired(reading, "length", 5.0, tmp_path) is None

def test_a_record_in_metres_per_second_squared_is_the_g_values_times_standard_gravity(tmp_path):
    reading = _record(tmp_path)
    out = real_data.acquired(reading, "unit", "m/s^2", tmp_path)
    stored = np.load(out.source)["X1_DE_time"]
    in_g = np.load(real_data.acquired(reading, "length", 1.0, tmp_path).source)["X1_DE_time"]
    # g_n = 9.80665 m/s^2 (CGPM 1901): the file holds the g values times it, and says so
    np.testing.assert_allclose(stored[:12000], in_g * 9.80665, rtol=1e-12)
    assert [c.unit for c in out.channels] == ["m/s^2", "m/s^2"]
    np.testing.assert_allclose(out.channels[0].samples, reading.channels[0].samples, rtol=1e-12)

def test_acquisition_variations_parse_and_name_themselves():
    assert real_data.parse_injection("decimate=2,4") == [("decimate", 2), ("decimate", 4)]
    assert real_data.parse_injection("length=1,2,0.5") == [("length", 1.0), ("length", 2.0), ("length", 0.5)]
    assert real_data.parse_injection("unit=m/s2,ms-2") == [("unit", "m/s^2")]
    for bad in ("decimate=1.5", "decimate=1", "length=0", "length=-2", "unit=mm/s", "unit=furlongs", "unit=",
                "gain=2"):
        with pytest.raises(argparse.ArgumentTypeError):
            real_data.parse_injection(bad)
    assert [real_data.injection_name(*i) for i in (("speed", 1.2), ("rate", 0.5), ("decimate", 4), ("length", 2.0),
                                                   ("unit", "m/s^2"))] == \
        ["speedx1.2", "ratex0.5", "decimate/4", "length 2s", "unit m/s^2"]

def test_a_refused_record_counts_as_withheld_and_refused_in_the_table():
    refused = real_data.Row("a.mat", "CWRU", "outer_race DE 0.007", "Y1", "clear",
                            "refused: the record of 0.05 s holds 1.5 revolutions", 0.0, False, True, 0.1)
    rows = [refused, _row("b.mat", "outer-race on drive_end", 0.8)]
    lines = real_data.inject_table({("length", 0.05): rows})
    assert lines[1].split()[:8] == ["length", "0.05s", "2", "1", "1", "0", "0", "1"]
    assert lines[-1].endswith(": met")
