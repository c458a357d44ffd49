"""`tellwave frequencies`, `reading` and `plan` take the units a user chose (--frequency-unit, and
--velocity-unit where a command shows velocities, over a site's units:); orders need a shaft speed and
say so in one line when there is none. Checked by hand numbers: CPM = 60 x Hz (definition of the minute),
1 in = 25.4 mm exactly (1959), an order = f / shaft Hz, a line's peak = sqrt(2) x RMS (a sine)."""

from __future__ import annotations

import json
import re

import pytest

from engine.cli import main

from support import CASES, one_error_line

MACHINE = CASES / "machines" / "rw2-raw-water-pump.yaml"


def _rows(text):
    return [line.split() for line in text.splitlines() if re.match(r"\s+[0-9.]+\s+[0-9.]+\s+\S", line)]


def test_frequencies_in_cpm_and_orders_of_the_driving_shaft(capsys):
    assert main(["frequencies", str(MACHINE), "--rpm", "1400", "--json"]) == 0
    table = json.loads(capsys.readouterr().out)["forcing_frequencies"]
    assert main(["frequencies", str(MACHINE), "--rpm", "1400", "--frequency-unit", "cpm"]) == 0
    out = capsys.readouterr().out
    assert "frequency CPM" in out
    rows = _rows(out)
    assert len(rows) == len(table)
    for row, f in zip(rows, table, strict=True):
        assert float(row[0]) == pytest.approx(60 * f["frequency_hz"], abs=0.06)     # CPM = 60 x Hz
    assert main(["frequencies", str(MACHINE), "--rpm", "1400", "--frequency-unit", "orders", "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["units"]["orders_of"] == "motor"
    bpfi = next(f for f in doc["forcing_frequencies"] if f["name"] == "BPFI" and f["component"] == "pump_de")
    # an order is the frequency over the shaft's speed: 1400 rpm = 23.333 Hz
    assert bpfi["frequency_shown"] == pytest.approx(bpfi["frequency_hz"] / (1400 / 60))
    assert bpfi["frequency_hz"] == pytest.approx(next(f["frequency_hz"] for f in table if f["label"] == bpfi["label"]))


def test_frequencies_take_a_sites_units(tmp_path, capsys):
    site = tmp_path / "site.yaml"
    site.write_text("rulebook: units\nunits: {frequency: cpm}\n")
    assert main(["frequencies", str(MACHINE), "--site", str(site)]) == 0
    assert "frequency CPM" in capsys.readouterr().out
    assert main(["frequencies", str(MACHINE), "--site", str(site), "--frequency-unit", "hz"]) == 0
    assert "frequency Hz" in capsys.readouterr().out             # the command line wins


@pytest.fixture(scope="module")
def reading(tmp_path_factory):
    base = tmp_path_factory.mktemp("reading-units")
    path = base / "r.wav"
    assert main(["synth", str(MACHINE), "-o", str(path), "--fault", "unbalance", "--component", "pump",
                 "--stage", "3", "--seed", "4", "--duration", "1", "--points", "P1H", "--rpm", "1500"]) == 0
    return path


def test_reading_in_cpm_and_inches(reading, capsys):
    capsys.readouterr()
    assert main(["reading", str(reading)]) == 0
    plain = capsys.readouterr().out
    assert main(["reading", str(reading), "--frequency-unit", "cpm", "--velocity-unit", "in/s-peak"]) == 0
    shown = capsys.readouterr().out
    mm_s = float(re.search(r"velocity ([0-9.]+) mm/s RMS", plain).group(1))
    inches = float(re.search(r"velocity ([0-9.]+) in/s RMS", shown).group(1))
    # the overall velocity is broadband: RMS in inches (1 in = 25.4 mm), never sqrt(2) x RMS
    assert inches == pytest.approx(mm_s / 25.4, rel=0.01)
    hz = [float(x) for x in re.findall(r"^\s+([0-9.]+) Hz  ", plain, re.M)]
    cpm = [float(x) for x in re.findall(r"^\s+([0-9.]+) CPM  ", shown, re.M)]
    assert hz and len(hz) == len(cpm)
    for h, c in zip(hz, cpm, strict=True):
        assert c == pytest.approx(60 * h, abs=0.06)                 # CPM = 60 x Hz
    assert " Hz (" not in shown
    resolution = float(re.search(r"resolution ([0-9.]+) Hz", plain).group(1))
    assert float(re.search(r"resolution ([0-9.]+) CPM", shown).group(1)) == pytest.approx(60 * resolution)


def test_reading_in_orders_of_the_stated_speed_or_one_line_without_one(reading, tmp_path, capsys):
    capsys.readouterr()
    assert main(["reading", str(reading), "--frequency-unit", "orders"]) == 0
    out = capsys.readouterr().out
    orders = [float(x) for x in re.findall(r"^\s+([0-9.]+)X  ", out, re.M)]
    # the simulated unbalance at 1500 rpm: its largest line, 1X, at order 1 (25 Hz / 25 Hz)
    assert any(x == pytest.approx(1.0, abs=0.01) for x in orders)
    bare = tmp_path / "bare.wav"
    bare.write_bytes(reading.read_bytes())
    err = one_error_line(capsys, 2, ["reading", bare, "--unit", "g", "--sample-rate", "12800",
                                     "--frequency-unit", "orders"])
    assert "bare.wav" in err and "shaft speed" in err and "--rpm" in err


def test_a_line_of_a_velocity_recording_in_peak_is_sqrt2_times_its_rms(tmp_path, capsys):
    import numpy as np

    fs, n = 2560.0, 10240
    t = np.arange(n) / fs
    path = tmp_path / "v.csv"         # a 50 Hz sine of 10 mm/s peak, recorded in mm/s (invented)
    path.write_text(f"# sample_rate_hz: {fs:g}\n# unit: mm/s\nv\n"
                    + "\n".join(f"{v:.6f}" for v in 10.0 * np.sin(2 * np.pi * 50.0 * t)) + "\n")
    assert main(["reading", str(path), "--velocity-unit", "in/s-peak"]) == 0
    out = capsys.readouterr().out
    peak = float(re.search(r"50\.000 Hz  ([0-9.]+) in/s peak", out).group(1))
    # one line: its peak 10 mm/s = 0.3937 in/s (1 in = 25.4 mm exactly)
    assert peak == pytest.approx(10.0 / 25.4, rel=0.01)
    assert main(["reading", str(path), "--velocity-unit", "mm/s-rms", "--frequency-unit", "cpm"]) == 0
    out = capsys.readouterr().out
    # the default velocity unit keeps the recorded unit's peak: 0.01 m/s peak at 3000 CPM (60 x 50 Hz)
    assert re.search(r"3000\.0 CPM  0\.0099\d* m/s peak|3000\.0 CPM  0\.01 m/s peak", out), out
    assert main(["reading", str(path), "--velocity-unit", "in/s-rms"]) == 0
    rms = float(re.search(r"50\.000 Hz  ([0-9.]+) in/s RMS", capsys.readouterr().out).group(1))
    # RMS of a sine = peak / sqrt(2) (handbook formula)
    assert rms == pytest.approx(10.0 / 2 ** 0.5 / 25.4, rel=0.01)


def test_plan_words_its_settings_and_reasons_in_cpm(capsys):
    assert main(["plan", str(MACHINE), "--point", "P1H", "--no-proof", "--format", "json"]) == 0
    plain = json.loads(capsys.readouterr().out)
    assert main(["plan", str(MACHINE), "--point", "P1H", "--no-proof", "--format", "json",
                 "--frequency-unit", "cpm"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["units"]["frequency"] == "cpm"
    for a, b in zip(plain["proposals"], doc["proposals"], strict=True):
        assert a["fmax_hz"] == b["fmax_hz"]                              # the numbers keep Hz
        rows = {r["setting"]: r for r in b["rows"]}
        # CPM = 60 x Hz
        assert rows["Fmax"]["value"] == f"{60 * a['fmax_hz']:.0f} CPM"
        assert rows["sample rate"]["value"].endswith(" Hz")              # the sample rate stays Hz
        for r in b["rows"]:
            if r["setting"] != "sample rate":
                assert not re.search(r"\d Hz\b", r["value"] + r["why"]), r
    assert main(["plan", str(MACHINE), "--point", "P1H", "--no-proof", "--frequency-unit", "orders",
                 "--fmax", "1000", "--lines", "400", "--sample-rate", "2560"]) == 0
    text = capsys.readouterr().out
    # the given Fmax in orders of the driving shaft at its nominal speed: 1000 Hz / (1486 rpm / 60)
    shown = float(re.search(r"GIVEN SETTINGS: Fmax ([0-9.]+)X", text).group(1))
    assert shown == pytest.approx(1000 / (1486 / 60), rel=0.005)
