"""Size limits (engine/readings/limits.py): judged from what a file declares, before its samples are unpacked.

Before, a 163 KB NPZ (2^26 deflated int8 samples) made `reading` peak at 4.3 GB and a 3.2 MB MAT
made `diagnose` end in MemoryError; `plan --fmax 20000 --lines 10000000` grew past 3.8 GB.
"""

from __future__ import annotations

import subprocess
import sys
import tracemalloc
from pathlib import Path

import numpy as np
import pytest
import scipy.io
import yaml
from scipy.io import wavfile

from engine.cli import main
from engine.common.errors import ReadingError, UsageError
from engine.planner import load_policy
from engine.planner.settings import given_settings
from engine.readings import load_reading, sidecar_path
from engine.readings.limits import FULL_LENGTH_CHANNELS, MAX_SAMPLES_PER_CHANNEL

from support import CASES, ROOT, tone

FS = 4096.0
CT1 = CASES / "machines" / "ct1-cooling-tower-fan.yaml"


def zeros_npz(path, n, channels=1, dtype=np.int8):
    np.savez_compressed(path, **{f"c{i}": np.zeros(n, dtype) for i in range(channels)}, sample_rate_hz=FS, unit="g")
    return path


def peak_bytes(call) -> int:
    tracemalloc.start()
    try:
        call()
    finally:
        peak = tracemalloc.get_traced_memory()[1]
        tracemalloc.stop()
    return peak


def test_an_npz_declaring_more_samples_is_refused_without_unpacking_them(tmp_path):
    path = zeros_npz(tmp_path / "r.npz", MAX_SAMPLES_PER_CHANNEL + 1)   # 4 MB of int8, 4 KB on disk
    assert path.stat().st_size < 100_000

    def read():
        with pytest.raises(ReadingError, match=rf"r.npz: declares {MAX_SAMPLES_PER_CHANNEL + 1} samples per "
                                               rf"channel; tellwave reads at most {MAX_SAMPLES_PER_CHANNEL}"):
            load_reading(path)
    assert peak_bytes(read) < 2_000_000        # the 4 MB array (32 MB as float64) was never made


def test_max_samples_raises_and_lowers_the_limit(tmp_path):
    path = tmp_path / "r.npz"
    np.savez(path, a=tone(50.0, FS, 4096, 0.1), sample_rate_hz=FS, unit="g")
    assert load_reading(path).n_samples == 4096
    with pytest.raises(ReadingError, match="at most 1024"):
        load_reading(path, max_samples=1024)
    big = zeros_npz(tmp_path / "big.npz", MAX_SAMPLES_PER_CHANNEL + 1)
    r = load_reading(big, max_samples=MAX_SAMPLES_PER_CHANNEL + 1)     # read, then judged by the quality gates
    assert r.n_samples == MAX_SAMPLES_PER_CHANNEL + 1 and [q.kind for q in r.quality] == ["dead"]


def test_channels_together_are_limited_too(tmp_path):
    n = 1024
    path = zeros_npz(tmp_path / "r.npz", n, channels=FULL_LENGTH_CHANNELS + 1)
    with pytest.raises(ReadingError, match=f"declares {n * (FULL_LENGTH_CHANNELS + 1)} samples over "
                                           f"{FULL_LENGTH_CHANNELS + 1} channels"):
        load_reading(path, max_samples=n)
    assert len(load_reading(path, max_samples=2 * n).channels) == FULL_LENGTH_CHANNELS + 1


@pytest.mark.parametrize("fmt", ["npy", "wav", "csv", "mat"])
def test_every_format_checks_the_limit(tmp_path, fmt):
    x = tone(50.0, FS, 2048, 0.1)
    path = tmp_path / f"r.{fmt}"
    if fmt == "npy":
        np.save(path, x)
    elif fmt == "wav":
        wavfile.write(path, int(FS), x.astype(np.float32))
    elif fmt == "csv":
        path.write_text("a\n" + "\n".join(f"{v:.6f}" for v in x) + "\n")
    else:
        scipy.io.savemat(path, {"a": x})
    sidecar_path(path).write_text(yaml.safe_dump({"sample_rate_hz": FS, "unit": "g", "scale": 1.0}))
    assert load_reading(path).n_samples == 2048
    with pytest.raises(ReadingError,
                       match=r"(holds|declares|at least) \d+ samples per channel; tellwave reads at most 1000"):
        load_reading(path, max_samples=1000)


