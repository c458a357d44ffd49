"""Ctrl-C at any moment ends the command with ``tellwave: interrupted`` and exit code 130, never a
traceback, while the engine is imported (engine/start.py); tests/route/test_route_interrupt.py does the
same for a route's workers."""

from __future__ import annotations

import os
import subprocess
import time

import pytest

from support import CASES, CONSOLE_SCRIPT, ROOT, interrupt

PUMP = CASES / "machines" / "rw2-raw-water-pump.yaml"

pytestmark = pytest.mark.skipif(not hasattr(os, "killpg"), reason="sends Ctrl-C to a process group")


@pytest.mark.parametrize("delay_s", [0.25, 0.5, 0.9])
def test_ctrl_c_while_the_engine_is_imported_is_one_line_and_130(tmp_path, delay_s):
    # synth imports numpy, scipy and the simulator before it writes anything: seconds of imports and work
    proc = subprocess.Popen([*CONSOLE_SCRIPT, "synth", str(PUMP), "--fault", "unbalance", "--duration", "30",
                             "-o", str(tmp_path / "x.wav")],
                            cwd=ROOT, start_new_session=True, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    started = time.monotonic()
    code, err = interrupt(proc, lambda: time.monotonic() - started >= delay_s)
    assert "Traceback" not in err, err
    assert code == 130, (code, err)
    assert err.strip().splitlines()[-1] == "tellwave: interrupted", err


def test_a_ctrl_c_python_cannot_raise_is_raised_again_not_printed(capsys, monkeypatch):
    # Ctrl-C inside a weak reference's callback of the import lock was printed as "Exception ignored in:
    # <function _get_module_lock.<locals>.cb>" with a traceback (seen once in the 0.5 s case above); an
    # object's __del__ is another place Python cannot raise from, and so reports through the same hook
    import signal
    import sys

    from engine.start import interrupt_again

    class Raises:
        def __init__(self, exc: BaseException) -> None:
            self.exc = exc

        def __del__(self) -> None:
            raise self.exc

    monkeypatch.setattr(sys, "unraisablehook", interrupt_again)
    monkeypatch.setattr(sys, "__unraisablehook__", sys.__unraisablehook__)
    old = signal.signal(signal.SIGINT, signal.default_int_handler)
    try:
        with pytest.raises(KeyboardInterrupt):
            Raises(KeyboardInterrupt())
            time.sleep(0.1)            # the raised signal's handler runs at the next bytecode
    finally:
        signal.signal(signal.SIGINT, old)
    assert "Traceback" not in capsys.readouterr().err
    Raises(ValueError("not an interrupt"))
    assert "not an interrupt" in capsys.readouterr().err      # anything else still goes to Python's own hook
