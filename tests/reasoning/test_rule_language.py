"""The rule language refuses what could never fire: a value a field never holds (with the nearest one it
does), a word read as a field reference (with how to write a literal); ``rulebook check`` lists every
problem, one line each, and the parameters an overlay changed."""

from __future__ import annotations

import json

import pytest

from engine.cli import main
from engine.common.errors import RulebookError
from engine.evidence.vocabulary import FACTS, KNOWN_VALUES, known_values
from engine.machine.kinematics import RATE_FAMILIES, RATE_NAMES, forcing_frequencies
from engine.reasoning import load_rulebook
from engine.reasoning.rulebook import RulebookProblems

from support import ROOT


def _rule(rule_id: str, where: str, fault: str = "vane-pass") -> str:
    return (f"  - id: {rule_id}\n    title: t\n    source: s\n"
            f"    needs: [{{fact: tone, as: t, where: {where}}}]\n"
            f"    concludes: {{fault: {fault}, component: t.component}}\n"
            "    certainty: 0.5\n    because: b\n")


def _site(tmp_path, text: str):
    folder = tmp_path / "site"
    folder.mkdir(exist_ok=True)
    (folder / "s.yaml").write_text(text, encoding="utf-8")
    return folder


@pytest.mark.parametrize("where, field, wrong, near", [
    ("{name: vanepass}", "name", "vanepass", "vane pass"),
    ("{name: {one_of: [GMF, bpfo]}}", "name", "bpfo", "BPFO"),
    ("{direction: horizontl}", "direction", "horizontl", "horizontal"),
    ("{family: bearings}", "family", "bearings", "bearing"),
])
def test_a_misspelled_value_is_refused_with_the_nearest_name(tmp_path, where, field, wrong, near):
    with pytest.raises(RulebookError) as err:
        load_rulebook(_site(tmp_path, "rulebook: s\nrules:\n" + _rule("site.x", where)))
    text = str(err.value)
    assert f"{field} is never {wrong!r}" in text and f"did you mean {near!r}?" in text
    assert "s.yaml:6" in text and "rule site.x" in text


@pytest.mark.parametrize("where, refused", [
    ("{periodicity: {at_least: 0.5}}", True),
    ("{read_from: residual, periodicity: {at_least: 0.5}}", False),
    ("{read_from: waveform}", False),
])
def test_an_impact_train_pattern_must_say_which_signal_it_reads(tmp_path, where, refused):
    """Bearing impacts on a geared machine are facts twice, from the residual and from the waveform:
    a site rule that leaves read_from open would count one train twice."""
    text = ("rulebook: s\nrules:\n  - id: site.imp\n    title: t\n    source: s\n"
            f"    needs: [{{fact: impact_train, as: i, where: {where}}}]\n"
            "    concludes: {fault: outer-race, component: i.location}\n"
            "    certainty: 0.3\n    because: b\n")
    if not refused:
        assert load_rulebook(_site(tmp_path, text)).rule("site.imp")
        return
    with pytest.raises(RulebookError) as err:
        load_rulebook(_site(tmp_path, text))
    assert "read_from: residual" in str(err.value) and "s.yaml:6" in str(err.value) and "site.imp" in str(err.value)


def test_a_value_far_from_every_name_lists_them_without_a_guess(tmp_path):
    with pytest.raises(RulebookError) as err:
        load_rulebook(_site(tmp_path, "rulebook: s\nrules:\n" + _rule("site.x", "{name: zzzz}")))
    assert "did you mean" not in str(err.value) and "vane pass" in str(err.value)


def test_a_fault_map_key_is_checked_against_the_field_it_reads(tmp_path):
    text = ("rulebook: s\nrules:\n  - id: site.map\n    title: t\n    source: s\n"
            "    needs: [{fact: envelope_tone, as: e}]\n"
            "    concludes: {fault: {from: e.defect, map: {BPFO: outer-race, BPFII: inner-race}},\n"
            "                component: e.component}\n"
            "    certainty: 0.3\n    because: b\n")
    with pytest.raises(RulebookError, match=r"defect is never 'BPFII'.*did you mean 'BPFI'\?"):
        load_rulebook(_site(tmp_path, text))


def test_a_word_read_as_a_field_says_how_to_write_a_number(tmp_path):
    with pytest.raises(RulebookError) as err:
        load_rulebook(_site(tmp_path, "rulebook: s\nrules:\n" + _rule("site.x", "{snr_db: {above: two}}")))
    text = str(err.value)
    assert "this fact has no field 'two'" in text and "write the number itself, unquoted" in text


def test_a_word_in_same_as_says_how_to_compare_with_a_fixed_word(tmp_path):
    with pytest.raises(RulebookError, match="to compare with a fixed word use is: or is_not:"):
        load_rulebook(_site(tmp_path, "rulebook: s\nrules:\n" + _rule("site.x", "{name: {same_as: GMF}}")))


