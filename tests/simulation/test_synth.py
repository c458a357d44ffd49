"""The simulator against the physics it claims."""

from pathlib import Path

import numpy as np
import pytest
import yaml

from engine.analysis import amplitude_spectrum, find_peaks
from engine.cli import main
from engine.evidence import extract_evidence
from engine.machine import load_machine
from engine.machine.kinematics import forcing_frequencies
from engine.readings import load_reading
from engine.simulation import as_reading, simulate, write_simulation

from support import CASES

RW2 = CASES / "machines" / "rw2-raw-water-pump.yaml"
CT1 = CASES / "machines" / "ct1-cooling-tower-fan.yaml"


@pytest.fixture(scope="module")
def rw2():
    return load_machine(RW2)


@pytest.fixture(scope="module")
def ct1():
    return load_machine(CT1)


def _freq(machine, name, component, rpm=None):
    return next(f.frequency_hz for f in forcing_frequencies(machine, rpm)
                if f.name == name and f.component == component)


@pytest.mark.parametrize("rpm", [1100.0, 1486.0])
def test_outer_race_impacts_are_spaced_one_over_bpfo(rw2, rpm):
    # Source: common practice (Randall & Antoni 2011, section 2.1): an outer-race spall is
    # struck once per ball pass, so impacts are 1/BPFO apart, with 1-2 % random slip.
    sim = simulate(rw2, "outer-race", "pump_nde", 2, rpm, 12800.0, 4.0, seed=5)
    bpfo = _freq(rw2, "BPFO", "pump_nde", rpm)
    intervals = np.diff(sim.extra["impact_times_s"])
    assert np.mean(intervals) == pytest.approx(1 / bpfo, rel=0.005)
    assert 0.005 < np.std(intervals) * bpfo < 0.02
    # and the waveform itself shows it: the impact train extractor measures the rate
    facts = extract_evidence(as_reading(sim), rw2)
    train = next(f for f in facts if f["kind"] == "impact_train" and f["channel"] == "P2H")
    assert train["rate_hz"] == pytest.approx(bpfo, rel=0.01)
    assert train["matched_name"] == "BPFO" and train["matched_component"] == "pump_nde"


def test_eccentric_pinion_sidebands_are_spaced_at_its_speed(ct1):
    # Source: common practice (Randall 2011, "Vibration-based condition monitoring", 5.2):
    # eccentricity amplitude-modulates the mesh at the gear's speed, so sidebands sit at
    # GMF +- k x that speed.
    sim = simulate(ct1, "gear-eccentricity", "bevel_stage", 3, None, 12800.0, 8.0, seed=2)
    gmf = _freq(ct1, "GMF", "bevel_stage")
    f_in = ct1.shaft_speeds_hz["gear_input"]
    spec = amplitude_spectrum(sim.channels["GINH"], sim.fs_hz)
    peaks = [p for p in find_peaks(spec, gmf - 3.5 * f_in, gmf + 3.5 * f_in, min_snr=10) if p.amplitude > 0.02]
    freqs = sorted(p.freq_hz for p in peaks)
    assert len(freqs) >= 5
    spacing = np.diff(freqs)
    assert np.allclose(spacing, f_in, atol=2 * spec.resolution_hz)


def test_inner_race_impacts_are_modulated_at_1x(rw2):
    # Source: common practice (Randall & Antoni 2011, section 2.1): an inner-race spall turns
    # with the shaft through the load zone, so impact strength varies once per revolution.
    sim = simulate(rw2, "inner-race", "pump_nde", 2, None, 12800.0, 6.0, seed=1)
    times = sim.extra["impact_times_s"]
    fr = rw2.shaft_speeds_hz["pump"]
    idx = np.rint(times * sim.fs_hz).astype(int)
    window = int(0.002 * sim.fs_hz)
    x = sim.channels["P2H"]
    strength = np.array([np.max(np.abs(x[i:i + window])) for i in idx if i + window < len(x)])
    t = times[:len(strength)]
    # the impact strengths, seen as samples at the impact times, oscillate at 1X:
    # their correlation with cos/sin at fr is strong, at FTF or 2X weak
    def modulation(f):
        return abs(np.mean((strength - strength.mean()) * np.exp(-2j * np.pi * f * t))) / strength.std()
    assert modulation(fr) > 0.3
    assert modulation(fr) > 3 * modulation(2.37 * fr)
    facts = extract_evidence(as_reading(sim), rw2)
    lzm = next(f for f in facts if f["kind"] == "load_zone_modulation" and f["channel"] == "P2H"
               and f["component"] == "pump_nde" and f["defect"] == "BPFI" and f["modulation"] == "1X")
    assert lzm["sideband_count"] >= 2 and lzm["depth"] > 0.2


