"""Evidence extractors: common checks over the registry, detection on simulated faults, a real record."""

import functools
import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from bench.features import FEATURES
from engine.cli import main
from engine.evidence import FACTS, extract_evidence, fields_of
from engine.evidence.signs import SIGNS
from engine.machine import load_machine
from engine.readings import load_reading
from engine.simulation import as_reading, simulate

from support import CASES, SHARED_DATASETS, TEST_MACHINES

MACHINES = {k: load_machine(CASES / "machines" / f) for k, f in
            (("rw2", "rw2-raw-water-pump.yaml"), ("ct1", "ct1-cooling-tower-fan.yaml"),
             ("bw1", "bw1-backwash-blower.yaml"))}
# a few points are enough and keep the suite fast: the faulty location plus a radial/axial pair
POINTS = {"rw2": ["P2H", "P1H", "P1A", "M2H"], "ct1": ["GINH", "GINA"], "bw1": ["MDEH", "BDEH"]}
TYPES = {"number": (int, float), "integer": (int,), "string": (str,), "boolean": (bool,)}


def _facts(machine_key, fault="healthy", component=None, stage=2, scale=1.0, fs=12800.0, seed=0, duration=3.0):
    m = MACHINES[machine_key]
    rpm = m.shaft_speeds_hz[m.driver_shaft] * 60 * scale
    sim = simulate(m, fault, component, stage, rpm, fs, duration, seed, POINTS[machine_key])
    return extract_evidence(as_reading(sim), m)


# The detection grid below reads the same healthy machine at each grid point for every feature of that machine,
# and some faults for two features: each reading's facts are made once (read only; determinism is tested
# with _facts itself, below)
_facts_once = functools.cache(_facts)


@pytest.fixture(scope="module")
def samples():
    return [_facts("rw2"), _facts("rw2", "outer-race", "pump_nde"), _facts("ct1", "gear-tooth", "bevel_stage"),
            _facts("bw1", "belt", "vbelt")]


def test_every_fact_matches_the_vocabulary(samples):
    for facts in samples:
        for fact in facts:
            assert fact["kind"] in FACTS
            spec = fields_of(fact["kind"])
            signs = fact.get(SIGNS, {})
            assert all(isinstance(k, str) and 0 < v <= 1 for k, v in signs.items()), (fact["kind"], signs)
            assert set(fact) - {SIGNS} == set(spec), (fact["kind"], set(fact) ^ set(spec))
            for name, value in fact.items():
                if name == SIGNS:
                    continue
                kind = spec[name][0]
                assert isinstance(value, TYPES[kind]), (name, value)
                assert not (kind != "boolean" and isinstance(value, bool)), (name, value)
                if isinstance(value, float):
                    assert math.isfinite(value), (fact["kind"], name)


def test_fact_ids_are_unique(samples):
    for facts in samples:
        ids = [f["id"] for f in facts]
        assert len(ids) == len(set(ids))


def test_extraction_is_deterministic():
    assert _facts("ct1", "gear-wear", "bevel_stage", seed=3) == _facts("ct1", "gear-wear", "bevel_stage", seed=3)


def test_facts_are_measurements_with_units_in_their_names():
    for kind, fields in FACTS.items():
        for name, (typ, meaning, _unit) in fields.items():
            assert meaning, (kind, name)
            if name.endswith(("_hz", "_mm_s", "_g", "_db", "_pct", "_ms", "_deg")):
                assert typ == "number", (kind, name)


# Detection over a small grid: two speeds, two seeds, two sample rates (12.8 and 25.6 kHz);
# bench/evidence_rates.py runs the larger grid and prints the rates.
GRID = [(0.9, 0, 12800.0), (1.0, 1, 25600.0), (0.9, 1, 25600.0), (1.0, 0, 12800.0)]


