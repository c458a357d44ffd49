"""Choosing channels (issue 13): by channel name, point id or name ending, with or without a sidecar.

The selection runs after the sidecar has named the channels, so a sidecar
with one entry per channel of the file no longer breaks it, and the file's
own names still work beside the sidecar's.
"""

from __future__ import annotations

import numpy as np
import pytest
import yaml
from scipy.io import wavfile

from engine.cli import main
from engine.common.errors import ReadingError
from engine.readings import load_reading, sidecar_path

from support import CASES, tone

FS = 4096.0
N = 4096
RW2 = CASES / "machines/rw2-raw-water-pump.yaml"
SIDECAR = {"unit": "g", "channels": [
    {"name": "X1_motor_H", "label": "motor H", "point": "M1", "direction": "horizontal"},
    {"name": "X1_motor_V", "label": "motor V", "point": "M1", "direction": "vertical"},
    {"name": "X1_pump_H", "label": "pump H", "point": "P1H", "direction": "horizontal"}]}


def signals():
    """Three channels told apart by their tone: 40, 60 and 80 Hz, in g."""
    return [tone(f, FS, N, 0.1) + 0.01 * np.random.default_rng(i).standard_normal(N)
            for i, f in enumerate((40.0, 60.0, 80.0))]


def write(tmp_path, fmt, sidecar=True):
    xs = signals()
    path = tmp_path / f"r.{fmt}"
    if fmt == "npz":
        np.savez(path, X1_motor_H=xs[0], X1_motor_V=xs[1], X1_pump_H=xs[2], sample_rate_hz=FS, unit="g")
    elif fmt == "csv":
        rows = "\n".join(",".join(f"{v:.6f}" for v in row) for row in np.stack(xs, axis=1))
        path.write_text(f"# sample_rate_hz: {FS}\n# unit: g\nX1_motor_H,X1_motor_V,X1_pump_H\n{rows}\n")
    else:
        wavfile.write(path, int(FS), np.stack(xs, axis=1).astype(np.float32))
    side = dict(SIDECAR) if sidecar else {"unit": "g"}
    if fmt == "wav":
        side["scale"] = 1.0
    sidecar_path(path).write_text(yaml.safe_dump(side))
    return path


def tone_of(ch) -> float:
    spec = np.abs(np.fft.rfft(ch.samples))
    return float(np.fft.rfftfreq(len(ch.samples), 1 / FS)[np.argmax(spec)])


@pytest.mark.parametrize("fmt", ["npz", "csv", "wav"])
@pytest.mark.parametrize("wanted, names, tones", [
    (["pump H"], ["pump H"], [80.0]),                      # the sidecar's name
    (["M1"], ["motor H", "motor V"], [40.0, 60.0]),        # a point id: every channel at that point
    (["P1H", "motor V"], ["pump H", "motor V"], [80.0, 60.0]),   # in the order asked
    (["V"], ["motor V"], [60.0]),                          # the end of a name
])
def test_channels_chosen_with_a_sidecar(tmp_path, fmt, wanted, names, tones):
    r = load_reading(write(tmp_path, fmt), channels=wanted)
    assert [c.name for c in r.channels] == names
    assert [tone_of(c) for c in r.channels] == tones
    assert {q.channel for q in r.quality} <= set(names)


@pytest.mark.parametrize("fmt, file_name", [("npz", "X1_pump_H"), ("csv", "X1_pump_H"), ("wav", "ch3")])
def test_the_files_own_name_still_works_beside_the_sidecar(tmp_path, fmt, file_name):
    r = load_reading(write(tmp_path, fmt), channels=[file_name])
    assert [c.name for c in r.channels] == ["pump H"] and r.channels[0].point == "P1H"


@pytest.mark.parametrize("fmt", ["npz", "csv"])
def test_channels_chosen_without_a_sidecar(tmp_path, fmt):
    r = load_reading(write(tmp_path, fmt, sidecar=False), channels=["pump_H", "X1_motor_V"])
    assert [c.name for c in r.channels] == ["X1_pump_H", "X1_motor_V"]
    assert [tone_of(c) for c in r.channels] == [80.0, 60.0]


def test_no_match_lists_the_channels_with_their_points(tmp_path):
    with pytest.raises(ReadingError, match=r"r.npz: no channel matches 'fan'; channels are motor H \(point M1\)"):
        load_reading(write(tmp_path, "npz"), channels=["fan"])


def test_an_ending_shared_by_two_channels_is_refused(tmp_path):
    with pytest.raises(ReadingError, match=r"more than one channel name ends with 'H' \(motor H, pump H\)"):
        load_reading(write(tmp_path, "npz"), channels=["H"])


def test_a_channel_asked_twice_is_kept_once(tmp_path):
    r = load_reading(write(tmp_path, "npz"), channels=["pump H", "P1H", "X1_pump_H"])
    assert [c.name for c in r.channels] == ["pump H"]


@pytest.mark.parametrize("command", ["evidence", "diagnose"])
def test_cli_channels_with_a_sidecar(tmp_path, capsys, command):
    path = write(tmp_path, "npz")
    assert main([command, str(path), "--machine", str(RW2), "--channels", "P1H"]) in (0, 7)
    captured = capsys.readouterr()
    assert captured.err == ""
    assert "pump H" in captured.out and "motor H" not in captured.out
