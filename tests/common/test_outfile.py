"""Writing a file (engine/common/outfile.py): the content is synced before the rename, an interrupted
write keeps the old file, and stale part files of the same target are cleared.

The tests named ``test_defect_NN_*`` reproduce issue 12's defects and keep their names.
"""

from __future__ import annotations

import os
import time

import pytest

from engine.common import outfile
from engine.report import write_atomically


def test_defect_10_stale_part_files_of_the_target_are_removed(tmp_path):
    target = tmp_path / "report.txt"
    dead_pid = 2 ** 22 + 12345          # above Linux's pid_max: no such process
    stale = tmp_path / f".report.txt.{dead_pid}.abcd1234.part"
    stale.write_bytes(b"x" * 1024)
    old = tmp_path / f".report.txt.{os.getpid()}.old00000.part"
    old.write_bytes(b"y")
    os.utime(old, (time.time() - 2 * outfile.STALE_PART_S,) * 2)
    running = tmp_path / f".report.txt.{os.getpid()}.live0000.part"
    running.write_bytes(b"z")
    someone_elses = tmp_path / ".notes.txt.1.abcd.part"
    someone_elses.write_bytes(b"n")
    write_atomically(target, "report\n")
    assert target.read_text() == "report\n"
    assert not stale.exists() and not old.exists()
    assert running.exists() and someone_elses.exists()


def test_defect_10_content_is_synced_before_the_rename(tmp_path, monkeypatch):
    events = []
    real_fsync, real_replace = os.fsync, os.replace
    monkeypatch.setattr(os, "fsync", lambda fd: (events.append("fsync"), real_fsync(fd))[1])
    monkeypatch.setattr(os, "replace", lambda a, b: (events.append("replace"), real_replace(a, b))[1])
    write_atomically(tmp_path / "r.txt", "text\n")
    assert events[:2] == ["fsync", "replace"]


def test_defect_10_interrupted_write_keeps_the_old_file_and_leaves_no_part(tmp_path, monkeypatch):
    target = tmp_path / "r.txt"
    target.write_text("old report\n")

    def interrupted(a, b):
        raise KeyboardInterrupt
    monkeypatch.setattr(os, "replace", interrupted)
    with pytest.raises(KeyboardInterrupt):
        write_atomically(target, "new report\n")
    assert target.read_text() == "old report\n"
    assert [p.name for p in tmp_path.iterdir()] == ["r.txt"]