def test_outer_race_in_the_load_zone_is_not_modulated(rw2):
    # Source: common practice: a stationary outer-race defect sits in the load zone all the time.
    sim = simulate(rw2, "outer-race", "pump_nde", 2, None, 12800.0, 6.0, seed=1)
    facts = extract_evidence(as_reading(sim), rw2)
    lzm = next(f for f in facts if f["kind"] == "load_zone_modulation" and f["channel"] == "P2H"
               and f["component"] == "pump_nde" and f["defect"] == "BPFO" and f["modulation"] == "1X")
    assert lzm["depth"] < 0.2


def test_unbalance_rises_with_speed_squared(rw2):
    # Source: common practice: the unbalance force is m e omega^2. The fault's own part is
    # isolated by subtracting the healthy machine of the same seed.
    amps = []
    for rpm in (1000.0, 1400.0):
        fault = simulate(rw2, "unbalance", "pump", 3, rpm, 5120.0, 4.0, seed=9)
        healthy = simulate(rw2, "healthy", None, 1, rpm, 5120.0, 4.0, seed=9)
        spec = amplitude_spectrum(fault.channels["P1H"] - healthy.channels["P1H"], 5120.0)
        fr = rpm / 60 * 1.0
        line = int(np.argmin(np.abs(spec.freq_hz - fr)))
        amps.append(spec.amplitude[line - 2:line + 3].max() / (2 * np.pi * fr))  # velocity
    assert amps[1] / amps[0] == pytest.approx((1400 / 1000) ** 2, rel=0.03)


def test_misalignment_is_strong_axially(rw2):
    # Source: common practice: misalignment shows high axial 1X and 2X.
    sim = simulate(rw2, "misalignment-angular", "pump", 2, None, 12800.0, 4.0, seed=3)
    facts = extract_evidence(as_reading(sim), rw2)
    ratio = next(f for f in facts if f["kind"] == "direction_ratio" and f["location"] == "pump_de")
    assert ratio["axial_to_radial"] > 1.0 and ratio["axial_2x_to_radial"] > 1.0


def test_bearing_damage_stages_carry_their_published_signs(rw2):
    # Common practice (the four-stage account of bearing wear): stage 1 only high-frequency energy (the
    # waveform is the machine's own, kurtosis under the Gaussian 3's neighbourhood); stage 2 and 3 the
    # impacts make it impulsive; stage 3 the defect rate stands in the ordinary spectrum; stage 4 a
    # broadband floor where bearings ring swallows the impacts (kurtosis back towards 3, energy high),
    # while the running-speed line still stands clear. Kurtosis of a Gaussian signal is 3 (textbook).
    facts = {}
    for stage in (1, 2, 3, 4):
        sim = simulate(rw2, "outer-race", "pump_nde", stage, None, 12800.0, 3.0, seed=4)
        facts[stage] = [f for f in extract_evidence(as_reading(sim), rw2) if f.get("channel") == "P2H"]

    def overall(stage):
        return next(f for f in facts[stage] if f["kind"] == "overall")

    def bpfo_line(stage):
        return next((f for f in facts[stage] if f["kind"] == "tone" and f["name"] == "BPFO"
                     and f["component"] == "pump_nde"), None)

    kurt = [overall(s)["kurtosis"] for s in (1, 2, 3, 4)]
    assert kurt[0] < 4.0 < kurt[1] < kurt[2] and kurt[3] < 4.0
    high = [overall(s)["rms_frequency_hz"] for s in (1, 2, 3, 4)]
    assert high[0] < high[1] < high[2] < 1000.0 < high[3]
    assert bpfo_line(2) is None or bpfo_line(2)["ratio_to_bearing_1x"] < 0.1
    assert bpfo_line(3)["ratio_to_bearing_1x"] >= 0.1
    one_x = next(f for f in facts[4] if f["kind"] == "tone" and f["name"] == "1X" and f["component"] == "pump")
    assert one_x["snr_db"] >= 20


