"""Guarded YAML reading (engine/common/yamlfile.py): aliases, tags, size, control characters and the
YAML 1.2 core schema, seen through every file a user gives (machine, sidecar, site overlay).

The tests named ``test_defect_NN_*`` reproduce issue 12's defects and keep their names.
"""

from __future__ import annotations

import time

import numpy as np
import pytest

from bench.hostile import seed_signal
from engine.common.errors import MachineError, ReadingError, RulebookError
from engine.common.yamlfile import MAX_BYTES
from engine.readings import load_reading, sidecar_path

from support import npz_reading, one_error_line

RECURSIVE = "machine: &a [*a]\n"


def test_defect_01_recursive_alias_in_a_machine_file(tmp_path, capsys):
    path = tmp_path / "m.yaml"
    path.write_text(RECURSIVE)
    err = one_error_line(capsys, MachineError.exit_code, ["frequencies", path])
    assert "m.yaml:1: an alias refers to a mapping or list that contains it" in err


def test_defect_01_recursive_alias_in_a_sidecar(tmp_path, capsys):
    path = npz_reading(tmp_path / "r.npz", seed_signal())
    sidecar_path(path).write_text("point: &p {name: *p}\n")
    err = one_error_line(capsys, ReadingError.exit_code, ["reading", path])
    assert "r.npz.yaml:1:" in err


def test_defect_01_recursive_alias_in_a_site_overlay(tmp_path, capsys):
    site = tmp_path / "site.yaml"
    site.write_text("rulebook: site\nrules: &r\n  - *r\n")
    err = one_error_line(capsys, RulebookError.exit_code, ["rulebook", "check", "--site", site])
    assert "site.yaml:2: an alias refers to a mapping or list that contains it" in err


def test_defect_02_alias_bomb_is_refused_quickly(tmp_path, capsys):
    # nine aliases per level, eight levels: 9**8 = 43 million values from about 300 bytes
    levels = ["a: &a [x, x, x, x, x, x, x, x, x]"]
    for i in range(8):
        name, prev = chr(98 + i), chr(97 + i)
        levels.append(f"{name}: &{name} [" + ", ".join([f"*{prev}"] * 9) + "]")
    path = tmp_path / "m.yaml"
    path.write_text("\n".join(levels) + "\n")
    assert path.stat().st_size < 400
    started = time.perf_counter()
    err = one_error_line(capsys, MachineError.exit_code, ["frequencies", path])
    assert time.perf_counter() - started < 2.0
    assert "aliases repeat too much" in err


def test_defect_02_document_size_is_limited(tmp_path, capsys):
    path = tmp_path / "m.yaml"
    path.write_text("machine: m\n" + "# padding\n" * (MAX_BYTES // 10 + 1))
    assert "larger than 1024 KiB" in one_error_line(capsys, MachineError.exit_code, ["frequencies", path])


@pytest.mark.parametrize("text, words", [
    ("machine: !!float abc\n", "cannot read 'abc' as a number"),
    ("machine: !!int 1.5\n", "cannot read '1.5' as an integer"),
    ("machine: !!bool maybe\n", "cannot read 'maybe' as true or false"),
    ("machine: !!set {a, b}\n", "the YAML tag !!set is not supported"),
    ("machine: !!python/name:os.system ''\n", "the YAML tag !!python/name:os.system is not supported"),
    ("machine: !custom 1\n", "the YAML tag !custom is not supported"),
])
def test_defect_03_tags_that_cannot_read_their_value(tmp_path, capsys, text, words):
    path = tmp_path / "m.yaml"
    path.write_text(text)
    err = one_error_line(capsys, MachineError.exit_code, ["frequencies", path])
    assert f"m.yaml:1: not valid YAML: {words}" in err


def test_defect_09_control_character_is_one_line(tmp_path, capsys):
    path = tmp_path / "m.yaml"
    path.write_text("machine: m\nplant: a\x01b\n")
    err = one_error_line(capsys, MachineError.exit_code, ["frequencies", path])
    assert "m.yaml:2: not valid YAML: character U+0001 is not allowed" in err


def test_defect_09_exponent_without_a_dot_is_a_number(tmp_path):
    path = npz_reading(tmp_path / "r.npz", seed_signal() * 1000.0, unit="mm/s")
    sidecar_path(path).write_text("unit: g\nscale: 1e-3\n")
    r = load_reading(path)
    # 1e-3 x the samples in g: the sidecar's scale read as the number it is
    assert np.max(np.abs(r.channels[0].samples)) == pytest.approx(np.max(np.abs(seed_signal())) * 9.80665)


def test_defect_09_yaml_1_1_surprises_are_gone(tmp_path):
    from engine.common.yamlfile import read_yaml

    path = tmp_path / "x.yaml"
    path.write_text("a: 1:30\nb: 017\nc: yes\nd: 2024-01-01\ne: 0o17\nf: 1E3\n")
    data = read_yaml(path, MachineError).data
    # YAML 1.2.2, section 10.3.2 (core schema): no sexagesimal, octal 0o, no yes/no booleans, no dates
    assert data == {"a": "1:30", "b": 17, "c": "yes", "d": "2024-01-01", "e": 15, "f": 1000.0}
