"""Records a reader accepts but the analysis cannot trust: no channels, underflow, one huge sample,
impossible sample rates, short records, complex samples; none crashes, warns or misleads.

The tests named ``test_defect_NN_*`` reproduce issue 12's defects and keep their names.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.io import savemat

from bench.hostile import seed_signal
from engine.cli import main
from engine.common.errors import ReadingError
from engine.machine import load_machine
from engine.readings import MIN_SAMPLES, load_reading

from support import CASES, FS, RW2, npz_reading, one_error_line, reasoner, tone


def test_defect_05_npy_with_no_channels(tmp_path, capsys):
    path = tmp_path / "r.npy"
    np.save(path, np.zeros((1000, 0)))
    err = one_error_line(capsys, ReadingError.exit_code, ["reading", path, "--sample-rate", "1000", "--unit", "g"])
    assert "r.npy: holds no channels" in err


def test_defect_05_signal_whose_rms_underflows(tmp_path):
    path = tmp_path / "r.npy"
    np.save(path, np.r_[np.zeros(MIN_SAMPLES * 4 - 1), 1e-300])
    r = load_reading(path, sample_rate_hz=1000.0, unit="g")
    assert [(q.kind, q.blocking) for q in r.quality] == [("out_of_range", True)]


def test_defect_05_scale_so_small_the_signal_underflows(tmp_path, capsys):
    path = npz_reading(tmp_path / "r.npz", seed_signal())
    assert main(["reading", str(path), "--scale", "1e-300"]) == 0
    out = capsys.readouterr().out
    assert "quality: outside any sensor's range: AC RMS of" in out and "below anything a sensor records" in out
    err = one_error_line(capsys, ReadingError.exit_code,
                         ["diagnose", path, "--machine", RW2, "--scale", "1e-300"])
    assert "no channel can be analysed" in err


def test_defect_06_record_below_what_the_analysis_needs(tmp_path, capsys):
    path = npz_reading(tmp_path / "r.npz", seed_signal(n=200))
    err = one_error_line(capsys, ReadingError.exit_code, ["diagnose", path, "--machine", RW2])
    assert "holds only 200 samples; the analysis needs at least 256" in err


def test_defect_06_record_too_short_for_the_slowest_shaft(tmp_path, capsys):
    # RW-2 turns at 1486 rpm (24.8 Hz): 1024 samples at 40 kHz last 0.026 s, under one turn
    path = npz_reading(tmp_path / "r.npz", seed_signal(n=1024, fs=40960.0), fs=40960.0)
    err = one_error_line(capsys, ReadingError.exit_code, ["diagnose", path, "--machine", RW2])
    assert "revolutions of shaft" in err and "record at least 0.404 s" in err


def test_defect_06_short_but_analysable_record_is_withheld(tmp_path, capsys):
    # MIN_SAMPLES at 2560 Hz: 0.1 s, 2.5 turns of RW-2 - enough to analyse, too few to conclude
    path = npz_reading(tmp_path / "r.npz", seed_signal(n=MIN_SAMPLES, fs=2560.0), fs=2560.0)
    assert main(["diagnose", str(path), "--machine", str(RW2)]) == 7
    captured = capsys.readouterr()
    assert captured.err == "" and "revolutions of the slowest shaft" in captured.out


@settings(max_examples=40, deadline=None, derandomize=True, database=None)
@given(n=st.integers(MIN_SAMPLES, MIN_SAMPLES + 64), fs=st.sampled_from([6.0, 100.0, 2560.0, 12000.0, 1e6]),
       machine=st.sampled_from(sorted((CASES / "machines").glob("*.yaml"))), seed=st.integers(0, 3))
def test_defect_06_min_samples_is_enough_for_the_analysis(n, fs, machine, seed):
    # MIN_SAMPLES comes from the kurtogram's 256-sample band (engine/readings/length.py): a record that
    # long is analysed, or refused as a reading for the machine's slowest shaft; never a traceback
    from engine.pipeline import diagnose
    from engine.readings.model import Channel, Reading
    from engine.readings.quality import check_channel

    m = load_machine(machine)
    ch = Channel("a", seed_signal(n=n, fs=fs, seed=seed) * 9.80665, "acceleration", "g", point=m.points[0].id)
    reading = Reading("probe", fs, (ch,), quality=tuple(check_channel(ch, fs)))
    try:
        diagnose(reading, m, reasoner())
    except ReadingError as exc:
        assert any(words in str(exc) for words in ("revolutions of shaft", "below 1X of shaft",
                                                     "no channel can be analysed"))


def test_defect_07_one_huge_sample(tmp_path, capsys):
    x = seed_signal()
    x[100] = 1.7e308
    path = npz_reading(tmp_path / "r.npz", x)
    err = one_error_line(capsys, ReadingError.exit_code, ["diagnose", path, "--machine", RW2])
    assert "no channel can be analysed" in err


def test_defect_07_sample_rate_of_one_hertz(tmp_path, capsys):
    path = npz_reading(tmp_path / "r.npz", seed_signal())
    err = one_error_line(capsys, ReadingError.exit_code,
                         ["diagnose", path, "--machine", RW2, "--sample-rate", "1", "--format", "html"])
    assert "sample rate of 1 Hz is outside 5.12 Hz to 1e+07 Hz" in err


def test_defect_07_sample_rate_below_the_fastest_shaft(tmp_path, capsys):
    # RW-2's motor turns at 24.77 Hz; at 50 Hz the usable Fmax (50 / 2.56 = 19.5 Hz) is below its 1X,
    # and a revolution of the waveform plot would hold less than one sample
    path = npz_reading(tmp_path / "r.npz", seed_signal(n=1024), fs=50.0)
    err = one_error_line(capsys, ReadingError.exit_code,
                         ["diagnose", path, "--machine", RW2, "--format", "html", "-o", tmp_path / "r.html"])
    assert "Fmax of 19.5 Hz, below 1X of shaft 'motor' (24.77 Hz, the fastest)" in err
    assert not (tmp_path / "r.html").exists()


@pytest.mark.parametrize("fmt", ["npy", "npz", "mat"])
def test_defect_12_complex_data_is_refused(tmp_path, fmt):
    x = tone(50.0, FS, 4096) * (1 + 1j)
    path = tmp_path / f"r.{fmt}"
    if fmt == "npy":
        np.save(path, x)
    elif fmt == "npz":
        np.savez(path, a=x)
    else:
        savemat(path, {"X1_DE_time": x})
    with pytest.raises(ReadingError, match="holds complex numbers; a reading is real samples"):
        load_reading(path, sample_rate_hz=FS, unit="g")


@pytest.mark.parametrize("x", [
    pytest.param(np.r_[np.zeros(4095), 1e-300], id="underflow"),
    pytest.param(np.r_[np.zeros(4095), 1.7e308], id="overflow"),
    pytest.param(np.full(4096, 1e308), id="huge-constant"),
    pytest.param(np.r_[np.full(4095, 5e-324), 0.0], id="subnormal"),
    pytest.param(tone(50.0, FS, 4096) * 1e-200, id="tiny-tone"),
])
def test_defect_12_odd_data_raises_no_warning(tmp_path, x):
    # the suite turns every warning into an error (pyproject filterwarnings): loading, the gates and a
    # diagnosis of odd data must not warn
    from engine.pipeline import diagnose

    path = npz_reading(tmp_path / "r.npz", x)
    reading = load_reading(path)
    try:
        diagnose(reading, load_machine(RW2), reasoner())
    except ReadingError as exc:
        assert "no channel can be analysed" in str(exc)


def test_defect_12_cli_stderr_has_no_warning_lines(tmp_path):
    import subprocess
    import sys

    path = npz_reading(tmp_path / "r.npz", np.r_[seed_signal(n=4095), 1e-300] * 1e-5)
    done = subprocess.run([sys.executable, "-m", "engine.cli", "reading", str(path)], capture_output=True,
                          text=True, timeout=60)
    assert done.returncode == 0 and done.stderr == ""


def test_a_step_signal_with_a_silent_carrier_is_diagnosed_without_a_division_by_zero(tmp_path):
    # found by Hypothesis: 288 samples of a step (0, then 1 mg) on BW-1 left a sideband family whose
    # carrier line was exactly 0, and the sideband-to-carrier ratio divided by it
    from engine.cli import main

    x = np.full(288, 0.001)
    x[0] = 0.0
    np.savez(tmp_path / "step.npz", ch1=x, sample_rate_hz=2560.0, unit="g")
    assert main(["diagnose", str(tmp_path / "step.npz"), "--machine",
                 str(CASES / "machines" / "bw1-backwash-blower.yaml"), "--format", "json"]) in (0, 7)
