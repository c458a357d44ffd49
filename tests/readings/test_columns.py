"""A sidecar's column map for headerless tables: clock columns, a time column, skipped columns."""

from __future__ import annotations

import numpy as np
import pytest
import yaml

from engine.common.errors import ReadingError
from engine.readings import load_reading

from support import SHARED_DATASETS


def _table(tmp_path, rows, sidecar):
    path = tmp_path / "logger.csv"
    path.write_text("\n".join(",".join(str(v) for v in r) for r in rows) + "\n")
    (tmp_path / "logger.csv.yaml").write_text(yaml.safe_dump(sidecar))
    return path


def _clock_rows(n=256, fs=2560.0):
    t = np.arange(n) / fs
    x = np.sin(2 * np.pi * 100 * t)
    return [[23, 59, 58, 900000 + int(1e6 * ti) % 100000, f"{a:.6f}", f"{-a:.6f}", 7] for ti, a in zip(t, x)]


def test_clock_columns_give_the_time_of_day_and_the_rest_are_channels(tmp_path):
    path = _table(tmp_path, _clock_rows(), {
        "sample_rate_hz": 2560, "unit": "g",
        "columns": ["hour", "minute", "second", "microsecond", "horizontal", "vertical", "skip"],
        "channels": [{"point": "B1H", "direction": "horizontal"}, {"point": "B1V", "direction": "vertical"}]})
    r = load_reading(path)
    assert r.timestamp == "23:59:58.900000"
    assert [(c.name, c.point, c.direction) for c in r.channels] == [("horizontal", "B1H", "horizontal"),
                                                                    ("vertical", "B1V", "vertical")]
    assert r.n_samples == 256 and r.fs_hz == 2560


def test_a_time_column_gives_the_sample_rate(tmp_path):
    rows = [[f"{i / 1000:.4f}", f"{np.sin(i / 5):.5f}"] for i in range(400)]
    r = load_reading(_table(tmp_path, rows, {"unit": "g", "columns": ["time_s", "shaft"]}))
    assert r.fs_hz == pytest.approx(1000.0) and [c.name for c in r.channels] == ["shaft"]


@pytest.mark.parametrize("columns, problem", [
    (["hour", "minute", "x"], "name 3 columns, the file has 7"),
    (["hour", "minute", "second", "microsecond", "skip", "skip", "skip"], "no signal column"),
    (["second", "skip", "skip", "skip", "a", "b", "skip"], "at least hour and minute"),
], ids=["count", "no-signal", "no-hour"])
def test_a_wrong_column_map_names_the_sidecar(tmp_path, columns, problem):
    path = _table(tmp_path, _clock_rows(), {"sample_rate_hz": 2560, "unit": "g", "columns": columns})
    with pytest.raises(ReadingError, match=problem) as err:
        load_reading(path)
    assert "logger.csv.yaml" in str(err.value)


FEMTO_FIRST = SHARED_DATASETS / "femto" / "learning" / "Bearing1_1" / "acc_00001.csv"


@pytest.mark.skipif(not FEMTO_FIRST.is_file(), reason="../shared/datasets/femto is not beside the checkout")
def test_a_real_snapshot_logger_file_reads_through_a_sidecar(tmp_path):
    # FEMTO / PRONOSTIA learning set, Bearing1_1 first snapshot (../shared/datasets/README.md section 4b):
    # no header; hour, minute, second, microsecond, horizontal and vertical acceleration in g;
    # 2,560 samples at 25.6 kHz; the first row's clock reads 9:39:39 and 65664 us.
    copy = tmp_path / "acc_00001.csv"
    copy.write_bytes(FEMTO_FIRST.read_bytes())
    (tmp_path / "acc_00001.csv.yaml").write_text(yaml.safe_dump({
        "sample_rate_hz": 25600, "unit": "g",
        "columns": ["hour", "minute", "second", "microsecond", "horizontal", "vertical"]}))
    r = load_reading(copy)
    assert r.timestamp == "09:39:39.065664"
    assert r.n_samples == 2560 and r.duration_s == pytest.approx(0.1)
    assert [c.name for c in r.channels] == ["horizontal", "vertical"]