@pytest.mark.slow
@pytest.mark.parametrize("feature", FEATURES, ids=[f.name for f in FEATURES])
def test_extractor_detects_its_fault_and_not_the_healthy_machine(feature):
    # a line-fed motor slips 1-5 %: a rotor-bar case varies its speed by 1 %, not 10 %
    grid = [(0.99 if feature.fault == "rotor-bar" and scale != 1.0 else scale, seed, fs) for scale, seed, fs in GRID]
    hits = sum(feature.present(_facts_once(feature.machine, feature.fault, feature.component, 2, scale, fs, seed))
               for scale, seed, fs in grid)
    alarms = sum(feature.present(_facts_once(feature.machine, "healthy", None, 1, scale, fs, seed + 50))
                 for scale, seed, fs in GRID)
    print(f"{feature.name}: detected {hits}/{len(GRID)}, false alarms {alarms}/{len(GRID)}")
    assert hits == len(GRID)
    assert alarms == 0


@settings(max_examples=6, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(rpm=st.floats(700, 1800), seed=st.integers(0, 10_000), fs=st.sampled_from([10240.0, 12800.0, 20000.0]))
def test_outer_race_envelope_tone_at_any_speed(rpm, seed, fs):
    m = MACHINES["rw2"]
    sim = simulate(m, "outer-race", "pump_nde", 2, rpm, fs, 3.0, seed, ["P2H"])
    facts = extract_evidence(as_reading(sim), m)
    bpfo = 3.047 * rpm / 60  # 6312: 8 balls, d/D = 22.225/95 -> BPFO 4 (1 - 0.2339) x fr
    tone = [f for f in facts if f["kind"] == "envelope_tone" and f["defect"] == "BPFO" and f["component"] == "pump_nde"]
    assert tone and tone[0]["freq_hz"] == pytest.approx(bpfo, rel=0.02) and tone[0]["harmonics_found"] >= 3


def test_settings_are_measured_beside_the_rates_they_must_reach():
    # Source: common practice (analyzer documentation): Fmax = fs / 2.56, lines = samples / 2.56,
    # resolution = fs / samples. GMF = 23 teeth x pinion speed (CT-1 machine file, nominal 985 rpm).
    facts = _facts("ct1", fs=2048.0, duration=2.0)
    acq = next(f for f in facts if f["kind"] == "acquisition")
    assert acq["fmax_hz"] == pytest.approx(800.0)
    assert acq["lines"] == int(2048 * 2.0 / 2.56) and acq["resolution_hz"] == pytest.approx(0.5)
    assert acq["highest_gmf_hz"] == pytest.approx(23 * acq["speed_rpm"] / 60, rel=1e-9)
    assert acq["fmax_hz"] < 3 * acq["highest_gmf_hz"]             # the gear mesh rule's condition holds
    assert acq["slowest_shaft"] == "fan" and acq["revolutions"] == pytest.approx(2.0 * 985 / 60 * 23 / 67, rel=0.05)


def test_short_record_has_coarse_lines():
    facts = _facts("rw2", duration=0.5)
    acq = next(f for f in facts if f["kind"] == "acquisition")
    assert acq["resolution_hz"] == pytest.approx(2.0)
    assert acq["resolution_hz"] > acq["sideband_spacing_hz"] / 3   # pole pass sidebands cannot be resolved


def test_quality_issues_become_facts(tmp_path):
    m = MACHINES["rw2"]
    sim = simulate(m, "healthy", None, 1, None, 5120.0, 2.0, 0, ["P1H"])
    x = np.clip(sim.channels["P1H"], -0.5 * np.abs(sim.channels["P1H"]).max(), None)
    path = tmp_path / "clipped.npz"
    np.savez(path, P1H=x / 9.80665, sample_rate_hz=5120.0, unit="g")
    reading = load_reading(path, point="P1H")
    facts = extract_evidence(reading, m)
    assert any(f["kind"] == "data_quality" and f["issue"] == "clipping" for f in facts)


CWRU = SHARED_DATASETS / "cwru" / "12k_drive_end"


@pytest.mark.skipif(not CWRU.exists(), reason="../shared/datasets is not beside the project")
@pytest.mark.parametrize("record, defect, multiple", [("130.mat", "BPFO", 3.5848), ("105.mat", "BPFI", 5.4152)])
def test_real_cwru_record_shows_its_defect_in_the_envelope(record, defect, multiple):
    # Source: CWRU Bearing Data Center, 12 kHz drive-end records 130 (outer race 0.007 in,
    # centred @6:00) and 105 (inner race 0.007 in), 0 hp, file speed 1796/1797 rpm; 6205-2RS
    # multiples BPFO 3.5848, BPFI 5.4152 (../shared/datasets/README.md, section 2.4).
    reading = load_reading(CWRU / record, sample_rate_hz=12000, unit="g", channels=["DE_time"], point="DE")
    facts = extract_evidence(reading, load_machine(TEST_MACHINES / "cwru-motor.yaml"))
    tone = next(f for f in facts if f["kind"] == "envelope_tone" and f["defect"] == defect
                and f["component"] == "drive_end")
    expected = multiple * reading.speed_rpm / 60
    assert tone["freq_hz"] == pytest.approx(expected, rel=0.01)
    assert tone["first_snr_db"] > 20 and tone["harmonics_found"] >= 3


def test_cli_evidence_json(tmp_path, capsys):
    out = tmp_path / "r.npz"
    assert main(["synth", str(CASES / "machines" / "rw2-raw-water-pump.yaml"), "--fault", "unbalance",
                 "--duration", "2", "--sample-rate", "5120", "--points", "P1H", "-o", str(out)]) == 0
    capsys.readouterr()
    assert main(["evidence", str(out), "--machine", str(CASES / "machines" / "rw2-raw-water-pump.yaml"),
                 "--json"]) == 0
    import json
    facts = json.loads(capsys.readouterr().out)
    assert any(f["kind"] == "tone" and f["name"] == "1X" for f in facts)


def test_iso_band_follows_the_shaft_under_the_sensor():
    # ISO 20816-3:2022 measures 2-1000 Hz on machines at or below 600 r/min, else 10-1000 Hz:
    # the CT-1 fan shaft turns at 338 r/min, so its point's 1X (5.6 Hz) counts in its overall level
    m = MACHINES["ct1"]
    sim = simulate(m, "unbalance", "fan", 3, None, 12800.0, 4.0, 0, ["GOUTH", "GINH"])
    facts = extract_evidence(as_reading(sim), m)
    overall = {f["channel"]: f for f in facts if f["kind"] == "overall"}
    one_x = next(f for f in facts if f["kind"] == "tone" and f["name"] == "1X" and f["component"] == "fan"
                 and f["channel"] == "GOUTH")
    assert overall["GOUTH"]["velocity_band_lo_hz"] == 2.0 and overall["GINH"]["velocity_band_lo_hz"] == 10.0
    assert overall["GOUTH"]["velocity_rms_mm_s"] >= one_x["amplitude_mm_s"]


def test_rms_frequency_is_the_frequency_of_a_tone_with_both_levels():
    # handbook formula: for a sine, acceleration = 2 pi f x velocity (the derivative of a sine)
    import math

    from engine.common.units import STANDARD_GRAVITY_M_S2
    from engine.evidence.levels import _rms_frequency_hz

    for f_hz, v_mm_s in ((25.0, 4.0), (160.0, 0.5), (3000.0, 0.02)):
        a_g = 2 * math.pi * f_hz * v_mm_s * 1e-3 / STANDARD_GRAVITY_M_S2
        assert _rms_frequency_hz(a_g, v_mm_s) == pytest.approx(f_hz, rel=1e-9)
        assert _rms_frequency_hz(1000 * a_g, 1000 * v_mm_s) == pytest.approx(f_hz, rel=1e-9)   # no scale moves it
    assert _rms_frequency_hz(0.1, 0.0) == 0.0