def test_a_mat_struct_hiding_a_long_vector_is_refused_before_loadmat(tmp_path):
    # whosmat gives a struct's shape (1, 1), not its fields': the unpacked size decides
    path = tmp_path / "r.mat"
    long = np.zeros(3 * MAX_SAMPLES_PER_CHANNEL)       # 96 MiB unpacked, about 100 KB compressed
    scipy.io.savemat(path, {"bearing": {"gs": long, "sr": FS}}, do_compression=True)
    del long

    def read():
        with pytest.raises(ReadingError, match="unpacks to more than"):
            load_reading(path, unit="g")
    assert peak_bytes(read) < 8_000_000


def test_plan_settings_beyond_a_reading_are_usage_errors(capsys):
    policy = load_policy()
    with pytest.raises(UsageError, match="2.56e\\+07 samples; a reading holds at most"):
        given_settings(policy, fmax_hz=20000.0, lines=10_000_000)
    with pytest.raises(UsageError, match="more than any vibration recorder takes"):
        given_settings(policy, fmax_hz=2147483648.0, duration_s=1600.0)
    with pytest.raises(UsageError, match="a waveform of 2000 s"):
        given_settings(policy, fmax_hz=1000.0, duration_s=2000.0)
    assert given_settings(policy, fmax_hz=20000.0, lines=10_000_000, max_samples=1 << 25).lines == 10_000_000
    assert main(["plan", str(CT1), "--fmax", "20000", "--lines", "10000000"]) == 2
    err = capsys.readouterr().err
    assert len(err.strip().splitlines()) == 1 and "--max-samples raises it" in err


@pytest.mark.skipif(not Path("/proc/self/status").exists(), reason="reads the child's VmHWM from /proc")
def test_the_hostile_npz_stays_small_in_a_fresh_process(tmp_path):
    # 2^26 deflated int8 samples: 64 MiB unpacked, 512 MiB as float64, 65 KB on disk. The child reports its
    # own peak resident size since its exec (VmHWM, Linux /proc): getrusage's ru_maxrss, in the child or as
    # RUSAGE_CHILDREN in the parent, also carries the forking parent's size, a pytest-xdist worker's 1 GB here.
    path = zeros_npz(tmp_path / "r.npz", 1 << 26)
    code = (f"import re, sys; sys.path.insert(0, {str(ROOT)!r}); from engine.cli import main; "
            f"rc = main(['reading', {str(path)!r}]); "
            "print('peak_kb', re.search(r'VmHWM:\\s*(\\d+)', open('/proc/self/status').read())[1]); sys.exit(rc)")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=120)
    assert done.returncode == ReadingError.exit_code and "tellwave reads at most" in done.stderr
    peak_kb = int(done.stdout.split("peak_kb")[-1])
    assert 0 < peak_kb < 300_000


def test_a_proof_longer_than_a_reading_is_refused_before_simulating(capsys):
    # 0.4 s at 10 MHz is 4 M samples, within a reading; the proof's physical signal runs at twice the
    # fastest rate for the longest waveform of the given and proposed settings with 0.2 s of padding. The
    # first purpose at GINH (the overall level) proposes 10 turns of its own shaft, gear_input at 985 rpm:
    # 0.609 s (issue 24: a fault needs the turns of its own shaft), held by one record of 800 lines at
    # Fmax 1000 Hz, 0.8 s (a record holds the turns it needs), so (0.8 + 0.2) s x 2e7 Hz = 2e7
    assert main(["plan", str(CT1), "--point", "GINH", "--sample-rate", "10000000", "--duration", "0.4"]) == 2
    err = capsys.readouterr().err
    assert len(err.strip().splitlines()) == 1 and "the proof would simulate 2e+07 samples (1 s" in err
    assert main(["plan", str(CT1), "--point", "GINH", "--sample-rate", "10000000", "--duration", "0.4",
                 "--no-proof", "--format", "json"]) == 0
