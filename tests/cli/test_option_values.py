"""Option values are checked when the command line is parsed: one line naming the option, exit 2.

The tests named ``test_defect_NN_*`` reproduce issue 12's defects and keep their names.
"""

from __future__ import annotations

import pytest

from bench.hostile import seed_signal

from support import RW2, npz_reading, one_error_line


@pytest.mark.parametrize("option, value", [("--rpm", "inf"), ("--rpm", "nan"), ("--rpm", "-5"), ("--rpm", "1e300"),
                                           ("--sample-rate", "nan"), ("--scale", "0"), ("--scale", "-inf")])
def test_defect_07_option_values_checked_when_parsed(tmp_path, capsys, option, value):
    path = npz_reading(tmp_path / "r.npz", seed_signal())
    err = one_error_line(capsys, 2, ["diagnose", path, "--machine", RW2, option, value])
    assert f"argument {option}:" in err
