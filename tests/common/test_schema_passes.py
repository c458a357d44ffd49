"""Documents that passed their JSON Schema are remembered between processes (``engine.common.passed``).

The memory must never give a stale answer: a pass is keyed by the schema, the data with its types and
the installed validator, and only a pass is remembered, so any change of any of them, and any document
with a problem, is checked by jsonschema in full.
"""

from __future__ import annotations

import jsonschema
import pytest

from engine.common import passed
from engine.common.errors import RulebookError
from engine.common.yamlfile import YamlDocument, first_problem

SCHEMA = "sidecar.schema.json"
GOOD = {"unit": "g", "speed_rpm": 1486.0, "channels": [{"name": "P2H", "point": "P2H", "direction": "horizontal"}]}


@pytest.fixture
def memory(tmp_path, monkeypatch):
    """Passes remembered in a folder of the test's own."""
    place = tmp_path / "passes"
    monkeypatch.setattr(passed, "folder", lambda: place)
    return place


@pytest.fixture
def validator_calls(monkeypatch):
    """Counts the documents jsonschema is asked to check."""
    calls = []
    real = jsonschema.Draft202012Validator

    def counting(schema):
        inner = real(schema)

        class Counting:
            def iter_errors(self, instance):
                calls.append(instance)
                return inner.iter_errors(instance)

        return Counting()

    monkeypatch.setattr(jsonschema, "Draft202012Validator", counting)
    return calls


def _doc(data) -> YamlDocument:
    return YamlDocument("r.npz.yaml", data, {})


def test_a_pass_is_remembered_and_not_checked_again(memory, validator_calls):
    assert first_problem(_doc(GOOD), SCHEMA) is None
    assert len(list(memory.iterdir())) == 1
    assert first_problem(_doc(dict(GOOD)), SCHEMA) is None      # equal data, a new object
    assert len(validator_calls) == 1


def test_a_problem_is_never_remembered(memory, validator_calls):
    bad = {**GOOD, "speed_rpm": "fast"}
    first = first_problem(_doc(bad), SCHEMA)
    assert first is not None and first[0] == ["speed_rpm"]
    assert first_problem(_doc(bad), SCHEMA) == first
    assert len(validator_calls) == 2
    assert not memory.exists() or list(memory.iterdir()) == []


def test_a_changed_value_is_checked_afresh(memory, validator_calls):
    assert first_problem(_doc(GOOD), SCHEMA) is None
    changed = {**GOOD, "speed_rpm": -5}
    assert first_problem(_doc(changed), SCHEMA) is not None       # the schema asks for a positive speed
    assert len(validator_calls) == 2


@pytest.mark.parametrize("a, b", [(1, "1"), (1, 1.0), (1, True), (0, False), (None, "None"),
                                  ({1: "x"}, {"1": "x"}), (["a"], "['a']")])
def test_values_that_print_alike_in_json_have_different_keys(a, b):
    assert passed.key("{}", a) != passed.key("{}", b)


def test_the_schema_and_the_validator_are_in_the_key(monkeypatch):
    base = passed.key('{"type": "object"}', GOOD)
    assert passed.key('{"type": "array"}', GOOD) != base
    monkeypatch.setattr(passed, "_validator_stamp", lambda: "jsonschema:another install")
    assert passed.key('{"type": "object"}', GOOD) != base


def test_data_outside_the_json_model_is_not_remembered(memory, validator_calls):
    class Name(str):
        pass

    for odd in ({**GOOD, "unit": Name("g")}, {**GOOD, "channels": ({"name": "P2H"},)}):
        assert passed.key("{}", odd) is None
        first_problem(_doc(odd), SCHEMA)
    assert not memory.exists()


def test_a_folder_that_cannot_be_written_leaves_every_check_in_full(tmp_path, monkeypatch, validator_calls):
    blocker = tmp_path / "a-file"
    blocker.write_text("not a folder")
    monkeypatch.setattr(passed, "folder", lambda: blocker / "passes")
    assert first_problem(_doc(GOOD), SCHEMA) is None
    assert first_problem(_doc(GOOD), SCHEMA) is None
    assert len(validator_calls) == 2


def test_a_site_rulebook_edited_into_an_error_is_refused_after_it_passed(memory, tmp_path):
    from engine.reasoning import load_rulebook

    site = tmp_path / "site.yaml"
    site.write_text("rulebook: invented site (demo data)\nparameters:\n  tone_chance_pct: 5\n")
    load_rulebook(site)                                  # passes, and is remembered
    assert any(memory.iterdir())
    site.write_text("rulebook: invented site (demo data)\nparameters:\n  tone_chance_pct: 5\nrules: 12\n")
    with pytest.raises(RulebookError, match="site.yaml:4: rules: expected array"):
        load_rulebook(site)


def test_the_folder_is_kept_to_a_bounded_number_of_passes(memory, monkeypatch):
    """Past the cap the oldest passes go, down to three quarters of it; the newest stay."""
    import os

    from engine.common import paths

    monkeypatch.setattr(paths, "CACHE_FILES_MOST", 8)
    names = [f"{i:064x}" for i in range(9)]
    for i, name in enumerate(names[:8]):
        passed.remember(name)
        os.utime(memory / name, ns=(10**9 * (i + 1), 10**9 * (i + 1)))
    assert len(list(memory.iterdir())) == 8          # at the cap: nothing trimmed
    passed.remember(names[8])
    left = sorted(p.name for p in memory.iterdir())
    assert left == sorted(names[3:])                 # 9 files, trimmed to 6: the three oldest went
    assert passed.remembered(names[8])


def test_trimming_a_folder_that_is_gone_is_no_error(tmp_path):
    from engine.common.paths import trim

    trim(tmp_path / "never-made", most=1)
