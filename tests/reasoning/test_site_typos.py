"""What a site's rulebook gets told when it mistypes: a parameter no rule reads, a unit written where a number
goes, a field, fault or disabled id a letter off. Each is one RulebookError naming the file and line."""

from __future__ import annotations

import math

import pytest

from engine.common.errors import RulebookError
from engine.reasoning import load_rulebook

RULE = """\
rules:
  - id: site.fan.axial-1x
    title: Axial 1X at the fan
    source: invented for this test
    needs:
      - fact: tone
        as: t
        where: {{name: 1X, direction: axial, component: {{same_as: location_shaft}}, {field}: {{at_least: {value}}}}}
    concludes: {{fault: {fault}, component: t.component}}
    certainty: 0.5
    because: axial 1X of {{t.amplitude_mm_s}}
"""


def _site(tmp_path, text: str):
    folder = tmp_path / "site"
    folder.mkdir()
    (folder / "s.yaml").write_text("rulebook: invented site (demo data)\n" + text, encoding="utf-8")
    return folder


def _problem(tmp_path, text: str) -> str:
    with pytest.raises(RulebookError) as err:
        load_rulebook(_site(tmp_path, text))
    assert "s.yaml:" in str(err.value) and "\n" not in str(err.value)
    return str(err.value)


def test_a_mistyped_parameter_gets_a_did_you_mean_on_the_first_error(tmp_path):
    text = _problem(tmp_path, "parameters: {one_x_notable_mms: 2.0}\n")
    assert "needs unit, about, source" in text and "did you mean 'one_x_notable_mm_s'?" in text


def test_a_site_parameter_no_rule_reads_is_an_error_with_the_nearest_shipped_name(tmp_path):
    text = _problem(tmp_path, "parameters:\n  one_x_notable_mms: {value: 2.0, unit: mm/s RMS, about: x, source: y}\n")
    assert "parameters.one_x_notable_mms: no rule reads it" in text and "did you mean 'one_x_notable_mm_s'?" in text


def test_a_site_parameter_a_site_rule_reads_is_accepted(tmp_path):
    rule = RULE.format(field="amplitude_mm_s", value="param.fan_axial_mm_s", fault="unbalance")
    book = load_rulebook(_site(tmp_path, rule + "parameters:\n  fan_axial_mm_s: "
                                             "{value: 2.5, unit: mm/s RMS, about: fan axial 1X, source: site}\n"))
    assert book.parameters["fan_axial_mm_s"].value == 2.5 and book.rule("site.fan.axial-1x")


def test_a_threshold_with_a_unit_says_which_unit_the_field_is_in(tmp_path):
    text = _problem(tmp_path, RULE.format(field="amplitude_mm_s", value="0.08 in/s", fault="unbalance"))
    # 1 in = 25.4 mm exactly (international yard and pound, 1959); peak = sqrt(2) x RMS of a sine (handbook)
    assert "units are not written here; amplitude_mm_s is in mm/s RMS: write the number alone" in text
    assert f"0.08 in/s RMS is {0.08 * 25.4:.3g} mm/s RMS" in text
    assert f"0.08 in/s peak of one line is {0.08 * 25.4 / math.sqrt(2):.3g} mm/s RMS" in text
    assert "alias.field" not in text


def test_a_parameter_with_a_unit_says_the_unit_and_no_python_repr(tmp_path):
    text = _problem(tmp_path, "parameters:\n  one_x_notable_mm_s: {value: 0.1 in/s RMS, source: site 2026-11}\n")
    assert "parameters.one_x_notable_mm_s: '0.1 in/s RMS': units are not written here; it is in mm/s RMS" in text
    assert "0.1 in/s RMS is 2.54 mm/s RMS" in text and "{" not in text
    (tmp_path / "b").mkdir()
    text = _problem(tmp_path / "b", "parameters:\n  one_x_notable_mm_s: {value: 0.1, unit: in/s RMS}\n")
    assert "differs from 'mm/s RMS'" in text and "write the value in mm/s RMS (0.1 in/s RMS is 2.54 mm/s RMS)" in text


@pytest.mark.parametrize("field, fault, hint", [
    ("amplitude_mms", "unbalance", "did you mean 'amplitude_mm_s'?"),
    ("amplitude_mm_s", "unbalanse", "did you mean 'unbalance'?"),
])
def test_field_and_fault_typos_get_a_did_you_mean(tmp_path, field, fault, hint):
    assert hint in _problem(tmp_path, RULE.format(field=field, value=2.0, fault=fault))


def test_a_disabled_id_typo_gets_a_did_you_mean(tmp_path):
    text = _problem(tmp_path, "disable:\n  - {rule: shaft.unbalance.radial1x, reason: test}\n")
    assert "did you mean 'shaft.unbalance.radial-1x'?" in text
