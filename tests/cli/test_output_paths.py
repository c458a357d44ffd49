"""Where a command may write: empty names, folders, inputs of the run, symbolic links, FIFOs and
folders it may not write in are refused in one line before any work, and nothing is replaced.

The tests named ``test_defect_NN_*`` reproduce issue 12's defects and keep their names.
"""

from __future__ import annotations

import os
import stat

import pytest

from bench.hostile import seed_signal
from engine.common.errors import OutputError
from engine.readings import sidecar_path

from support import RW2, npz_reading, one_error_line


@pytest.fixture
def reading_file(tmp_path):
    return npz_reading(tmp_path / "r.npz", seed_signal())


@pytest.mark.parametrize("target, words", [
    ("", "the output file name is empty"),
    ("FOLDER", "is a folder"),
    ("FOLDER/", "names a folder"),
    ("READING", "is an input of this run"),
    ("SIDECAR", "is an input of this run"),
    ("MACHINE", "is an input of this run"),
    ("FILE/report.txt", "cannot write here (Not a directory)"),
])
def test_defect_10_output_path_refused(tmp_path, capsys, reading_file, target, words):
    machine = tmp_path / "m.yaml"
    machine.write_text(RW2.read_text())
    sidecar_path(reading_file).write_text("point: P1H\n")
    (tmp_path / "a_file").write_text("keep me\n")
    target = (target.replace("FOLDER", str(tmp_path)).replace("READING", str(reading_file))
              .replace("SIDECAR", str(sidecar_path(reading_file))).replace("MACHINE", str(machine))
              .replace("FILE", str(tmp_path / "a_file")))
    kept = {p: p.read_bytes() for p in tmp_path.iterdir() if p.is_file()}
    err = one_error_line(capsys, OutputError.exit_code,
                         ["diagnose", reading_file, "--machine", machine, "--format", "json", "-o", target])
    assert words in err
    assert {p: p.read_bytes() for p in tmp_path.iterdir() if p.is_file()} == kept


def test_defect_10_symlink_is_not_replaced(tmp_path, capsys, reading_file):
    real = tmp_path / "real.txt"
    real.write_text("the user's notes\n")
    link = tmp_path / "link.txt"
    link.symlink_to(real)
    err = one_error_line(capsys, OutputError.exit_code, ["diagnose", reading_file, "--machine", RW2, "-o", link])
    assert "is a symbolic link" in err
    assert link.is_symlink() and real.read_text() == "the user's notes\n"


def test_defect_10_non_regular_target_is_not_replaced(tmp_path, capsys, reading_file):
    # a FIFO stands for every file that is not a regular one (device nodes too: the check is the
    # same S_ISREG); never test this on a real device, which a regression would replace as root
    fifo = tmp_path / "pipe"
    os.mkfifo(fifo)
    err = one_error_line(capsys, OutputError.exit_code, ["diagnose", reading_file, "--machine", RW2, "-o", fifo])
    assert "is not a regular file" in err
    assert stat.S_ISFIFO(os.lstat(fifo).st_mode)


def test_defect_10_unwritable_folder(tmp_path, capsys, reading_file, monkeypatch):
    # a folder the user may not write in; faked, since the suite may run as root, who may write anywhere
    import tempfile

    def refused(*args, **kwargs):
        raise PermissionError(13, "Permission denied")
    monkeypatch.setattr(tempfile, "mkstemp", refused)
    err = one_error_line(capsys, OutputError.exit_code,
                         ["diagnose", reading_file, "--machine", RW2, "-o", tmp_path / "r.txt"])
    assert "r.txt: cannot write here (Permission denied)" in err
    assert not (tmp_path / "r.txt").exists()


def test_defect_10_synth_never_writes_over_its_machine(tmp_path, capsys):
    machine = tmp_path / "m.wav.yaml"           # a machine file named like the sidecar synth would write
    machine.write_text(RW2.read_text())
    err = one_error_line(capsys, OutputError.exit_code, ["synth", machine, "-o", tmp_path / "m.wav"])
    assert "is an input of this run" in err and machine.read_text() == RW2.read_text()


def test_defect_10_demo_folder_that_is_a_file(tmp_path, capsys):
    target = tmp_path / "demo"
    target.write_text("not a folder\n")
    assert "is a file, not a folder" in one_error_line(capsys, OutputError.exit_code, ["demo", "--out", target])
