"""Ctrl-C while a route's fork server imports the engine for its workers (engine/route/runner.py,
``_start_fork_server``) ends the route with ``tellwave: interrupted`` and 130, and no process prints
a traceback."""

from __future__ import annotations

import os
import subprocess
import time

import pytest
from routes import make_route, processes_in_groups

from support import CONSOLE_SCRIPT, ROOT, interrupt


def _fork_server_of(pgid: int) -> bool:
    """Whether a process of group ``pgid`` is a multiprocessing fork server."""
    return any(b"forkserver" in cmdline for cmdline in processes_in_groups({pgid}).values())


@pytest.mark.slow
@pytest.mark.skipif(not os.path.isdir("/proc"), reason="reads the process table from /proc")
def test_ctrl_c_while_route_workers_start_is_one_line_and_130(tmp_path):
    route = make_route(tmp_path / "r", n=4, bad=False, seed=7)
    proc = subprocess.Popen([*CONSOLE_SCRIPT, "route", str(route), "--store", str(tmp_path / "h.sqlite"),
                             "--out", str(tmp_path / "out"), "--workers", "2", "--quiet"],
                            cwd=ROOT, start_new_session=True, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    # the fork server imports the engine before its workers start: the moment a Ctrl-C used to reach
    # it (and them) before they ignored it, and each printed a traceback
    seen: list[float] = []

    def importing() -> bool:            # well into the fork server's imports, past the interpreter's start
        if not seen and _fork_server_of(proc.pid):
            seen.append(time.monotonic())
        return bool(seen) and time.monotonic() - seen[0] >= 0.3

    code, err = interrupt(proc, importing)
    assert "Traceback" not in err and "KeyboardInterrupt" not in err, err
    assert code == 130, (code, err)
    assert "tellwave: interrupted" in err
