"""Gzipped readings: ``reading.csv.gz`` is read as the CSV it holds; a corrupt or foreign gzip file, or
a gzipped format tellwave does not unpack, is one error line naming the file.

The gearbox data set of ../shared/datasets ships its records as gzipped CSV (../shared/datasets/README.md,
section 4); the test of the real file runs where that folder is beside the checkout.
"""

from __future__ import annotations

import gzip

import numpy as np
import pytest

from engine.common.errors import ReadingError
from engine.readings import load_reading
from engine.readings.formats import gunzip, is_reading_name, reading_suffixes

from support import ROOT, one_error_line, tone

GEARBOX = ROOT.parent / "shared" / "datasets" / "gearbox_broken_tooth" / "h30hz0.csv.gz"


def _csv_text(fs=2000.0, n=4096) -> str:
    x = tone(100.0, fs, n, 2.0)
    return f"# sample_rate_hz: {fs}\n# unit: g\nP1H,P1V\n" + "\n".join(f"{v:.6f},{-v:.6f}" for v in x) + "\n"


def test_a_gzipped_csv_reads_as_the_csv_it_holds(tmp_path):
    text = _csv_text()
    (tmp_path / "r.csv").write_text(text)
    (tmp_path / "r.csv.gz").write_bytes(gzip.compress(text.encode()))
    plain, packed = load_reading(tmp_path / "r.csv"), load_reading(tmp_path / "r.csv.gz")
    assert packed.fs_hz == plain.fs_hz == 2000.0
    assert [c.name for c in packed.channels] == [c.name for c in plain.channels] == ["P1H", "P1V"]
    for a, b in zip(plain.channels, packed.channels):
        np.testing.assert_array_equal(a.samples, b.samples)


def test_a_gzipped_csv_takes_its_sidecar_and_its_suffix_in_any_case(tmp_path):
    text = "# sample_rate_hz: 2000\nP1H\n" + "\n".join(f"{v:.6f}" for v in tone(100.0, 2000.0, 4096, 2.0)) + "\n"
    path = tmp_path / "R.CSV.GZ"
    path.write_bytes(gzip.compress(text.encode()))
    (tmp_path / "R.CSV.GZ.yaml").write_text("unit: g\nspeed_rpm: 1480\n")
    r = load_reading(path)
    assert r.speed_rpm == 1480 and r.channels[0].unit == "g"


def test_a_bad_cell_in_a_gzipped_csv_names_the_file_and_line(tmp_path):
    path = tmp_path / "r.csv.gz"
    path.write_bytes(gzip.compress(b"# sample_rate_hz: 1000\n# unit: g\na\n" + b"0.1\n" * 70 + b"oops\n"))
    with pytest.raises(ReadingError, match=r"r.csv.gz:74: not a number"):
        load_reading(path)


@pytest.mark.parametrize(("content", "message"), [
    (b"this is not gzip at all", "not a readable gzip file"),
    (gzip.compress(_csv_text().encode())[:300], "not a readable gzip file"),     # cut short
    (gzip.compress(b"\xff\xfe\x00\x81 binary"), "not a text CSV file once unpacked"),
    (gzip.compress(b""), "the CSV file holds no data rows"),
], ids=["foreign", "truncated", "binary inside", "empty inside"])
def test_a_corrupt_gzip_reading_is_one_error_line(tmp_path, capsys, content, message):
    path = tmp_path / "r.csv.gz"
    path.write_bytes(content)
    err = one_error_line(capsys, 4, ["reading", path])
    assert "r.csv.gz" in err and message in err


def test_a_gzipped_format_that_is_not_unpacked_says_so(tmp_path, capsys):
    path = tmp_path / "r.wav.gz"
    path.write_bytes(gzip.compress(b"RIFF"))
    err = one_error_line(capsys, 4, ["reading", path])
    assert "'.wav.gz'" in err and ".csv.gz" in err and "unpack" in err


def test_unpacking_stops_at_the_limit(tmp_path):
    # a small file that unpacks to far more is refused before it is all unpacked
    path = tmp_path / "bomb.csv.gz"
    path.write_bytes(gzip.compress(b"0" * (3 << 20)))
    with pytest.raises(ReadingError, match="unpacks to more than 1 MiB"):
        gunzip(str(path), most_bytes=1 << 20)
    assert len(gunzip(str(path))) == 3 << 20


def test_route_folders_and_the_help_know_the_gzip_suffix():
    assert ".csv.gz" in reading_suffixes()
    assert is_reading_name("pump.csv.gz") and is_reading_name("PUMP.CSV.GZ") and is_reading_name("pump.csv")
    assert not is_reading_name("pump.wav.gz") and not is_reading_name("notes.gz") and not is_reading_name("x.txt")


@pytest.mark.skipif(not GEARBOX.exists(), reason="../shared/datasets is not beside this checkout")
def test_the_shared_gearbox_record_reads_gzipped():
    # ../shared/datasets/README.md section 4: header a1,a2,a3,a4, 88-111 k rows per file; the rate is not
    # documented, so it is given here (5000 Hz, as a user would state it)
    r = load_reading(GEARBOX, sample_rate_hz=5000.0, unit="g")
    assert [c.name for c in r.channels] == ["a1", "a2", "a3", "a4"]
    assert 88_000 <= r.n_samples <= 111_000
