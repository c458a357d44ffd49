"""YAML values no file should hold are one-line errors naming the file, the line and the field.

The reproducer: an integer written with 400 digits was an ``OverflowError`` in
``yamlfile._check_numbers`` (it formatted the number as a float to say it was
too large). Integers of any length, floats beyond what a float holds, huge
keys and names no system can open are now refused with a plain sentence; the
reader is fuzzed with any YAML scalar.
"""

from __future__ import annotations

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from engine.common.errors import MachineError, ReadingError, RouteError
from engine.common.yamlfile import MAX_INTEGER, read_yaml
from engine.machine import load_machine
from engine.readings import load_reading


def _yaml(tmp_path, text: str):
    path = tmp_path / "f.yaml"
    path.write_text(text)
    return path


@pytest.mark.parametrize("text, line, words", [
    ("a: 1\nb: " + "9" * 400 + "\n", 2, "b: number too large (about 1e399"),
    ("b: -" + "9" * 400 + "\n", 1, "b: number too large (about -1e399"),
    ("b: " + "9" * 5000 + "\n", 1, "b: number too large (about 1e4999"),     # beyond Python's int parsing limit
    ("b: 0x" + "f" * 5000 + "\n", 1, "b: number too large (about 1e6019"),
    ("b: [1, " + "1" * 400 + "]\n", 1, "b.1: number too large"),
    ("b: !!float " + "9" * 400 + "\n", 1, "b: expected a finite number, got 999"),
    ("b: 1e400\n", 1, "b: expected a finite number, got 1e400 (larger than any number can be"),
    ("b: " + str(MAX_INTEGER + 1) + "\n", 1, "b: number too large (1e+15"),
    ("b:\n  ? " + "7" * 2000 + "\n  : 1\n", 1, "b: a key's number too large (about 1e1999"),
], ids=["400-digits", "negative", "5000-digits", "hex", "in-a-list", "float-tag", "1e400", "just-over", "key"])
def test_an_absurd_number_is_one_line_naming_file_line_and_field(tmp_path, text, line, words):
    path = _yaml(tmp_path, text)
    with pytest.raises(RouteError) as err:
        read_yaml(path, RouteError)
    assert str(err.value).startswith(f"{path}:{line}: {words}"), str(err.value)


def test_integers_up_to_the_limit_and_leading_zeros_read_as_written(tmp_path):
    doc = read_yaml(_yaml(tmp_path, f"a: {MAX_INTEGER}\nb: {'0' * 100}7\nc: 0x{'0' * 90}ff\n"), RouteError)
    assert doc.data == {"a": MAX_INTEGER, "b": 7, "c": 255}


def test_a_machine_file_with_a_400_digit_speed_is_a_machine_error(tmp_path):
    path = _yaml(tmp_path, "machine: m\nshafts:\n  - id: s\n    speed_rpm: " + "1" * 400 + "\n")
    with pytest.raises(MachineError, match=r"f.yaml:4: shafts.0.speed_rpm: number too large"):
        load_machine(path)


@pytest.mark.parametrize("name", ["a\x00b.yaml", "a\ud800.yaml"], ids=["nul", "lone-surrogate"])
def test_a_name_no_file_can_have_is_a_clean_error(name):
    with pytest.raises(RouteError, match="cannot open: the name holds a character no file name can"):
        read_yaml(name, RouteError)
    with pytest.raises(ReadingError, match="cannot open: the name holds a character no file name can"):
        load_reading(name.replace(".yaml", ".wav"))


plain_scalars = st.one_of(
    st.text(alphabet="0123456789+-.eExXoOabcdefABCDEF_:", min_size=1, max_size=80),
    st.integers(min_value=-10 ** 600, max_value=10 ** 600).map(str),
    st.floats().map(repr),
    st.from_regex(r"[-+]?[0-9]{1,700}(\.[0-9]*)?([eE][-+]?[0-9]{1,4})?", fullmatch=True),
)


@settings(max_examples=400, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(scalar=plain_scalars, tag=st.sampled_from(["", "!!int ", "!!float ", "!!str "]))
def test_any_scalar_reads_or_is_a_one_line_error(tmp_path, scalar, tag):
    path = _yaml(tmp_path, f"value: {tag}{scalar}\n")
    try:
        doc = read_yaml(path, RouteError)
    except RouteError as exc:
        assert str(exc).startswith(f"{path}:1: ") and "\n" not in str(exc)
        return
    value = doc.data["value"]
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        assert abs(value) <= MAX_INTEGER if isinstance(value, int) else abs(value) < float("inf")