@pytest.mark.slow
@pytest.mark.parametrize("seed, speed", [(0, 0.85), (0, 1.0), (1, 0.85), (1, 1.0)])
def test_a_stage_three_inner_race_carries_its_line_against_the_bearings_1x_and_stage_two_does_not(rw2, seed, speed):
    # Stage 3's sign (rulebooks/advice/severity.yaml; common practice, the four-stage account of bearing
    # wear): the defect rate stands in the ordinary velocity spectrum, a tenth of the bearing's running-speed
    # line or more (bearing.stage.velocity-tone). An inner race's 1X load-zone modulation moves a share of
    # its line into sidebands; at 1.5 g these readings stood at 0.096-0.098 of the radial 1X.
    rpm = speed * rw2.shaft_speeds_hz[rw2.driver_shaft] * 60

    def line(stage):
        sim = simulate(rw2, "inner-race", "pump_de", stage, rpm, 25600.0, 4.0, seed)
        return max(f["ratio_to_bearing_1x"] for f in extract_evidence(as_reading(sim), rw2)
                   if f["kind"] == "tone" and f["name"] == "BPFI" and f["component"] == "pump_de"
                   and f["location"] == "pump_de")

    assert line(3) >= 0.1
    assert line(2) < 0.1


def test_written_simulation_loads_back_with_truth(tmp_path, rw2):
    sim = simulate(rw2, "inner-race", "pump_de", 2, None, 12800.0, 2.0, seed=0, points=["P1H", "P1A"])
    written = write_simulation(sim, tmp_path / "ir.wav")
    assert [p.name for p in written] == ["ir.wav", "ir.wav.yaml", "ir.wav.truth.yaml"]
    assert not list(tmp_path.glob("*.part"))
    reading = load_reading(tmp_path / "ir.wav")
    assert [c.name for c in reading.channels] == ["P1H", "P1A"]
    assert reading.channel("P1A").direction == "axial" and reading.speed_rpm == 1486.0
    assert np.allclose(reading.channel("P1H").samples, sim.channels["P1H"],
                       atol=1e-6 * np.abs(sim.channels["P1H"]).max())
    truth = yaml.safe_load((tmp_path / "ir.wav.truth.yaml").read_text())
    assert truth["fault"] == "inner-race" and truth["component"] == "pump_de" and truth["stage"] == 2


def test_same_seed_same_signal(rw2):
    a = simulate(rw2, "looseness-rotating", "pump", 2, None, 5120.0, 1.0, seed=7)
    b = simulate(rw2, "looseness-rotating", "pump", 2, None, 5120.0, 1.0, seed=7)
    assert all(np.array_equal(a.channels[k], b.channels[k]) for k in a.channels)


def test_cli_synth_and_bad_fault(tmp_path, capsys):
    out = tmp_path / "r.npz"
    assert main(["synth", str(RW2), "--fault", "vane-pass", "--duration", "1", "--sample-rate", "5120",
                 "-o", str(out)]) == 0
    assert out.exists() and load_reading(out).fs_hz == 5120.0
    assert main(["synth", str(RW2), "--fault", "gremlins", "-o", str(out)]) == 2
    err = capsys.readouterr().err
    assert "unknown fault 'gremlins'; expected one of healthy, unbalance," in err and len(err.splitlines()) == 1


