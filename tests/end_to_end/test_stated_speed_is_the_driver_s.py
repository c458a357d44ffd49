"""A reading's stated speed is its driving shaft's everywhere (the sidecar, --rpm, synth's own sidecar):
at a point on a slow shaft behind a gearbox the speed checks carry it to that shaft by the machine's
ratios, so the tool's own readings are diagnosed, not withheld as if the motor's speed were the pulley's."""

from __future__ import annotations

import json

import pytest

from engine.cli import main
from engine.machine import load_machine
from engine.simulation import simulate, write_simulation

from support import TEST_MACHINES

SC5 = TEST_MACHINES / "sc5-sludge-cake-conveyor.yaml"
MOTOR_RPM = 1480.0
PULLEY_RPM = MOTOR_RPM * 17 / 83 * 13 / 72       # the gear ratios of the machine file: 54.73 rpm


def _wav(tmp_path, fault="healthy", component=None, duration_s=12.0):
    sim = simulate(load_machine(SC5), fault, component, 2, None, 12800.0, duration_s, 3, points=["H1H"])
    assert sim.speed_rpm == MOTOR_RPM              # synth's sidecar states the driver's speed
    return write_simulation(sim, tmp_path / f"{fault}.wav")[0]


def _diagnose_json(capsys, *argv):
    code = main(["diagnose", *map(str, argv), "--format", "json"])
    out = capsys.readouterr()
    return code, (json.loads(out.out) if out.out else None), out.err


def _problems(doc):
    return {p["fault"]: p for p in doc["reading_problems"] if p["certainty"] >= 0.5}


@pytest.mark.parametrize("fault, component", [("healthy", None), ("outer-race", "pulley_de")])
def test_synth_s_own_reading_at_the_pulley_is_diagnosed(tmp_path, capsys, fault, component):
    wav = _wav(tmp_path, fault, component)
    code, doc, err = _diagnose_json(capsys, wav, "--machine", SC5)
    assert code == 0, (err, doc and doc["reading_problems"])
    assert not {"speed-differs", "rate-contradicted"} & set(_problems(doc))
    speed = doc["speed"]
    assert speed["shaft"] == "pulley" and speed["stated_rpm"] == pytest.approx(PULLEY_RPM, rel=1e-6)
    assert speed["stated_driver_rpm"] == MOTOR_RPM and speed["driver"] == "motor"
    assert speed["measured_rpm"] == pytest.approx(PULLEY_RPM, rel=0.005)
    if fault != "healthy":
        top = doc["hypotheses"][0]
        assert (top["fault"], top["component"]) == (fault, component)


def test_a_stated_speed_off_is_carried_to_the_pulley_and_named_as_the_driver_s(tmp_path, capsys):
    wav = _wav(tmp_path)
    stated = MOTOR_RPM * 1.04                      # the tach read 4 % high: beyond 1.5 % (the rule's slip margin)
    code, doc, _ = _diagnose_json(capsys, wav, "--machine", SC5, "--rpm", stated)
    because = " ".join(f["because"] for f in _problems(doc)["speed-differs"]["support"])
    assert f"{stated:.0f} rpm for the driving shaft (motor), which puts the pulley shaft at" in because
    assert f"{PULLEY_RPM * 1.04:.0f} rpm" in because
    assert doc["speed"]["deviation_pct"] == pytest.approx(100 * (1 / 1.04 - 1), abs=0.3)


def test_the_pulley_s_speed_given_as_the_driver_s_is_refused_naming_the_driving_shaft(tmp_path, capsys):
    wav = _wav(tmp_path, duration_s=6.0)
    assert main(["diagnose", str(wav), "--machine", str(SC5), "--rpm", f"{PULLEY_RPM:.2f}"]) == 4
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "the driving shaft 'motor'" in err and f"{PULLEY_RPM:.4g} rpm" in err
