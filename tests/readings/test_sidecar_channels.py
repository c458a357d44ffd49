"""A sidecar's channels entries are matched to the file's channels by name, not by place.

Before, entries were applied by position and renamed the file's channels: a sidecar listing
X_FE_time first, for a file holding X_DE_time first, labelled the drive-end samples as the fan
end. Each channel here carries its own tone, so a test can tell which samples went where.
"""

from __future__ import annotations

import numpy as np
import pytest
import yaml
from scipy.io import wavfile

from engine.cli import main
from engine.common.errors import ReadingError
from engine.readings import load_reading, sidecar_path

from support import tone

FS = 4096.0
N = 4096
TONE = {"X_DE_time": 40.0, "X_FE_time": 60.0, "X_BA_time": 80.0}


def npz(tmp_path, channels, **side):
    path = tmp_path / "r.npz"
    np.savez(path, **{name: tone(TONE[name], FS, N, 0.1) for name in TONE}, sample_rate_hz=FS, unit="g")
    sidecar_path(path).write_text(yaml.safe_dump({"channels": channels, **side}))
    return path


def tone_of(ch) -> float:
    spec = np.abs(np.fft.rfft(ch.samples))
    return float(np.fft.rfftfreq(len(ch.samples), 1 / FS)[np.argmax(spec)])


def test_entries_in_another_order_than_the_file_describe_the_channels_they_name(tmp_path):
    r = load_reading(npz(tmp_path, [{"name": "X_FE_time", "point": "FE"}, {"name": "X_BA_time", "point": "BA"},
                                    {"name": "X_DE_time", "point": "DE"}]))
    by_point = {c.point: c for c in r.channels}
    assert by_point["DE"].name == "X_DE_time" and tone_of(by_point["DE"]) == 40.0
    assert by_point["FE"].name == "X_FE_time" and tone_of(by_point["FE"]) == 60.0
    assert [c.name for c in r.channels] == list(TONE)         # the file's order


def test_a_name_the_file_does_not_hold_is_an_error_listing_the_files_channels(tmp_path):
    path = npz(tmp_path, [{"name": "X_FAN_time", "point": "FE"}])
    with pytest.raises(ReadingError, match=r"r.npz.yaml: the sidecar describes channel 'X_FAN_time', which the "
                                           r"file does not hold; its channels are X_DE_time, X_FE_time, X_BA_time"):
        load_reading(path)


def test_a_sidecar_may_describe_only_some_channels(tmp_path):
    r = load_reading(npz(tmp_path, [{"name": "X_FE_time", "point": "FE", "direction": "axial"}], point="P9"))
    by_name = {c.name: c for c in r.channels}
    assert by_name["X_FE_time"].point == "FE" and by_name["X_FE_time"].direction == "axial"
    # the others keep what the file and the sidecar's top-level fields say
    assert by_name["X_DE_time"].point == "P9" and by_name["X_DE_time"].direction is None
    assert tone_of(by_name["X_DE_time"]) == 40.0 and tone_of(by_name["X_BA_time"]) == 80.0


def test_entries_without_a_name_go_by_place(tmp_path):
    r = load_reading(npz(tmp_path, [{"point": "DE"}, {"point": "FE"}]))
    assert [(c.name, c.point) for c in r.channels] == [("X_DE_time", "DE"), ("X_FE_time", "FE"), ("X_BA_time", None)]


def test_a_label_renames_a_named_channel(tmp_path):
    r = load_reading(npz(tmp_path, [{"name": "X_BA_time", "label": "base", "point": "BA"}]), channels=["base"])
    assert [c.name for c in r.channels] == ["base"] and tone_of(r.channels[0]) == 80.0


@pytest.mark.parametrize("channels, problem", [
    ([{"name": "X_FE_time"}, {"point": "x"}], "two of the sidecar's channels entries describe the file's channel "
                                              "'X_FE_time'"),
    ([{"point": str(i)} for i in range(4)], "the sidecar lists 4 channels, the file has 3"),
])
def test_entries_that_clash_or_outnumber_the_file_are_refused(tmp_path, channels, problem):
    with pytest.raises(ReadingError, match=problem):
        load_reading(npz(tmp_path, channels))


def test_a_wav_names_no_channels_so_its_entries_go_by_place_and_name_them(tmp_path):
    path = tmp_path / "r.wav"
    wavfile.write(path, int(FS), np.stack([tone(40.0, FS, N, 0.1), tone(60.0, FS, N, 0.1)], axis=1)
                  .astype(np.float32))
    sidecar_path(path).write_text(yaml.safe_dump({"unit": "g", "scale": 1.0,
                                                  "channels": [{"name": "P1H"}, {"name": "ch1"}]}))
    with pytest.raises(ReadingError, match="describe the file's channel 'ch1'"):
        load_reading(path)        # "ch1" is the first channel's own placeholder name: taken twice
    sidecar_path(path).write_text(yaml.safe_dump({"unit": "g", "scale": 1.0, "channels": [{"name": "P1H"}]}))
    r = load_reading(path)
    assert [(c.name, tone_of(c)) for c in r.channels] == [("P1H", 40.0), ("ch2", 60.0)]


def test_the_command_line_gives_one_error_line(tmp_path, capsys):
    from support import CASES

    path = npz(tmp_path, [{"name": "DE", "point": "P1H"}])
    code = main(["diagnose", str(path), "--machine", str(CASES / "machines" / "rw2-raw-water-pump.yaml")])
    err = capsys.readouterr().err
    assert code == ReadingError.exit_code == 4
    assert len(err.strip().splitlines()) == 1 and "its channels are X_DE_time, X_FE_time, X_BA_time" in err