def test_known_values_are_the_names_the_machine_model_makes():
    # every forcing frequency of every shipped machine is named and grouped within the sets rules are checked by
    for path in sorted((ROOT / "cases/machines").glob("*.yaml")):
        from engine.machine import load_machine

        for f in forcing_frequencies(load_machine(path)):
            assert f.name in RATE_NAMES, (path.name, f.name)
            assert f.family in RATE_FAMILIES, (path.name, f.family)
    for key in KNOWN_VALUES:
        kind, _, name = key.rpartition(".")
        assert (name in FACTS[kind]) if kind else any(name in fields for fields in FACTS.values()), key
    assert known_values("tone", "component") is None


@pytest.mark.parametrize("golden", sorted((ROOT / "tests/end_to_end/golden").glob("*.facts.json")),
                         ids=lambda p: p.name)
def test_every_fact_of_the_golden_readings_holds_a_known_value(golden):
    # the sets must not refuse a value an extractor really gives
    facts = json.loads(golden.read_text(encoding="utf-8"))
    checked = 0
    for fact in facts:
        for name, value in fact.items():
            allowed = known_values(fact["kind"], name)
            if allowed is not None and value is not None:
                assert value in allowed, (fact["kind"], name, value)
                checked += 1
    assert checked > 10


def test_the_shipped_rulebooks_and_the_example_overlay_still_load():
    load_rulebook()
    load_rulebook(ROOT / "cases/site")


def test_check_lists_every_problem_one_line_each(tmp_path, capsys):
    text = ("rulebook: s\nparameters:\n  no_such_parameter: 3\nrules:\n"
            + _rule("site.a", "{name: vanepass}") + _rule("site.b", "{snr_db: {above: two}}")
            + _rule("site.c", "{name: 1X}", fault="no-such-fault"))
    assert main(["rulebook", "check", "--site", str(_site(tmp_path, text))]) == 5
    err = capsys.readouterr().err.splitlines()
    problems = [line for line in err if line.startswith("tellwave: error: ")]
    assert len(problems) == 4, err
    assert "no_such_parameter" in problems[0] and "rule site.a" in problems[1] and "rule site.b" in problems[2]
    assert "rule site.c" in problems[3] and "no-such-fault" in problems[3]
    assert err[-1] == "tellwave: 4 problems in the rulebooks"


def test_several_problems_elsewhere_are_one_line_naming_the_first_and_the_count(tmp_path):
    text = "rulebook: s\nrules:\n" + _rule("site.a", "{name: vanepass}") + _rule("site.b", "{name: gmf}")
    with pytest.raises(RulebookProblems) as err:
        load_rulebook(_site(tmp_path, text))
    assert len(err.value.problems) == 2 and "\n" not in str(err.value)
    assert "and 1 more problems" in str(err.value) and err.value.exit_code == 5


def test_a_broken_file_does_not_hide_the_problems_of_the_next(tmp_path):
    folder = _site(tmp_path, "rulebook: s\nrules: [1, 2]\n")
    (folder / "t.yaml").write_text("rulebook: t\nrules:\n" + _rule("site.b", "{name: gmf}"), encoding="utf-8")
    with pytest.raises(RulebookProblems) as err:
        load_rulebook(folder)
    files = [str(p) for p in err.value.problems]
    assert "s.yaml" in files[0] and "t.yaml" in files[1] and "'GMF'" in files[1]


def test_a_refused_rule_is_not_blamed_again_when_a_later_file_overrides_it(tmp_path):
    folder = _site(tmp_path, "rulebook: s\nrules:\n" + _rule("site.a", "{name: vanepass}"))
    (folder / "t.yaml").write_text("rulebook: t\nrules:\n" + _rule("site.a", "{name: GMF}").replace(
        "    title", "    overrides: true\n    title", 1) + "disable:\n  - {rule: site.a, reason: r}\n",
        encoding="utf-8")
    with pytest.raises(RulebookError) as err:
        load_rulebook(folder)
    assert not isinstance(err.value, RulebookProblems) and "vanepass" in str(err.value)


def test_check_lists_the_parameters_an_overlay_changed(tmp_path, capsys):
    folder = _site(tmp_path, "rulebook: s\nparameters:\n  tone_clear_snr_db: 12\n")
    assert main(["rulebook", "check", "--site", str(folder)]) == 0
    out = capsys.readouterr().out
    shipped = load_rulebook().parameters["tone_clear_snr_db"]
    assert (f"parameter changed: param.tone_clear_snr_db {shipped.value:g} dB in parameters.yaml -> 12 dB "
            "by site/s.yaml") in out
    assert out.count("parameter changed:") == 1
    assert main(["rulebook", "check"]) == 0
    assert "parameter changed" not in capsys.readouterr().out


