"""A reading fits its machine file: every channel that names a point names one of the machine's."""

from __future__ import annotations

import numpy as np
import pytest

from engine.common.errors import ReadingError
from engine.machine import load_machine
from engine.readings import Channel, Reading, check_points

from support import CASES

BW1 = load_machine(CASES / "machines/bw1-backwash-blower.yaml")


def _reading(*points):
    x = np.zeros(4096)
    channels = tuple(Channel(f"ch{i}", x, "acceleration", "g", point=p) for i, p in enumerate(points))
    return Reading("r.wav", 25600.0, channels)


def test_a_channel_at_a_point_the_machine_lacks_names_channel_point_and_the_machine_s_points():
    with pytest.raises(ReadingError) as err:
        check_points(_reading("BDEH", "P1H"), BW1)
    text = str(err.value)
    assert err.value.exit_code == 4
    assert text.startswith("r.wav: channel 'ch1' at point 'P1H':")
    assert "BW-1 backwash blower" in text and "its points are MDEH, BDEH, BDEV" in text
    assert "'ch0'" not in text and "\n" not in text


def test_many_strays_are_named_in_one_line():
    with pytest.raises(ReadingError) as err:
        check_points(_reading(*(f"P{i}" for i in range(7))), BW1)
    text = str(err.value)
    assert text.count("at point") == 4 and "and 3 more" in text and "none of these points" in text


@pytest.mark.parametrize("points", [("MDEH", "BDEV"), (None, None), ("BDEH", None), ()])
def test_channels_at_the_machine_s_points_or_at_none_pass(points):
    # a channel that names no point is analysed as before, on the first named point's shaft
    check_points(_reading(*points), BW1)


def test_a_machine_without_points_says_so(tmp_path):
    path = tmp_path / "m.yaml"
    path.write_text("machine: m\nshafts:\n  - {id: motor, speed_rpm: 1480}\n")
    with pytest.raises(ReadingError, match="its file lists no points"):
        check_points(_reading("P1H"), load_machine(path))
