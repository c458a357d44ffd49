"""Issue 12, "Bad input never crashes, never misleads, never destroys a file": one test per defect.

Each test is named for the defect's number in the issue and runs its
reproducer, through the library where the defect was in a library function
and through ``engine.cli.main`` where the promise is about the command line
(one line on stderr, the right exit code, no traceback).
"""

from __future__ import annotations

import functools
import json
import os
import stat
import time

import numpy as np
import pytest
import yaml
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.io import savemat

from bench.hostile import seed_signal, strict_json
from engine.cli import main
from engine.common import outfile
from engine.common.errors import MachineError, OutputError, ReadingError, RulebookError
from engine.common.jsonout import dumps
from engine.common.yamlfile import MAX_BYTES
from engine.machine import load_machine
from engine.machine.kinematics import forcing_frequencies
from engine.readings import MIN_SAMPLES, load_reading, sidecar_path
from engine.reasoning import load_rulebook
from engine.report import render, write_atomically

from support import CASES, tone

RW2 = CASES / "machines/rw2-raw-water-pump.yaml"
FS = 8192.0


@functools.cache
def shared_reasoner():
    from engine.reasoning import Reasoner

    return Reasoner(load_rulebook())


def one_error_line(capsys, code, argv):
    """Run the command line; it must fail with ``code`` and one ``tellwave: error:`` line."""
    assert main([str(a) for a in argv]) == code
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and err.startswith("tellwave: error: "), err
    assert "Traceback" not in err
    return err


def npz_reading(path, x, fs=FS, unit="g", **meta):
    np.savez(path, a=x, sample_rate_hz=fs, unit=unit, **meta)
    return path


# ------------------------------------------------------------------ 1. recursive alias

RECURSIVE = "machine: &a [*a]\n"


def test_defect_01_recursive_alias_in_a_machine_file(tmp_path, capsys):
    path = tmp_path / "m.yaml"
    path.write_text(RECURSIVE)
    err = one_error_line(capsys, MachineError.exit_code, ["frequencies", path])
    assert "m.yaml:1: an alias refers to a mapping or list that contains it" in err


def test_defect_01_recursive_alias_in_a_sidecar(tmp_path, capsys):
    path = npz_reading(tmp_path / "r.npz", seed_signal())
    sidecar_path(path).write_text("point: &p {name: *p}\n")
    err = one_error_line(capsys, ReadingError.exit_code, ["reading", path])
    assert "r.npz.yaml:1:" in err


def test_defect_01_recursive_alias_in_a_site_overlay(tmp_path, capsys):
    site = tmp_path / "site.yaml"
    site.write_text("rulebook: site\nrules: &r\n  - *r\n")
    err = one_error_line(capsys, RulebookError.exit_code, ["rulebook", "check", "--site", site])
    assert "site.yaml:2: an alias refers to a mapping or list that contains it" in err


# ------------------------------------------------------------------ 2. alias bomb

def test_defect_02_alias_bomb_is_refused_quickly(tmp_path, capsys):
    # nine aliases per level, eight levels: 9**8 = 43 million values from about 300 bytes
    levels = ["a: &a [x, x, x, x, x, x, x, x, x]"]
    for i in range(8):
        name, prev = chr(98 + i), chr(97 + i)
        levels.append(f"{name}: &{name} [" + ", ".join([f"*{prev}"] * 9) + "]")
    path = tmp_path / "m.yaml"
    path.write_text("\n".join(levels) + "\n")
    assert path.stat().st_size < 400
    started = time.perf_counter()
    err = one_error_line(capsys, MachineError.exit_code, ["frequencies", path])
    assert time.perf_counter() - started < 2.0
    assert "aliases repeat too much" in err