def test_vocabulary_lists_the_values_a_field_can_take(capsys):
    assert main(["rulebook", "vocabulary"]) == 0
    out = capsys.readouterr().out
    line = next(x for x in out.splitlines() if x.strip().startswith("defect ") and "BPFO" in x)
    assert line.endswith("(one of: BPFO, BPFI, BSF, FTF)")


SITE_FAULT = """rulebook: site fault
faults:
  seal-rub:
    name: mechanical seal rubbing on the shaft
    family: shaft
    advice:
      urgency: plan-soon
      actions: [Check the seal flush line for flow and the seal faces for heat marks.]
      spares: [seal kit]
      confirm: [Listen at the seal gland with a stethoscope for a dry rub.]
      oil_tests:
        - {test: wear_debris, means: a rise points to the seal carrier wearing on the sleeve}
rules:
  - id: site.seal-rub
    title: an envelope family at the drive end stands for the seal rubbing at this site
    source: invented for a test
    needs: [{fact: envelope_tone, as: e, where: {defect: BPFI}}]
    explains: []
    concludes: {fault: seal-rub, component: e.component}
    certainty: 0.6
    because: "a test rule"
"""


def test_a_site_fault_gets_its_own_actions_in_the_report(tmp_path):
    from engine.machine import load_machine
    from engine.pipeline import diagnose, document_of
    from engine.reasoning import Reasoner
    from engine.report import render
    from engine.simulation import as_reading, simulate

    site = _site(tmp_path, SITE_FAULT)
    book = load_rulebook(site)
    machine = load_machine(ROOT / "cases/machines/rw2-raw-water-pump.yaml")
    sim = simulate(machine, "inner-race", "pump_de", 3, None, 12800.0, 3.0, 4)
    doc = document_of(diagnose(as_reading(sim, "rw2-test.wav"), machine, Reasoner(book)))
    h = next(h for h in doc["hypotheses"] if h["fault"] == "seal-rub")
    assert h["actions"] == ["Check the seal flush line for flow and the seal faces for heat marks."]
    assert h["spares"] == ["seal kit"] and h["urgency"]["id"] == "plan-soon"
    text = render(doc, "text")
    block = text.split("WHAT TO DO: mechanical seal rubbing on the shaft", 1)[1].split("WHAT TO DO", 1)[0]
    assert "Check the seal flush line" in block and "seal kit" in block and "dry rub" in block
    assert "seal carrier wearing" in text.split("WHAT TO DO", 1)[1]     # the oil tests are listed once, after


@pytest.mark.parametrize("change, problem", [
    ("urgency: plan-soon", "urgency: whenever"),
    ("{test: wear_debris,", "{test: tea_leaves,"),
])
def test_site_fault_advice_with_unknown_ids_is_refused_by_check(tmp_path, capsys, change, problem):
    site = _site(tmp_path, SITE_FAULT.replace(change, problem))
    assert main(["rulebook", "check", "--site", str(site)]) == 5
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "s.yaml:6" in err and problem.split(": ")[-1].strip("{,") in err


def test_site_fault_advice_is_schema_checked(tmp_path):
    with pytest.raises(RulebookError, match="actions"):
        load_rulebook(_site(tmp_path, SITE_FAULT.replace("      actions: [Check the seal flush line for flow and "
                                                         "the seal faces for heat marks.]\n", "")))


def test_check_notes_a_site_fault_without_advice(tmp_path, capsys):
    text = SITE_FAULT.split("    advice:")[0] + "rules:" + SITE_FAULT.split("rules:")[1]
    assert main(["rulebook", "check", "--site", str(_site(tmp_path, text))]) == 0
    assert "fault seal-rub" in capsys.readouterr().out


def test_a_value_no_rule_derives_is_refused_on_a_derived_kind(tmp_path):
    # bearing_defect_tones takes its defect from envelope_tone.defect in every shipped rule that derives it
    text = ("rulebook: s\nrules:\n  - id: site.derived\n    title: t\n    source: s\n"
            "    needs: [{fact: bearing_defect_tones, as: b, where: {defect: {one_of: [BFPI, bpfo]}}}]\n"
            "    concludes: {fault: inner-race, component: b.component}\n    certainty: 0.3\n    because: b\n")
    with pytest.raises(RulebookError) as err:
        load_rulebook(_site(tmp_path, text))
    assert "defect is never 'BFPI' in bearing_defect_tones facts" in str(err.value)
    assert "as the rules that derive bearing_defect_tones give it" in str(err.value)
    load_rulebook(_site(tmp_path, text.replace("bpfo", "BPFO")))    # one value that can occur is enough
