"""JSON output (engine/common/jsonout.py) is strict RFC 8259: no NaN or Infinity, numpy values as plain
numbers, from the library and from every command that writes JSON.

The tests named ``test_defect_NN_*`` reproduce issue 12's defects and keep their names.
"""

from __future__ import annotations

import numpy as np
import pytest

from bench.hostile import seed_signal, strict_json
from engine.cli import main
from engine.common.jsonout import dumps

from support import RW2, npz_reading


def test_defect_08_frequencies_json_with_infinite_rpm(capsys):
    assert main(["frequencies", str(RW2), "--json", "--rpm", "inf"]) == 2
    captured = capsys.readouterr()
    assert captured.out == "" and "Infinity" not in captured.err


def test_defect_08_json_output_is_rfc_8259_even_with_non_finite_values():
    text = dumps({"velocity_rms_mm_s": float("inf"), "crest": float("nan"), "n": np.float32(1.5),
                  "ok": np.bool_(True), "list": (np.int64(3), -float("inf"))})
    assert strict_json(text) == {"velocity_rms_mm_s": None, "crest": None, "n": 1.5, "ok": True, "list": [3, None]}


@pytest.mark.parametrize("argv", [["frequencies", RW2, "--json"],
                                  ["evidence", "READING", "--machine", RW2, "--json"],
                                  ["diagnose", "READING", "--machine", RW2, "--format", "json"]])
def test_defect_08_every_json_command_writes_strict_json(tmp_path, capsys, argv):
    reading = npz_reading(tmp_path / "r.npz", seed_signal())
    assert main([str(reading) if a == "READING" else str(a) for a in argv]) in (0, 7)
    strict_json(capsys.readouterr().out)
