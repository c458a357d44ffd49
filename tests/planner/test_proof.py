"""The proof by simulation: each purpose's fault is found with the proposed settings and missed with a
deliberately poor set, and the simulation agrees with the check. Whether a record shows a fault is the
real Reasoner's answer, on the rulebooks the diagnosis loads, a site overlay included."""

import numpy as np
import pytest
from scipy import signal

from engine.machine import load_machine
from engine.planner import CAN, CANNOT, MAY_MISS, check, given_settings, load_policy, propose, targets_at, verdicts
from engine.planner.needs import least
from engine.planner.proof import ANTI_ALIAS, physical_rate, prove, record
from engine.planner.settings import Settings
from engine.planner.shown import reasoner_for, shown
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


def test_needs_read_their_bounds_from_the_rules_they_name():
    from engine.reasoning import load_rulebook

    book = load_rulebook()
    for rule_id, kind, field in (("bearing.tones.envelope", "envelope_tone", "harmonics_owned"),
                                 ("bearing.tones.envelope-cage", "envelope_tone", "harmonics_owned"),
                                 ("shaft.looseness.harmonics", "harmonic_series", "count"),
                                 ("shaft.looseness.half-orders", "harmonic_series", "count"),
                                 ("gear.eccentricity.sidebands", "sideband_family", "pairs"),
                                 ("gear.wear.both-shafts", "sideband_family", "pairs"),
                                 ("electrical.rotor-bar.pole-pass", "sideband_family", "pairs")):
        bounds = [c.value for p in book.rule(rule_id).needs if p.kind == kind
                  for c in p.conditions if c.field == field and c.op in ("at_least", "above")]
        assert bounds and least(rule_id, kind, field) == bounds[0], (rule_id, kind, field)


def _envelope_facts(harmonics_owned, first_snr_db):
    """The facts of one clear BPFO family on pump_de, as the envelope extractor states them."""
    fact = {"kind": "envelope_tone", "id": "envelope_tone-1", "channel": "P1H", "location": "pump_de",
            "location_shaft": "pump", "component": "pump_de", "defect": "BPFO", "freq_hz": 91.2,
            "expected_hz": 91.0, "harmonics_owned": harmonics_owned, "harmonics_checked": 5,
            "fundamental_owned": True, "first_snr_db": first_snr_db, "chance_pct": 0.1, "band_method": "kurtogram",
            "band_lo_hz": 2000.0, "band_hi_hz": 6000.0, "strongest_location": True, "below_strongest_db": 0.0,
            "shaft_seen": True, "alike_defect": ""}
    return [fact]


@pytest.mark.parametrize("harmonics, snr, found", [(3, 20.0, True), (2, 30.0, False), (5, 5.0, False)])
def test_a_record_shows_a_fault_when_the_reasoner_names_it(harmonics, snr, found):
    # bearing.tones.envelope asks param.defect_harmonics (3) and param.tone_clear_snr_db (10 dB)
    target = Target("bearing", "outer-race", "outer-race", "pump_de", "pump")
    outcome = shown(reasoner_for(None).reason(_envelope_facts(harmonics, snr)), target)
    assert outcome.found is found, outcome.measure
    if found:
        assert outcome.certainty >= 0.2 and "bearing.defect.envelope" in outcome.rules
        assert outcome.measure.startswith("outer-race on pump_de at certainty")
    else:
        assert outcome.measure.startswith("no rule concludes outer-race on pump_de")


def test_a_tooth_of_the_other_gear_is_not_this_gear_s_tooth():
    """A hypothesis names the mesh; a gear's tooth target is shown only by evidence on its own shaft."""
    from engine.reasoning import Firing, Hypothesis, Reasoning

    def reasoning(shaft):
        firing = Firing("gear.tooth.once-per-rev", "t", "s", "o", (), 0.8, "b",
                        (("opr", {"kind": "once_per_rev_event", "shaft": shaft}),))
        h = Hypothesis("gear-tooth", "cracked tooth", "gear", "G1", 0.8, None, (firing,), ())
        return Reasoning((h,), False, (), (), 1, 1)

    fan = Target("gear", "gear-tooth", "gear-tooth", "G1", "fan", "driven")
    assert shown(reasoning("fan"), fan).found
    out = shown(reasoning("motor"), fan)
    assert not out.found and out.measure.startswith("no rule concludes gear-tooth on G1 (fan gear)")


SITE_RULE = """\
rulebook: Tallow Ridge Water Works - strict envelope test site
parameters:
  # more harmonics than the envelope evidence searches (5): no family can own that many
  defect_harmonics: {value: 6, source: "test: a site that asks more harmonics than are searched"}
"""


@pytest.fixture()
def strict_site(tmp_path):
    folder = tmp_path / "site"
    folder.mkdir()
    (folder / "strict.yaml").write_text(SITE_RULE, encoding="utf-8")
    return folder