def test_defect_02_document_size_is_limited(tmp_path, capsys):
    path = tmp_path / "m.yaml"
    path.write_text("machine: m\n" + "# padding\n" * (MAX_BYTES // 10 + 1))
    assert "larger than 1024 KiB" in one_error_line(capsys, MachineError.exit_code, ["frequencies", path])


# ------------------------------------------------------------------ 3. tags

@pytest.mark.parametrize("text, words", [
    ("machine: !!float abc\n", "cannot read 'abc' as a number"),
    ("machine: !!int 1.5\n", "cannot read '1.5' as an integer"),
    ("machine: !!bool maybe\n", "cannot read 'maybe' as true or false"),
    ("machine: !!set {a, b}\n", "the YAML tag !!set is not supported"),
    ("machine: !!python/name:os.system ''\n", "the YAML tag !!python/name:os.system is not supported"),
    ("machine: !custom 1\n", "the YAML tag !custom is not supported"),
])
def test_defect_03_tags_that_cannot_read_their_value(tmp_path, capsys, text, words):
    path = tmp_path / "m.yaml"
    path.write_text(text)
    err = one_error_line(capsys, MachineError.exit_code, ["frequencies", path])
    assert f"m.yaml:1: not valid YAML: {words}" in err


# ------------------------------------------------------------------ 4. integers written as 23.0

def test_defect_04_teeth_written_as_float(tmp_path):
    path = tmp_path / "m.yaml"
    path.write_text("machine: m\nshafts:\n  - {id: pinion, speed_hz: 30}\n  - {id: wheel, driven_through: g}\n"
                    "gears:\n  - {id: g, driving: {shaft: pinion, teeth: 23.0}, driven: {shaft: wheel, teeth: 67.0}}\n"
                    "rotors:\n  - {id: fan, shaft: wheel, type: fan, vanes: 6.0}\n")
    m = load_machine(path)
    assert m.gears[0].driving_teeth == 23 and isinstance(m.gears[0].driving_teeth, int)
    lines = {f.name: f.frequency_hz for f in forcing_frequencies(m)}
    # check-values.md [derived]: 23 and 67 teeth, pinion at 30 Hz: GMF 690 Hz, hunting tooth 0.4478 Hz
    assert lines["GMF"] == pytest.approx(690.0)
    assert lines["HTF"] == pytest.approx(0.4478, abs=1e-4)


def test_defect_04_fractional_teeth_are_refused(tmp_path):
    path = tmp_path / "m.yaml"
    path.write_text("machine: m\nshafts:\n  - {id: a, speed_hz: 30}\n  - {id: b, driven_through: g}\n"
                    "gears:\n  - {id: g, driving: {shaft: a, teeth: 23.5}, driven: {shaft: b, teeth: 67}}\n")
    with pytest.raises(MachineError, match=r"m.yaml:6: gears.0.driving.teeth: expected integer, got 23.5"):
        load_machine(path)


# ------------------------------------------------------------------ 5. shapes and underflow

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


# ------------------------------------------------------------------ 6. short records

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
        diagnose(reading, m, shared_reasoner())
    except ReadingError as exc:
        assert any(words in str(exc) for words in ("revolutions of shaft", "below 1X of shaft",
                                                     "no channel can be analysed"))


# ------------------------------------------------------------------ 7. absurd values at the edge

def test_defect_07_absurd_bearing_multiple(tmp_path, capsys):
    path = tmp_path / "m.yaml"
    path.write_text("machine: m\nshafts:\n  - {id: s, speed_rpm: 1500}\nbearings:\n"
                    "  - {id: b, shaft: s, multiples: {bpfo: 1.0e300, bpfi: 5.4, bsf: 2.3, ftf: 0.4}}\n")
    err = one_error_line(capsys, MachineError.exit_code, ["frequencies", path])
    assert "m.yaml:5: bearings.0.multiples.bpfo: must be at most 200, got 1e+300" in err


def test_defect_07_absurd_derived_speed(tmp_path, capsys):
    path = tmp_path / "m.yaml"
    path.write_text("machine: m\nshafts:\n  - {id: a, speed_rpm: 1500}\n  - {id: b, ratio_to: {shaft: a, ratio: 300}}\n"
                    "  - {id: c, ratio_to: {shaft: b, ratio: 300}}\n")
    err = one_error_line(capsys, MachineError.exit_code, ["frequencies", path])
    assert "m.yaml:5: shafts.2: shaft 'c' comes out at 1.35e+08 rpm, outside 0.1 to 600000 rpm" in err


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


@pytest.mark.parametrize("option, value", [("--rpm", "inf"), ("--rpm", "nan"), ("--rpm", "-5"), ("--rpm", "1e300"),
                                           ("--sample-rate", "nan"), ("--scale", "0"), ("--scale", "-inf")])
def test_defect_07_option_values_checked_when_parsed(tmp_path, capsys, option, value):
    path = npz_reading(tmp_path / "r.npz", seed_signal())
    err = one_error_line(capsys, 2, ["diagnose", path, "--machine", RW2, option, value])
    assert f"argument {option}:" in err


# ------------------------------------------------------------------ 8. JSON

def test_defect_08_frequencies_json_with_infinite_rpm(capsys):
    assert main(["frequencies", str(RW2), "--json", "--rpm", "inf"]) == 2
    captured = capsys.readouterr()
    assert captured.out == "" and "Infinity" not in captured.err


@pytest.mark.parametrize("value", [".nan", ".inf", "-.inf", "1e400"])
def test_defect_08_machine_file_with_non_finite_number(tmp_path, value):
    path = tmp_path / "m.yaml"
    path.write_text(f"machine: m\nshafts:\n  - id: s\n    speed_rpm: {value}\n")
    with pytest.raises(MachineError, match=r"m.yaml:4: shafts.0.speed_rpm: expected a finite number"):
        load_machine(path)


def test_defect_08_json_output_is_rfc_8259_even_with_non_finite_values():
    text = dumps({"velocity_rms_mm_s": float("inf"), "crest": float("nan"), "n": np.float32(1.5),
                  "ok": np.bool_(True), "list": (np.int64(3), -float("inf"))})
    assert strict_json(text) == {"velocity_rms_mm_s": None, "crest": None, "n": 1.5, "ok": True, "list": [3, None]}


@pytest.mark.parametrize("argv", [["frequencies", RW2, "--json"],
                                  ["evidence", "READING", "--machine", RW2, "--json"],
                                  ["diagnose", "READING", "--machine", RW2, "--format", "json"]])
def test_defect_08_every_json_command_writes_strict_json(tmp_path, capsys, argv):
    reading = npz_reading(tmp_path / "r.npz", seed_signal())
    assert main([str(reading) if a == "READING" else str(a) for a in argv]) in (0, 7)
    strict_json(capsys.readouterr().out)


# ------------------------------------------------------------------ 9. control characters, YAML 1.1 numbers

def test_defect_09_control_character_is_one_line(tmp_path, capsys):
    path = tmp_path / "m.yaml"
    path.write_text("machine: m\nplant: a\x01b\n")
    err = one_error_line(capsys, MachineError.exit_code, ["frequencies", path])
    assert "m.yaml:2: not valid YAML: character U+0001 is not allowed" in err


def test_defect_09_exponent_without_a_dot_is_a_number(tmp_path):
    path = npz_reading(tmp_path / "r.npz", seed_signal() * 1000.0, unit="mm/s")
    sidecar_path(path).write_text("unit: g\nscale: 1e-3\n")
    r = load_reading(path)
    # 1e-3 x the samples in g: the sidecar's scale read as the number it is
    assert np.max(np.abs(r.channels[0].samples)) == pytest.approx(np.max(np.abs(seed_signal())) * 9.80665)


def test_defect_09_yaml_1_1_surprises_are_gone(tmp_path):
    from engine.common.yamlfile import read_yaml

    path = tmp_path / "x.yaml"
    path.write_text("a: 1:30\nb: 017\nc: yes\nd: 2024-01-01\ne: 0o17\nf: 1E3\n")
    data = read_yaml(path, MachineError).data
    # YAML 1.2.2, section 10.3.2 (core schema): no sexagesimal, octal 0o, no yes/no booleans, no dates
    assert data == {"a": "1:30", "b": 17, "c": "yes", "d": "2024-01-01", "e": 15, "f": 1000.0}


# ------------------------------------------------------------------ 10. output path

@pytest.fixture
def reading_file(tmp_path):
    return npz_reading(tmp_path / "r.npz", seed_signal())


@pytest.mark.parametrize("target, words", [
    ("", "the output file name is empty"),
    ("FOLDER", "is a folder"),
    ("FOLDER/", "names a folder"),
    ("READING", "is an input of this run"),
    ("SIDECAR", "is an input of this run"),
    ("MACHINE", "is an input of this run"),
    ("FILE/report.txt", "cannot write here (Not a directory)"),
])
def test_defect_10_output_path_refused(tmp_path, capsys, reading_file, target, words):
    machine = tmp_path / "m.yaml"
    machine.write_text(RW2.read_text())
    sidecar_path(reading_file).write_text("point: P1H\n")
    (tmp_path / "a_file").write_text("keep me\n")
    target = (target.replace("FOLDER", str(tmp_path)).replace("READING", str(reading_file))
              .replace("SIDECAR", str(sidecar_path(reading_file))).replace("MACHINE", str(machine))
              .replace("FILE", str(tmp_path / "a_file")))
    kept = {p: p.read_bytes() for p in tmp_path.iterdir() if p.is_file()}
    err = one_error_line(capsys, OutputError.exit_code,
                         ["diagnose", reading_file, "--machine", machine, "--format", "json", "-o", target])
    assert words in err
    assert {p: p.read_bytes() for p in tmp_path.iterdir() if p.is_file()} == kept


def test_defect_10_symlink_is_not_replaced(tmp_path, capsys, reading_file):
    real = tmp_path / "real.txt"
    real.write_text("the user's notes\n")
    link = tmp_path / "link.txt"
    link.symlink_to(real)
    err = one_error_line(capsys, OutputError.exit_code, ["diagnose", reading_file, "--machine", RW2, "-o", link])
    assert "is a symbolic link" in err
    assert link.is_symlink() and real.read_text() == "the user's notes\n"


def test_defect_10_non_regular_target_is_not_replaced(tmp_path, capsys, reading_file):
    # a FIFO stands for every file that is not a regular one (device nodes too: the check is the
    # same S_ISREG); never test this on a real device, which a regression would replace as root
    fifo = tmp_path / "pipe"
    os.mkfifo(fifo)
    err = one_error_line(capsys, OutputError.exit_code, ["diagnose", reading_file, "--machine", RW2, "-o", fifo])
    assert "is not a regular file" in err
    assert stat.S_ISFIFO(os.lstat(fifo).st_mode)


def test_defect_10_unwritable_folder(tmp_path, capsys, reading_file, monkeypatch):
    # a folder the user may not write in; faked, since the suite may run as root, who may write anywhere
    import tempfile

    def refused(*args, **kwargs):
        raise PermissionError(13, "Permission denied")
    monkeypatch.setattr(tempfile, "mkstemp", refused)
    err = one_error_line(capsys, OutputError.exit_code,
                         ["diagnose", reading_file, "--machine", RW2, "-o", tmp_path / "r.txt"])
    assert "r.txt: cannot write here (Permission denied)" in err
    assert not (tmp_path / "r.txt").exists()


def test_defect_10_stale_part_files_of_the_target_are_removed(tmp_path):
    target = tmp_path / "report.txt"
    dead_pid = 2 ** 22 + 12345          # above Linux's pid_max: no such process
    stale = tmp_path / f".report.txt.{dead_pid}.abcd1234.part"
    stale.write_bytes(b"x" * 1024)
    old = tmp_path / f".report.txt.{os.getpid()}.old00000.part"
    old.write_bytes(b"y")
    os.utime(old, (time.time() - 2 * outfile.STALE_PART_S,) * 2)
    running = tmp_path / f".report.txt.{os.getpid()}.live0000.part"
    running.write_bytes(b"z")
    someone_elses = tmp_path / ".notes.txt.1.abcd.part"
    someone_elses.write_bytes(b"n")
    write_atomically(target, "report\n")
    assert target.read_text() == "report\n"
    assert not stale.exists() and not old.exists()
    assert running.exists() and someone_elses.exists()


def test_defect_10_content_is_synced_before_the_rename(tmp_path, monkeypatch):
    events = []
    real_fsync, real_replace = os.fsync, os.replace
    monkeypatch.setattr(os, "fsync", lambda fd: (events.append("fsync"), real_fsync(fd))[1])
    monkeypatch.setattr(os, "replace", lambda a, b: (events.append("replace"), real_replace(a, b))[1])
    write_atomically(tmp_path / "r.txt", "text\n")
    assert events[:2] == ["fsync", "replace"]


def test_defect_10_interrupted_write_keeps_the_old_file_and_leaves_no_part(tmp_path, monkeypatch):
    target = tmp_path / "r.txt"
    target.write_text("old report\n")

    def interrupted(a, b):
        raise KeyboardInterrupt
    monkeypatch.setattr(os, "replace", interrupted)
    with pytest.raises(KeyboardInterrupt):
        write_atomically(target, "new report\n")
    assert target.read_text() == "old report\n"
    assert [p.name for p in tmp_path.iterdir()] == ["r.txt"]


def test_defect_10_synth_never_writes_over_its_machine(tmp_path, capsys):
    machine = tmp_path / "m.wav.yaml"           # a machine file named like the sidecar synth would write
    machine.write_text(RW2.read_text())
    err = one_error_line(capsys, OutputError.exit_code, ["synth", machine, "-o", tmp_path / "m.wav"])
    assert "is an input of this run" in err and machine.read_text() == RW2.read_text()


def test_defect_10_demo_folder_that_is_a_file(tmp_path, capsys):
    target = tmp_path / "demo"
    target.write_text("not a folder\n")
    assert "is a file, not a folder" in one_error_line(capsys, OutputError.exit_code, ["demo", "--out", target])


# ------------------------------------------------------------------ 11. escaping per output format

HOSTILE_NAME = "RW-2 <script>x</script> | *bold* _u_ [link](http://x) \x1b[31mRED\x1b]0;title\x07"


@pytest.fixture
def hostile_document(tmp_path):
    machine = tmp_path / "m.yaml"
    machine.write_text(RW2.read_text().replace("machine: RW-2 raw water pump",
                                               "machine: " + json.dumps(HOSTILE_NAME)))
    reading = npz_reading(tmp_path / "r.npz", seed_signal())
    channel = {"name": "a", "label": "P1 | H `x` \x1b[2J", "point": "P1H"}
    sidecar_path(reading).write_text(yaml.safe_dump({"channels": [channel]}))
    return machine, reading


def test_defect_11_markdown_escapes_names(tmp_path, capsys, hostile_document):
    machine, reading = hostile_document
    out = tmp_path / "r.md"
    assert main(["diagnose", str(reading), "--machine", str(machine), "--format", "md", "-o", str(out)]) in (0, 7)
    md = out.read_text()
    assert "<script>" not in md and "&lt;script&gt;" in md
    assert r"\| \*bold\* \_u\_ \[link\]" in md
    # the escape character is shown as its code; Markdown escapes the code's own backslash and bracket
    assert "\x1b" not in md and r"\\x1b\[31mRED" in md
    # every table row keeps its column count: a name's | cannot add a cell
    for table_row in (line for line in md.splitlines() if line.startswith("| ") and "P1" in line):
        assert table_row.replace("\\|", "").count("|") == 5


def test_defect_11_text_report_and_terminal_output_carry_no_control_characters(capsys, hostile_document):
    machine, reading = hostile_document
    assert main(["diagnose", str(reading), "--machine", str(machine)]) in (0, 7)
    out = capsys.readouterr().out
    assert "\x1b" not in out and "\x07" not in out and r"\x1b[31mRED" in out
    assert main(["frequencies", str(machine)]) == 0
    out = capsys.readouterr().out
    assert "\x1b" not in out and out.startswith("RW-2 <script>x</script>")


def test_defect_11_error_messages_carry_no_control_characters(tmp_path, capsys):
    path = tmp_path / "bad\x1b[31mname.yaml"
    assert main(["frequencies", str(path)]) == MachineError.exit_code
    err = capsys.readouterr().err
    assert "\x1b" not in err and r"bad\x1b[31mname.yaml: no such file" in err


def test_defect_11_html_report_with_mathtext_channel_name(tmp_path):
    from engine.pipeline import diagnose, document_of

    reading = npz_reading(tmp_path / "r.npz", seed_signal())
    sidecar_path(reading).write_text(yaml.safe_dump({"channels": [{"name": "a", "label": "$\\foo$", "point": "P1H"}]}))
    d = diagnose(load_reading(reading), load_machine(RW2), shared_reasoner(), plots=True)
    assert "$\\foo$" in render(document_of(d), "html")


# ------------------------------------------------------------------ 12. complex data, warnings

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
        diagnose(reading, load_machine(RW2), shared_reasoner())
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
