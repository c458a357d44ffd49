"""Every command that writes a file refuses, before any work, to write over what the run reads:
a reading or its sidecar, the machine, the acquisition policy, the history store (and its journal
files), whatever the format; a bad command-line value is exit 2 naming the option."""

from __future__ import annotations

import shutil

import pytest

from engine.cli import main
from engine.history.store import Store
from engine.machine import load_machine
from engine.simulation import simulate, write_simulation

from support import CASES

PUMP = CASES / "machines" / "rw2-raw-water-pump.yaml"
NAME = "RW-2 raw water pump"


@pytest.fixture(scope="module")
def stored(tmp_path_factory):
    """A machine file, a reading with its sidecar, and a store holding that reading."""
    folder = tmp_path_factory.mktemp("guard")
    machine = folder / "m.yaml"
    shutil.copy(PUMP, machine)
    sim = simulate(load_machine(machine), "unbalance", "pump", 2, fs_hz=12800.0, duration_s=1.0, seed=3,
                   points=["P1H"])
    write_simulation(sim, folder / "r.wav")
    assert main(["diagnose", str(folder / "r.wav"), "--machine", str(machine), "--store", str(folder / "h.sqlite"),
                 "--format", "json", "-o", str(folder / "first.json")]) in (0, 7)
    return folder


def _refused(argv, kept, capsys):
    """Run ``argv``; it must exit 2 with one line naming the kept file, which is byte for byte as it was."""
    before = {p: p.read_bytes() for p in kept if p.exists()}
    code = main([str(a) for a in argv])
    err = capsys.readouterr().err
    assert code == 2, err
    assert err.startswith("tellwave: error:") and err.count("\n") == 1 and "input of this run" in err
    for p, content in before.items():
        assert p.read_bytes() == content, p
    return err


def _snapshot(folder):
    return {p.name: p.read_bytes() for p in folder.iterdir() if p.is_file()}


@pytest.mark.parametrize("fmt", ["json", "md", "html", "text"])
def test_trend_never_writes_over_its_store(stored, fmt, capsys):
    store = stored / "h.sqlite"
    _refused(["trend", NAME, "--store", store, "--format", fmt, "-o", store], [store], capsys)
    with Store(store) as s:
        assert s.machines() == [NAME]


def test_trend_never_writes_over_the_stores_journal(stored, capsys):
    store = stored / "h.sqlite"
    _refused(["trend", NAME, "--store", store, "--format", "json", "-o", f"{store}-wal"], [store], capsys)


def test_diagnose_never_writes_over_the_store_it_stores_in(stored, capsys):
    store = stored / "h.sqlite"
    with Store(store) as s:
        rows = len(s.readings())
    _refused(["diagnose", stored / "r.wav", "--machine", stored / "m.yaml", "--store", store, "--format", "json",
              "-o", store], [store], capsys)
    with Store(store) as s:
        assert len(s.readings()) == rows


def test_diagnose_refuses_before_any_work(tmp_path, stored, capsys):
    """The store named as output does not exist yet: refused, and no store was created (nothing ran)."""
    store = tmp_path / "new.sqlite"
    _refused(["diagnose", stored / "r.wav", "--machine", stored / "m.yaml", "--store", store, "--format", "json",
              "-o", store], [], capsys)
    assert not store.exists() and list(tmp_path.iterdir()) == []


@pytest.mark.parametrize("target", ["m.yaml", "policy.yaml", "r.wav", "r.wav.yaml"])
def test_plan_never_writes_over_machine_policy_or_reading(stored, tmp_path, target, capsys):
    from engine.common.paths import RULEBOOKS

    folder = tmp_path / "plan"
    shutil.copytree(stored, folder)
    shutil.copy(RULEBOOKS / "planner" / "acquisition.yaml", folder / "policy.yaml")
    before = _snapshot(folder)
    _refused(["plan", folder / "m.yaml", "--no-proof", "--policy", folder / "policy.yaml",
              *(["--reading", folder / "r.wav"] if target.startswith("r.wav") else []),
              "-o", folder / target], [folder / target], capsys)
    assert _snapshot(folder) == before


def test_plan_with_a_default_html_name_over_an_input(tmp_path, capsys):
    """The default output name (MACHINE.plan.html in the working folder) is checked as well."""
    machine = tmp_path / "m.yaml"
    shutil.copy(PUMP, machine)
    link = tmp_path / "m.plan.html"
    link.symlink_to(machine)
    before = machine.read_bytes()
    code = main(["plan", str(machine), "--no-proof", "--format", "html", "-o", str(link)])
    assert code == 2 and "symbolic link" in capsys.readouterr().err
    assert machine.read_bytes() == before


def test_synth_never_writes_over_the_store_or_machine(stored, capsys):
    _refused(["synth", stored / "m.yaml", "--duration", "0.1", "-o", stored / "m.yaml"], [stored / "m.yaml"], capsys)


@pytest.mark.parametrize("argv, option", [
    (["--rpm", "0"], "--rpm"),
    (["--rpm", "-5"], "--rpm"),
    (["--rpm", "nan"], "--rpm"),
    (["--fmax", "0"], "--fmax"),
    (["--lines", "0"], "--lines"),
    (["--sample-rate", "inf"], "--sample-rate"),
    (["--duration", "-1"], "--duration"),
], ids=["rpm-zero", "rpm-negative", "rpm-nan", "fmax-zero", "lines-zero", "rate-inf", "duration-negative"])
def test_plan_bad_command_line_values_are_usage_errors(argv, option, capsys):
    code = main(["plan", str(PUMP), "--no-proof", *argv])
    err = capsys.readouterr().err
    assert code == 2 and option in err and err.count("\n") == 1
    assert "machine" not in err.lower()     # the command line is wrong, not the machine file


def test_demo_never_writes_over_a_site_overlay_in_its_folder(tmp_path, capsys):
    """A site rulebook kept in the demo folder under a name the demo writes is refused before any case runs."""
    out = tmp_path / "demo"
    out.mkdir()
    overlay = out / "index.html"
    shutil.copy(CASES / "site" / "tallow-ridge.yaml", overlay)
    before = overlay.read_bytes()
    code = main(["demo", "--out", str(out), "--site", str(overlay)])
    err = capsys.readouterr().err
    assert code == 2 and "index.html" in err and "input of this run" in err
    assert overlay.read_bytes() == before and sorted(p.name for p in out.iterdir()) == ["index.html"]


def test_inputs_are_found_by_identity_and_by_path(tmp_path):
    """``known_inputs`` (built once for a route's thousands of files) finds what the pairwise check found."""
    import os

    from engine.common.errors import OutputError
    from engine.common.outfile import check_target, known_inputs, sqlite_files

    reading = tmp_path / "r.wav"
    reading.write_bytes(b"RIFF")
    os.link(reading, tmp_path / "hard.wav")
    inputs = known_inputs([reading, *sqlite_files(tmp_path / "h.sqlite")])
    for target in ("hard.wav", "r.wav", "./r.wav", "h.sqlite", "h.sqlite-wal"):   # the store's files do not exist yet
        with pytest.raises(OutputError, match="input of this run"):
            check_target(tmp_path / target, inputs)
    assert check_target(tmp_path / "report.html", inputs) == tmp_path / "report.html"
