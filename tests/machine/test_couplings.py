"""Couplings in the machine file (engine/machine/model.py): the two shafts each joins and its type,
checked with one-line errors; a shaft ``same_as`` another with none named implies a coupling of unknown
type; ``points_across`` gives the points on each side; the drive_link facts say the same to the rules."""

from __future__ import annotations

import json
import textwrap

import pytest

from engine.common.errors import MachineError
from engine.common.yamlfile import load_schema
from engine.evidence import acquisition
from engine.machine import COUPLING_TYPES, load_machine, points_across

from support import RW2, TEST_MACHINES

HEAD = textwrap.dedent("""\
    machine: m
    shafts:
      - {id: motor, speed_rpm: 1480}
      - {id: pump, same_as: motor}
      - {id: fan, ratio_to: {shaft: motor, ratio: 0.5}}
    points:
      - {id: MH, at: motor, direction: horizontal}
      - {id: PH, at: pump, direction: horizontal}
      - {id: PA, at: pump, direction: axial}
    """)


def _load(tmp_path, text):
    path = tmp_path / "m.yaml"
    path.write_text(text)
    return load_machine(path), path


def test_rw2_names_its_coupling_and_the_points_on_each_side():
    m = load_machine(RW2)
    assert [(c.id, c.shafts, c.type, c.named) for c in m.couplings] == [("coupling", ("motor", "pump"), "flexible",
                                                                          True)]
    motor_side, pump_side = points_across(m, "coupling")
    assert [p.id for p in motor_side] == ["M1H", "M2H", "M2V", "M2A"]
    assert [p.id for p in pump_side] == ["P1H", "P1A", "P2H"]
    assert points_across(m, m.couplings[0]) == (motor_side, pump_side)


def test_same_as_without_a_named_coupling_is_an_unnamed_coupling_of_unknown_type(tmp_path):
    m, _ = _load(tmp_path, HEAD)
    assert [(c.id, c.shafts, c.type, c.named) for c in m.couplings] == [("motor-pump-coupling", ("motor", "pump"),
                                                                          "unknown", False)]


def test_a_named_coupling_replaces_the_implied_one(tmp_path):
    m, _ = _load(tmp_path, HEAD + "couplings:\n  - {id: c1, shafts: [pump, motor], type: gear}\n")
    assert [(c.id, c.shafts, c.type) for c in m.couplings] == [("c1", ("pump", "motor"), "gear")]


def test_a_belt_drive_or_a_single_shaft_has_no_coupling():
    assert load_machine(TEST_MACHINES / "belt-fan-6309-22212.yaml").couplings == ()
    assert load_machine(TEST_MACHINES / "mfpt-rig.yaml").couplings == ()


def test_the_schema_and_the_model_name_the_same_coupling_types():
    schema = load_schema("machine.schema.json")
    assert tuple(schema["$defs"]["coupling"]["properties"]["type"]["enum"]) == COUPLING_TYPES
    advice = load_schema("advice.schema.json")
    assert tuple(advice["properties"]["coupling_advice"]["propertyNames"]["enum"]) == COUPLING_TYPES


BAD = [
    pytest.param("  - {id: c1, shafts: [motor, nosuch], type: flexible}\n", "couplings.0.shafts.1: unknown shaft "
                 "'nosuch'", id="unknown-shaft"),
    pytest.param("  - {id: c1, shafts: [motor, motor], type: flexible}\n", "joins two different shafts",
                 id="same-shaft"),
    pytest.param("  - {id: c1, shafts: [motor, fan], type: disc}\n", "a disc coupling joins shafts at one speed, "
                 "but 'motor' runs at 1480.0 rpm and 'fan' at 740.0 rpm", id="speeds-differ"),
    pytest.param("  - {id: c1, shafts: [motor, fan], type: fluid}\n", "up to 10% slower", id="fluid-slips-too-much"),
    pytest.param("  - {id: c1, shafts: [motor, pump], type: bendy}\n", "couplings.0.type: expected one of",
                 id="unknown-type"),
    pytest.param("  - {id: c1, shafts: [motor], type: jaw}\n", "couplings.0.shafts", id="one-shaft"),
    pytest.param("  - {id: c1, shafts: [motor, pump], type: jaw}\n  - {id: c2, shafts: [pump, motor], type: jaw}\n",
                 "already joined by 'c1'", id="joined-twice"),
    pytest.param("  - {id: pump, shafts: [motor, pump], type: jaw}\n", "already used", id="duplicate-id"),
]


@pytest.mark.parametrize("text, words", BAD)
def test_a_bad_coupling_is_one_line_naming_file_line_and_problem(tmp_path, text, words):
    path = tmp_path / "m.yaml"
    path.write_text(HEAD + "couplings:\n" + text)
    with pytest.raises(MachineError) as info:
        load_machine(path)
    message = str(info.value)
    assert message.startswith(f"{path}:") and words in message, message
    assert "\n" not in message and message.split(":")[1].isdigit(), message


def test_a_fluid_coupling_may_slip_a_little(tmp_path):
    text = HEAD.replace("ratio: 0.5", "ratio: 0.97") + "couplings:\n  - {id: c1, shafts: [motor, fan], type: fluid}\n"
    m, _ = _load(tmp_path, text)
    assert m.coupling("c1").type == "fluid"


def test_points_across_an_unknown_coupling_is_a_machine_error():
    m = load_machine(RW2)
    with pytest.raises(MachineError, match="no coupling 'nosuch'; couplings are coupling"):
        points_across(m, "nosuch")


def test_drive_link_facts_name_each_side_of_each_coupling_and_belt():
    class Analysed:          # drive_links reads only the analysis's machine
        machine = load_machine(RW2)
    facts = acquisition.drive_links(Analysed())   # type: ignore[arg-type]
    assert [(f["component"], f["link"], f["type"], f["shaft"], f["other_shaft"]) for f in facts] == [
        ("coupling", "coupling", "flexible", "motor", "pump"), ("coupling", "coupling", "flexible", "pump", "motor")]
    Analysed.machine = load_machine(TEST_MACHINES / "belt-fan-6309-22212.yaml")
    facts = acquisition.drive_links(Analysed())   # type: ignore[arg-type]
    assert [(f["component"], f["link"], f["shaft"], f["other_shaft"]) for f in facts] == [
        ("vbelt", "belt", "motor", "fan"), ("vbelt", "belt", "fan", "motor")]
    json.dumps(facts)


def test_a_repair_of_the_coupling_resets_the_points_on_both_its_shafts():
    from engine.trend.repairs import points_seeing

    m = load_machine(RW2)
    assert points_seeing(m, "coupling") == ("M1H", "M2H", "M2V", "M2A", "P1H", "P1A", "P2H")
    assert points_seeing(m, "pump") == ("P1H", "P1A", "P2H")
