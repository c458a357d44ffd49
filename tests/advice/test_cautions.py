"""Safety cautions (rulebooks/advice/cautions.yaml): the general ones on every report, then those of the
machine's parts and of the recommended faults' families (nu26 item 10: a pump was told of fans that
windmill, and a motor test carried no electrical caution)."""

from __future__ import annotations

from types import SimpleNamespace

from engine.advice import cautions_for, load_advice, machine_parts
from engine.machine import load_machine

from support import CASES, RW2

CT1 = CASES / "machines/ct1-cooling-tower-fan.yaml"
BW1 = CASES / "machines/bw1-backwash-blower.yaml"


def _rec(family: str):
    return SimpleNamespace(hypothesis=SimpleNamespace(family=family))


def test_the_parts_are_read_from_the_machine_file():
    assert machine_parts(load_machine(RW2)) == ("pump",)
    assert set(machine_parts(load_machine(CT1))) == {"fan", "gearbox"}
    assert "belt_drive" in machine_parts(load_machine(BW1))


def test_a_pump_gets_its_valves_and_reverse_rotation_and_no_windmilling_fan():
    data = load_advice()
    lines = cautions_for(load_machine(RW2), (), data)
    assert lines[:len(data["cautions"])] == tuple(data["cautions"])    # the general ones first, all of them
    text = " ".join(lines).lower()
    assert "suction and discharge valves" in text and "drain" in text and "reverse" in text
    assert "windmill" not in text and "fan stack" not in text and "belt" not in " ".join(lines[len(data["cautions"]):])


def test_a_cooling_tower_fan_gets_windmilling_height_and_gearbox_oil():
    text = " ".join(cautions_for(load_machine(CT1), (), load_advice())).lower()
    assert "windmill" in text and "work at height" in text and "hot enough to scald" in text
    assert "suction and discharge" not in text


def test_an_electrical_fault_adds_the_qualified_persons_caution_once():
    data = load_advice()
    m = load_machine(RW2)
    plain = cautions_for(m, (_rec("bearing"),), data)
    electrical = cautions_for(m, (_rec("electrical"), _rec("electrical")), data)
    added = [c for c in electrical if c not in plain]
    assert len(added) == 1 and "prove dead" in added[0] and "qualified" in added[0]
    # the site's procedures still come first (the general cautions defer to them)
    assert any("site's procedures" in c for c in plain)
