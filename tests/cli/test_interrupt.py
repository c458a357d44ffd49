"""Ctrl-C at any moment ends the command with ``tellwave: interrupted`` and exit code 130, never a
traceback, while the engine is imported (engine/start.py); tests/route/test_route_interrupt.py does the
same for a route's workers."""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time

import pytest

from support import CASES, ROOT

# the console script's own code (pyproject: tellwave = "engine.start:script")
SCRIPT = [sys.executable, "-c", "from engine.start import script; script()"]
PUMP = CASES / "machines" / "rw2-raw-water-pump.yaml"

pytestmark = pytest.mark.skipif(not hasattr(os, "killpg"), reason="sends Ctrl-C to a process group")


def _interrupt(proc: subprocess.Popen, when) -> tuple[int, str]:
    """Ctrl-C to the whole process group (as a terminal sends it) once ``when()`` is true."""
    try:
        deadline = time.monotonic() + 60
        while not when() and proc.poll() is None and time.monotonic() < deadline:
            time.sleep(0.01)
        assert proc.poll() is None, "the command ended before it could be interrupted"
        os.killpg(proc.pid, signal.SIGINT)
        _, err = proc.communicate(timeout=90)
    finally:
        if proc.poll() is None:
            os.killpg(proc.pid, signal.SIGKILL)
            proc.wait()
    return proc.returncode, err.decode(errors="replace")


@pytest.mark.parametrize("delay_s", [0.25, 0.5, 0.9])
def test_ctrl_c_while_the_engine_is_imported_is_one_line_and_130(tmp_path, delay_s):
    # synth imports numpy, scipy and the simulator before it writes anything: seconds of imports and work
    proc = subprocess.Popen([*SCRIPT, "synth", str(PUMP), "--fault", "unbalance", "--duration", "30",
                             "-o", str(tmp_path / "x.wav")],
                            cwd=ROOT, start_new_session=True, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    started = time.monotonic()
    code, err = _interrupt(proc, lambda: time.monotonic() - started >= delay_s)
    assert "Traceback" not in err, err
    assert code == 130, (code, err)
    assert err.strip().splitlines()[-1] == "tellwave: interrupted", err