def test_an_unknown_fault_is_the_same_one_line_wherever_it_is_named(rw2, tmp_path, capsys):
    """The table of faults words its own error: simulate, tellwave synth and a case file say the same."""
    from engine.common.errors import CaseError, UsageError
    from engine.pipeline.cases import load_case
    from engine.simulation import FAULTS

    words = "unknown fault 'gremlins'; expected one of " + ", ".join(FAULTS)
    with pytest.raises(UsageError) as raised:
        simulate(rw2, "gremlins")
    assert raised.value.problem == words
    assert main(["synth", str(RW2), "--fault", "gremlins", "-o", str(tmp_path / "r.npz")]) == 2
    assert capsys.readouterr().err.strip().endswith(words)
    case = tmp_path / "gremlins.case.yaml"
    case.write_text(f"case: gremlins\nmachine: {RW2}\nsimulate:\n  seed: 1\n  fault: gremlins\n"
                    "expect:\n  nothing: true\n")
    with pytest.raises(CaseError) as raised:
        load_case(case)
    assert str(raised.value) == f"{case}:5: {words}"


def test_fault_on_a_component_the_machine_lacks(rw2):
    from engine.common.errors import UsageError
    with pytest.raises(UsageError, match="has no gear"):
        simulate(rw2, "gear-tooth")


def test_the_simulator_speaks_the_rulebooks_fault_ids():
    from engine.reasoning import load_rulebook
    from engine.simulation import FAULTS

    declared = set(load_rulebook().faults)
    assert set(FAULTS) - {"healthy"} <= declared, set(FAULTS) - {"healthy"} - declared


def test_each_fault_is_made_in_its_family_module_from_kinematics_rates():
    """One table, one module per fault family (DESIGN.md, simulation/), and no rate derived from
    the machine's geometry outside engine/machine/kinematics.py (DEVELOPERS.md)."""
    import inspect

    import engine.simulation as simulation
    from engine.simulation import FAULTS

    families = {"shaft", "bearings", "gears", "belts", "flow", "electrical"}
    for name, fault in FAULTS.items():
        if name != "healthy":
            assert fault.make.__module__.rsplit(".", 1)[-1] in families, (name, fault.make.__module__)
    folder = Path(inspect.getfile(simulation)).parent
    geometry = ("rolling_elements", "pitch_diameter", "element_diameter", "contact_angle", "driving_teeth *",
                ".vanes", "line_frequency_hz", "belt_length_mm", "driving_diameter_mm", "rotor_bars", ".poles")
    for path in sorted(folder.glob("*.py")):
        if path.name == "__init__.py":       # runs_at hands the motor's data to kinematics.pole_pass_hz
            continue
        text = path.read_text(encoding="utf-8")
        assert not [g for g in geometry if g in text], (path.name, [g for g in geometry if g in text])


def test_a_shaft_fault_named_on_a_coupling_lists_the_shafts_and_the_ones_it_joins():
    from engine.common.errors import UsageError
    machine = load_machine(CASES / "machines" / "ct1-cooling-tower-fan.yaml")
    with pytest.raises(UsageError) as raised:
        simulate(machine, "misalignment-angular", "drive_shaft", 3, None, 25600.0, 1.0, 1)
    message = str(raised.value)
    assert "its shafts: motor, gear_input, fan" in message, message
    assert "'drive_shaft' is a coupling: name one of the shafts it joins (motor, gear_input)" in message, message


def test_a_fault_put_on_a_part_the_machine_lacks_lists_the_parts_it_may_sit_on():
    from engine.common.errors import UsageError
    machine = load_machine(CASES / "machines" / "ct1-cooling-tower-fan.yaml")
    with pytest.raises(UsageError) as raised:
        simulate(machine, "looseness-structural", "fan", 3, None, 25600.0, 1.0, 1)
    message = str(raised.value)
    bearings = ", ".join(b.id for b in machine.bearings)
    assert f"sits on a bearing's housing and foot, named by the bearing: {bearings}" in message, message
