"""Helpers the tests share: where the shipped and test files are, known signals, an HTML checker,
the command line's one-error-line check, and the demo cases' diagnoses made once a session."""

from __future__ import annotations

import functools
import os
import signal
import subprocess
import sys
import time
from html.parser import HTMLParser
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parent.parent
CASES = ROOT / "cases"
TEST_MACHINES = Path(__file__).resolve().parent / "machines"
TEST_DATA = Path(__file__).resolve().parent / "data"
SHARED_DATASETS = ROOT.parent / "shared" / "datasets"


def tone(freq_hz, fs, n, amplitude=1.0, phase=0.0):
    """A sine of ``amplitude`` (peak) at ``freq_hz``, ``n`` samples at ``fs``."""
    t = np.arange(n) / fs
    return amplitude * np.sin(2 * np.pi * freq_hz * t + phase)


class HtmlChecker(HTMLParser):
    """Feed it HTML: ``errors`` lists end tags that close nothing open, ``stack`` what is left open,
    ``links`` every src or href that points outside the page."""

    VOID = {"meta", "br", "img", "link", "hr", "input", "area", "base", "col", "source", "wbr"}

    def __init__(self):
        super().__init__()
        self.stack, self.errors, self.links = [], [], []

    def _links(self, attrs):
        self.links += [v for name, v in attrs if name in ("src", "href") and v and not v.startswith("#")]

    def handle_starttag(self, tag, attrs):
        self._links(attrs)
        if tag not in self.VOID:
            self.stack.append(tag)

    def handle_startendtag(self, tag, attrs):
        self._links(attrs)

    def handle_endtag(self, tag):
        if tag in self.VOID:
            return
        if not self.stack or self.stack[-1] != tag:
            self.errors.append(f"unexpected </{tag}> (open: {self.stack[-3:]})")
        else:
            self.stack.pop()


def tone_fact(fid: str = "tone-1", channel: str = "P1H", amplitude_mm_s=1.0, amplitude_g=0.1, snr_db=40.0) -> dict:
    """A ``tone`` evidence fact for 1X of the RW-2 pump on ``channel``, for rule tests (None: a level left out)."""
    return {"kind": "tone", "id": fid, "channel": channel, "point": channel, "direction": "horizontal",
            "location": "pump_de", "location_shaft": "pump", "name": "1X", "component": "pump", "family": "shaft",
            "shaft": "pump", "expected_hz": 24.8, "freq_hz": 24.8, "amplitude_mm_s": amplitude_mm_s,
            "amplitude_g": amplitude_g, "snr_db": snr_db, "ratio_to_1x": 1.0, "ratio_to_bearing_1x": 1.0}


# ---------------------------------------------------------------- the command line's promises on bad input

RW2 = CASES / "machines/rw2-raw-water-pump.yaml"
FS = 8192.0


def one_error_line(capsys, code, argv):
    """Run the command line; it must fail with ``code`` and one ``tellwave: error:`` line."""
    from engine.cli import main

    assert main([str(a) for a in argv]) == code
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and err.startswith("tellwave: error: "), err
    assert "Traceback" not in err
    return err


def npz_reading(path, x, fs=FS, unit="g", **meta):
    """Write ``x`` as a one-channel .npz reading at ``fs`` in ``unit``; returns ``path``."""
    np.savez(path, a=x, sample_rate_hz=fs, unit=unit, **meta)
    return path


# ---------------------------------------------------------------- the demo cases' diagnoses, made once a session

REPORT_FORMATS = ("text", "md", "html")
MADE_AT = "2026-03-04T10:15+01:00"


@functools.cache
def reasoner(*site):
    """A Reasoner over the shipped rulebooks (and ``site`` overlays), built once per session."""
    from engine.reasoning import Reasoner, load_rulebook

    return Reasoner(load_rulebook(*site))


@functools.cache
def case_diagnosis(name: str, *site):
    """The diagnosis of demo case ``name`` (cases/demo/NAME.case.yaml), read from memory, with plots."""
    from engine.machine import load_machine
    from engine.pipeline import diagnose
    from engine.pipeline.cases import load_case, simulation_of
    from engine.simulation import as_reading

    case = load_case(CASES / "demo" / f"{name}.case.yaml")
    machine = load_machine(case.machine)
    return diagnose(as_reading(simulation_of(case, machine), f"{name}.wav"), machine, reasoner(*site),
                    plots=True)


def doc_of(name: str, *site) -> dict:
    """The report document of demo case ``name``, made at ``MADE_AT``."""
    from engine.pipeline import document_of

    return document_of(case_diagnosis(name, *site), made_at=MADE_AT)


# the console script's own code (pyproject: tellwave = "engine.start:script")
CONSOLE_SCRIPT = [sys.executable, "-c", "from engine.start import script; script()"]


def interrupt(proc: subprocess.Popen, when) -> tuple[int, str]:
    """Ctrl-C to the whole process group of ``proc`` (as a terminal sends it) once ``when()`` is true: its
    exit code and standard error."""
    try:
        deadline = time.monotonic() + 60
        while not when() and proc.poll() is None and time.monotonic() < deadline:
            time.sleep(0.005)
        assert proc.poll() is None, "the command ended before it could be interrupted"
        os.killpg(proc.pid, signal.SIGINT)
        _, err = proc.communicate(timeout=90)
    finally:
        if proc.poll() is None:
            os.killpg(proc.pid, signal.SIGKILL)
            proc.wait()
    return proc.returncode, err.decode(errors="replace")


def trend_fact(**over) -> dict:
    """A trend fact at P1H (the fields ``engine/trend/facts.py`` gives) that moves no urgency, changed by ``over``."""
    fact = {"kind": "trend", "id": "trend-1", "point": "P1H", "direction": "horizontal",
            "indicator": "accel_rms_g", "indicator_name": "acceleration RMS, g", "readings": 8, "baseline": 0.1,
            "latest": 0.12, "change_pct": 20.0, "rate_per_month": 0.01, "iso_change_significant": False,
            "projected_days": -1.0, "projected_low_days": -1.0, "projected_high_days": -1.0,
            "degradation_began": False, "readings_since_onset": 0, "change_db": 0.0,
            "projected_act_by_days": -1.0, "degradation_under_way": False, "risen_fold": 0.0,
            "projection_to": "", "projection_boundary": "",
            "baseline_mm_s": 0.0, "latest_mm_s": 0.0, "indicator_words": "acceleration RMS, g", "projection_words": ""}
    return {**fact, **over}


def pump_reading(folder: Path) -> Path:
    """A one-channel RW-2 reading (P1H, unbalance at stage 2, 1 s at 12.8 kHz, seed 5) written to ``folder``."""
    from engine.machine import load_machine
    from engine.simulation import simulate, write_simulation

    sim = simulate(load_machine(RW2), "unbalance", "pump", 2, fs_hz=12800.0, duration_s=1.0, seed=5, points=["P1H"])
    write_simulation(sim, folder / "r.wav")
    return folder / "r.wav"


def diagnose_stored(reading: Path, store: Path, *more: str) -> int:
    """``tellwave diagnose READING --machine RW-2 --store STORE --format json`` (report beside the store)."""
    from engine.cli import main

    return main(["diagnose", str(reading), "--machine", str(RW2), "--store", str(store), "--format", "json",
                 "-o", str(store.parent / "out.json"), *more])