def test_a_site_overlay_s_parameters_change_the_proof_and_the_check(strict_site):
    from engine.reasoning import load_rulebook

    p = RW2.point("P1H")
    target = next(t for t in targets_at(RW2, p, "bearing") if t.signature == "outer-race" and t.component == "pump_de")
    site = load_rulebook(strict_site)
    proposed = propose(RW2, p, "bearing", POLICY).settings()
    shipped = prove(RW2, target, p, {"proposed": proposed}, POLICY)
    assert shipped.trials["proposed"].found, shipped.trials["proposed"].measure
    strict = prove(RW2, target, p, {"proposed": proposed}, POLICY, reasoner=reasoner_for(site))
    assert not strict.trials["proposed"].found
    assert strict.trials["proposed"].measure.startswith("no rule concludes outer-race on pump_de")
    # the check reads the overlay's threshold too: 6 owned harmonics of 5 searched may be missed
    assert verdicts([target], check(RW2, proposed, POLICY, ["P1H"], ["bearing"]))[0].state == CAN
    assert verdicts([target], check(RW2, proposed, POLICY, ["P1H"], ["bearing"], rulebook=site))[0].state == MAY_MISS


def test_plan_with_a_site_says_the_fault_is_no_longer_shown(strict_site, capsys):
    import json

    from engine.cli import main

    machine = str(CASES / "machines" / "rw2-raw-water-pump.yaml")
    verdict = {}
    for extra in ([], ["--site", str(strict_site)]):
        assert main(["plan", machine, "--point", "P1H", "--format", "json", *extra]) == 0
        doc = json.loads(capsys.readouterr().out)
        item = next(i for i in doc["proof"]["items"] if i["fault"] == "outer-race" and i["component"] == "pump_de")
        verdict[bool(extra)] = (item["trials"]["proposed"]["found"], item["expected"]["proposed"])
        assert any(f.endswith("strict.yaml") for f in doc["rulebooks"]) is bool(extra), doc["rulebooks"]
    assert verdict == {False: (True, CAN), True: (False, MAY_MISS)}


def test_a_diagnosis_judges_its_reading_s_reach_with_the_site_s_thresholds(strict_site):
    from engine.pipeline import reach_of
    from engine.planner import reading_verdicts
    from engine.reasoning import load_rulebook
    from engine.simulation import as_reading, simulate

    proposed = propose(RW2, RW2.point("P1H"), "bearing", POLICY).settings()
    site = load_rulebook(strict_site)

    def state(rulebook):
        found = reading_verdicts(RW2, proposed.sample_rate_hz, proposed.n_samples, POLICY, ["P1H"], None, rulebook)
        return next(v.state for v in found if v.target.signature == "outer-race" and v.target.component == "pump_de")

    assert (state(None), state(site)) == (CAN, MAY_MISS)
    sim = simulate(RW2, "outer-race", "pump_de", 2, None, proposed.sample_rate_hz, proposed.duration_s, 1, ["P1H"])
    reading = as_reading(sim, source="simulated")
    rpm = RW2.speeds_at(None)[RW2.driver_shaft] * 60
    faults = {(r["fault"], r["component"]) for r in reach_of(reading, RW2, rpm, site)}
    assert ("outer-race", "pump_de") in faults and ("outer-race", "pump_de") not in {
        (r["fault"], r["component"]) for r in reach_of(reading, RW2, rpm)}


def test_plan_never_writes_over_a_site_rulebook(strict_site, capsys):
    from engine.cli import main

    rule = strict_site / "strict.yaml"
    before = rule.read_bytes()
    code = main(["plan", str(CASES / "machines" / "rw2-raw-water-pump.yaml"), "--no-proof", "--site", str(strict_site),
                 "-o", str(rule)])
    err = capsys.readouterr().err
    assert code != 0 and len(err.strip().splitlines()) == 1 and "strict.yaml" in err, err
    assert rule.read_bytes() == before


def test_the_sideband_needs_ask_as_many_pairs_as_their_rules():
    from engine.machine.kinematics import mesh_rates
    from engine.planner import requirements
    from engine.reasoning import load_rulebook

    p = CT1.point("GINH")
    pairs = least("gear.eccentricity.sidebands", "sideband_family", "pairs")
    assert pairs == 2            # the shipped rule; the need below follows it, not a copy of it
    speeds = CT1.speeds_at(None)
    for g in CT1.gears:
        gmf = mesh_rates(g, speeds).gmf_hz
        for book, want in ((None, pairs), (load_rulebook(), pairs)):
            needs = [n for n in requirements(CT1, p, "gear", POLICY, None, book).needs
                     if n.source == "gear.eccentricity.sidebands" and n.setting == "fmax"]
            assert needs and all(abs(n.value - (gmf + want * speeds[t.shaft])) < 1e-9
                                 for n in needs for t, _ in n.gates), [n.what for n in needs]
