"""Fuzzing every reader, the machine loader, sidecars, site overlays and the command line.

Hypothesis drives the mutations of ``bench.hostile`` (byte-level and
value-level) over valid seed files, and odd arrays from
``hypothesis.extra.numpy`` saved in every reading format. The promise
checked on each input: the call returns a value or raises the TellwaveError
of its kind, with one line that names the file; never another exception,
and never a warning (the suite turns warnings into errors). Runs are
derandomized (the same examples every run) and bounded so the whole module
takes seconds; ``python -m bench.fuzz`` is the long run.
"""

from __future__ import annotations

import contextlib
import math
import random
import shutil
import sqlite3
import tempfile
from pathlib import Path

import numpy as np
import pytest
import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from hypothesis.extra import numpy as hnp

from bench import fuzz
from bench.hostile import (
    MACHINES,
    ODD_VALUES,
    READING_KINDS,
    STORE_DAMAGE,
    SUFFIX,
    TOKENS,
    dump_yaml,
    mutate_bytes,
    mutate_tree,
    strict_json,
    write_array,
    write_seed,
)
from engine.common.errors import MachineError, ReadingError, RulebookError, TellwaveError
from engine.common.jsonout import dumps
from engine.machine import load_machine
from engine.machine.kinematics import forcing_frequencies
from engine.pipeline import diagnose
from engine.readings import load_reading, sidecar_path
from engine.reasoning import Reasoner, load_rulebook

from support import CASES

RW2 = CASES / "machines/rw2-raw-water-pump.yaml"


def fuzz_settings(examples: int):
    return settings(max_examples=examples, deadline=None, derandomize=True, database=None,
                    suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow,
                                           HealthCheck.data_too_large])


byte_ops = st.lists(st.tuples(st.sampled_from(["flip", "insert", "delete", "duplicate", "truncate", "replace"]),
                              st.integers(0, 1 << 20), st.integers(1, 64),
                              st.sampled_from(TOKENS) | st.binary(min_size=1, max_size=8)),
                    min_size=1, max_size=6)
tree_ops = st.lists(st.tuples(st.integers(0, 1 << 16), st.integers(0, len(ODD_VALUES) - 1)), min_size=1, max_size=4)


@pytest.fixture(scope="module")
def seeds(tmp_path_factory):
    """One valid seed of each kind, as (path, bytes); readings with their sidecars."""
    folder = tmp_path_factory.mktemp("seeds")
    out = {}
    for kind in READING_KINDS + ("machine", "sidecar", "site"):
        path = write_seed(kind, folder / kind)
        out[kind] = path
    return out


@pytest.fixture(scope="module")
def reasoner():
    return Reasoner(load_rulebook())


def copy_seed(seed: Path, folder: Path) -> Path:
    """The seed and its sidecar copied into ``folder``; returns the copy of the seed."""
    for p in seed.parent.iterdir():
        shutil.copy(p, folder / p.name)
    return folder / seed.name


def refused_in_one_line(exc: TellwaveError, *paths: Path) -> None:
    message = str(exc)
    assert "\n" not in message, message
    assert any(message.startswith(str(p)) for p in paths), message


def check_reading(path: Path, reasoner=None) -> None:
    """Load ``path``; a Reading's channels must be finite or flagged, and (with a reasoner) it
    must diagnose or be refused as a reading."""
    try:
        reading = load_reading(path)
    except ReadingError as exc:
        refused_in_one_line(exc, path, sidecar_path(path))
        return
    for ch in reading.channels:
        blocked = any(q.blocking for q in reading.issues_for(ch.name))
        assert blocked or np.all(np.isfinite(ch.samples)), ch.name
    if reasoner is not None:
        try:
            diagnose(reading, load_machine(RW2), reasoner)
        except ReadingError as exc:
            refused_in_one_line(exc, path)


@fuzz_settings(250)
@given(kind=st.sampled_from(READING_KINDS), ops=byte_ops)
def test_mutated_reading_files(seeds, kind, ops):
    with tempfile.TemporaryDirectory() as tmp:
        path = copy_seed(seeds[kind], Path(tmp))
        path.write_bytes(mutate_bytes(path.read_bytes(), ops))
        check_reading(path)


lengths = st.sampled_from([0, 1, 2, 63, 64, 200, 255, 256, 257, 300, 1024]) | st.integers(0, 4096)
odd_arrays = hnp.arrays(
    dtype=st.sampled_from([np.float64, np.float32, np.float16, np.int16, np.int64, np.uint8, np.complex128,
                           np.bool_]),
    shape=st.one_of(st.tuples(lengths), st.tuples(lengths, st.integers(0, 3)),
                    hnp.array_shapes(min_dims=0, max_dims=3, min_side=0, max_side=8)))


@fuzz_settings(200)
@given(kind=st.sampled_from(["npy", "npz", "mat", "wavf", "wav16", "csv"]), arr=odd_arrays,
       scale=st.sampled_from([1.0, 1e-300, 1e300, 1e-12, 1e12]),
       fs=st.sampled_from([8192.0, 100.0, 6.0, 51200.0, 2e6]))
def test_odd_arrays_in_every_format(reasoner, kind, arr, scale, fs):
    with tempfile.TemporaryDirectory() as tmp, np.errstate(all="ignore"):
        values = arr * scale if arr.dtype.kind in "fc" else arr
        path = write_array(kind, Path(tmp) / f"r{SUFFIX[kind]}", values, fs)
        check_reading(path, reasoner)


@fuzz_settings(60)
@given(x=hnp.arrays(np.float64, st.integers(256, 4096),
                    elements=st.floats(-1e3, 1e3, allow_nan=False, allow_infinity=False)),
       scale=st.sampled_from([1.0, 1e-3, 1e3, 1e-6]), fs=st.sampled_from([2560.0, 8192.0, 25600.0]),
       machine=st.sampled_from(MACHINES), kind=st.sampled_from(["npz", "csv", "wavf"]))
def test_odd_signals_long_enough_to_analyse(reasoner, x, scale, fs, machine, kind):
    """Finite records of analysable length but odd content (constants, spikes, steps, huge
    dynamic range): diagnosed, or refused as a reading; never a traceback or a warning."""
    with tempfile.TemporaryDirectory() as tmp:
        path = write_array(kind, Path(tmp) / f"r{SUFFIX[kind]}", x * scale, fs)
        try:
            reading = load_reading(path)
            diagnose(reading, load_machine(machine), reasoner)
        except ReadingError as exc:
            refused_in_one_line(exc, path, sidecar_path(path))


def check_machine(path: Path) -> None:
    try:
        machine = load_machine(path)
    except MachineError as exc:
        refused_in_one_line(exc, path)
        return
    lines = forcing_frequencies(machine)
    assert all(math.isfinite(f.frequency_hz) and f.frequency_hz > 0 for f in lines)
    strict_json(dumps([f.as_dict() for f in lines]))


@fuzz_settings(200)
@given(source=st.sampled_from(MACHINES), ops=tree_ops)
def test_machine_files_with_odd_values(source, ops):
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "m.yaml"
        path.write_bytes(dump_yaml(mutate_tree(yaml.safe_load(source.read_text(encoding="utf-8")), ops)))
        check_machine(path)


@fuzz_settings(200)
@given(source=st.sampled_from(MACHINES), ops=byte_ops)
def test_machine_files_with_mutated_bytes(source, ops):
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "m.yaml"
        path.write_bytes(mutate_bytes(source.read_bytes(), ops))
        check_machine(path)


@fuzz_settings(150)
@given(values=tree_ops, raw=byte_ops, as_bytes=st.booleans())
def test_sidecars(seeds, values, raw, as_bytes):
    with tempfile.TemporaryDirectory() as tmp:
        side = copy_seed(seeds["sidecar"], Path(tmp))
        if as_bytes:
            side.write_bytes(mutate_bytes(side.read_bytes(), raw))
        else:
            side.write_bytes(dump_yaml(mutate_tree(yaml.safe_load(side.read_text(encoding="utf-8")), values)))
        check_reading(side.with_name(side.name.removesuffix(".yaml")))


@pytest.mark.slow
@fuzz_settings(60)
@given(values=tree_ops, raw=byte_ops, as_bytes=st.booleans())
def test_site_overlays(seeds, values, raw, as_bytes):
    with tempfile.TemporaryDirectory() as tmp:
        site = Path(tmp) / "site.yaml"
        text = seeds["site"].read_text(encoding="utf-8")
        site.write_bytes(mutate_bytes(text.encode(), raw) if as_bytes
                         else dump_yaml(mutate_tree(yaml.safe_load(text), values)))
        try:
            load_rulebook(site)
        except RulebookError as exc:
            refused_in_one_line(exc, site, *[p for p in (CASES.parent / "rulebooks").glob("*.yaml")])


@pytest.mark.slow
@fuzz_settings(150)
@given(i=st.integers(0, 10 ** 6))
def test_command_line(i):
    """Random commands over mutated files through ``engine.cli.main`` (bench.fuzz's checks)."""
    from engine.cli import main

    if fuzz.category_of(20261202, i) not in OLD_CATEGORIES:
        return      # the categories beyond single readings are checked by test_every_category_runs_and_is_judged
    with tempfile.TemporaryDirectory() as tmp, contextlib.chdir(tmp):    # default report names land here
        category, argv, inputs, _ = fuzz.make_input(20261202, i, Path(tmp) / "files")
        before = fuzz._digest(inputs)
        rc, out, err, tb = fuzz.run_in_process(main, argv)
        assert tb is None, (argv, tb)
        assert fuzz.judge(argv, rc, out, err, before, Path(tmp) / "files") == [], (argv, rc, err)


OLD_CATEGORIES = ("reading bytes", "odd array", "machine", "sidecar", "site", "options")
NEW_CATEGORIES = tuple(c for c, _ in fuzz.CATEGORIES if c not in OLD_CATEGORIES)
# the entry points each category must reach (a generator that stopped reaching one is a harness bug)
REACHES = {"route file": {"route"}, "plant file": {"route --plant"}, "route output": {"route"},
           "store damaged": {"history", "history --delete", "trend", "diagnose --store", "route"},
           "site rules": {"rulebook check", "diagnose"}, "plan": {"plan"},
           "trend history": {"history", "history --delete", "trend"},
           "output target": {"diagnose", "diagnose --store", "plan", "trend", "synth"},
           "findings csv": {"findings import"},
           "findings options": {"findings add", "findings import", "findings list", "findings delete", "learn"},
           "findings store": {"findings add", "findings import", "findings list", "findings delete", "learn"}}


def first_inputs(seed: int, category: str, count: int) -> list[int]:
    found = [i for i in range(20000) if fuzz.category_of(seed, i) == category]
    return found[:count]


@pytest.fixture(scope="module")
def cache(tmp_path_factory):
    """The fuzz's shared files (the valid store template), made once."""
    folder = tmp_path_factory.mktemp("fuzz-cache")
    fuzz.store_template(folder)
    return folder


def test_fuzz_generators_are_deterministic(tmp_path, cache):
    for i in [42] + [first_inputs(7, c, 1)[0] for c in NEW_CATEGORIES]:
        a = fuzz.make_input(7, i, tmp_path / "a", cache)
        b = fuzz.make_input(7, i, tmp_path / "b", cache)
        assert a.category == b.category and a.note == b.note
        assert [x.replace("/a/", "/b/") for x in a.argv] == b.argv
        assert [p.read_bytes() for p in sorted(a.inputs)] == [p.read_bytes() for p in sorted(b.inputs)]
    assert random.Random("7:42").random() == random.Random("7:42").random()


def test_every_category_is_drawn():
    drawn = {fuzz.category_of(0, i) for i in range(2000)}
    assert drawn == {c for c, _ in fuzz.CATEGORIES}


def test_store_template_is_a_valid_store_with_two_readings(cache):
    from engine.cli import main
    rc, out, err, tb = fuzz.run_in_process(main, ["history", "RW-2 raw water pump", "--store",
                                                  str(fuzz.store_template(cache)), "--json"])
    assert (rc, tb) == (0, None), err
    rows = strict_json(out)
    assert len(rows) == 2 and rows[0]["taken_at"] != rows[1]["taken_at"]


def test_valid_seed_survey_and_plant_run_to_the_end(tmp_path):
    """The route and plant seeds are valid: without mutation each runs with exit 0, so the fuzz's
    mutations, not the seeds, are what the tool refuses."""
    from bench.hostile import plant_tree, route_tree
    from engine.cli import main
    route, _ = route_tree(tmp_path / "r", readings=1)
    rc, out, err, tb = fuzz.run_in_process(main, ["route", str(route), "--out", str(tmp_path / "o1"), "--store",
                                                  str(tmp_path / "s.sqlite"), "--workers", "1", "--quiet"])
    assert (rc, tb) == (0, None), err
    folder, plant, _ = plant_tree(tmp_path / "p", readings=1)
    rc, out, err, tb = fuzz.run_in_process(main, ["route", str(folder), "--plant", str(plant), "--out",
                                                  str(tmp_path / "o2"), "--store", str(tmp_path / "s.sqlite"),
                                                  "--workers", "1", "--quiet"])
    assert (rc, tb) == (0, None), err


@pytest.mark.parametrize("category", NEW_CATEGORIES)
def test_every_category_runs_and_is_judged(tmp_path, cache, category):
    """A few inputs of each category beyond single readings, in-process, as a fuzz worker runs them.

    This checks the harness, not the engine: each input is made, reaches an entry point of its
    category and is judged into known failure kinds. Failures the engine still has are what
    ``python -m bench.fuzz`` counts; they do not fail this test.
    """
    from engine.cli import main
    reached = set()
    for i in first_inputs(3, category, 4):
        with contextlib.chdir(tmp_path):
            made = fuzz.make_input(3, i, tmp_path / f"in{i}", cache)
            assert made.category == category
            reached.add(fuzz.entry_point(made.argv))
            before = fuzz._digest(made.inputs)
            store_before = fuzz.store_state(fuzz.store_of(made.argv))
            rc, out, err, tb = fuzz.run_in_process(main, made.argv)
            found = [("traceback", tb)] if tb else fuzz.judge(made.argv, rc, out, err, before, tmp_path / f"in{i}",
                                                              store_before)
        assert isinstance(rc, int)
        assert all(kind in fuzz.FAILURES for kind, _ in found), found
    assert reached <= REACHES[category], reached


def test_every_entry_point_is_reached_by_some_category(tmp_path, cache):
    """Over the first inputs of seed 0, every entry point the categories promise is reached."""
    reached = set()
    for i in range(400):
        category = fuzz.category_of(0, i)
        if category in ("store damaged", "trend history", "output target", "site rules", "plan"):
            made = fuzz.make_input(0, i, tmp_path / "x", cache)
            reached.add(fuzz.entry_point(made.argv))
    assert {"history", "history --delete", "trend", "diagnose --store", "route", "plan", "rulebook check",
            "synth", "diagnose"} <= reached, reached


def test_judge_counts_a_store_changed_by_a_read_only_command(tmp_path, cache):
    store = tmp_path / "s.sqlite"
    shutil.copy(fuzz.store_template(cache), store)
    argv = ["history", "RW-2 raw water pump", "--store", str(store)]
    before = fuzz.store_state(store)
    assert fuzz.judge(argv, 0, "", "", {}, tmp_path, before) == []
    with open(store, "ab") as f:
        f.write(b"\0")
    assert [k for k, _ in fuzz.judge(argv, 0, "", "", {}, tmp_path, before)] == ["store changed"]
    # a command that writes the store may change it, but may not turn it into something else
    write = ["diagnose", "r.npy", "--machine", "m.yaml", "--store", str(store)]
    assert fuzz.judge(write, 0, "", "", {}, tmp_path, before) == []
    store.write_text("a report written over the store\n")
    assert [k for k, _ in fuzz.judge(write, 0, "", "", {}, tmp_path, before)] == ["input changed"]
    # a read-only command that creates a store where none was
    missing = tmp_path / "none.sqlite"
    argv = ["trend", "X", "--store", str(missing)]
    before = fuzz.store_state(missing)
    missing.write_bytes(b"")
    assert [k for k, _ in fuzz.judge(argv, 2, "", "tellwave: error: x\n", {}, tmp_path, before)] == ["store changed"]


def test_judge_exit_codes(tmp_path):
    one_line = "tellwave: error: f.yaml:1: problem\n"
    for rc in (0, 7, 9):
        assert fuzz.judge(["route", "r.yaml"], rc, "", "", {}, tmp_path) == []
    for rc in (1, 2, 3, 4, 5, 8):
        assert fuzz.judge(["history"], rc, "", one_line, {}, tmp_path) == []
        assert [k for k, _ in fuzz.judge(["history"], rc, "", one_line * 2, {}, tmp_path)] == ["bad exit"]
    for rc in (6, 10, -1, 130):
        assert [k for k, _ in fuzz.judge(["history"], rc, "", one_line, {}, tmp_path)] == ["bad exit"]


def test_judge_counts_memory_and_the_peak_is_measured(tmp_path):
    assert [k for k, _ in fuzz.judge(["plan", "m.yaml"], 0, "", "", {}, tmp_path,
                                     peak_kb=fuzz.MEMORY_LIMIT_KB + 1)] == ["memory"]
    assert fuzz.judge(["plan", "m.yaml"], 0, "", "", {}, tmp_path, peak_kb=fuzz.MEMORY_LIMIT_KB) == []
    if not fuzz._reset_peak():
        pytest.skip("no /proc/self/clear_refs: the in-process peak cannot be reset here")
    start = fuzz._memory_kb("VmHWM")
    block = np.ones(200 * 1024 * 1024 // 8)         # 200 MB, touched
    grown = fuzz._memory_kb("VmHWM")
    del block
    assert grown - start > 190 * 1024
    assert fuzz._reset_peak() and fuzz._memory_kb("VmHWM") < grown - 150 * 1024


def test_subprocess_reports_its_peak_memory():
    rc, out, err, peak = fuzz.run_subprocess(["--version"], 60.0)
    assert rc == 0 and "tellwave" in out, err
    assert peak is not None and 10_000 < peak < fuzz.MEMORY_LIMIT_KB


@pytest.mark.parametrize("how", STORE_DAMAGE)
def test_every_store_damage_changes_the_store(tmp_path, cache, how):
    store = tmp_path / "s.sqlite"
    shutil.copy(fuzz.store_template(cache), store)
    before = fuzz.store_state(store)
    from bench.hostile import damage_store
    damage_store(random.Random(how), store, how)
    if how == "wal garbage":        # beside the store, which it leaves as it was (SQLite discards such a log)
        assert Path(str(store) + "-wal").stat().st_size == 4096 and fuzz.store_state(store) == before
    else:
        assert fuzz.store_state(store) != before


def test_site_rule_hazards_include_66_and_250_rules():
    from bench.hostile import site_rules
    sizes = set()
    for k in range(300):
        hazard, doc = site_rules(random.Random(k))
        if hazard == "many rules":
            sizes.add(len(doc["rules"]))
            bounds = {r["needs"][0]["where"]["amplitude_mm_s"]["at_least"] for r in doc["rules"]}
            assert len(bounds) == len(doc["rules"])
    assert {66, 250} <= sizes


def test_replay_runs_and_judges(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    i = first_inputs(0, "trend history", 1)[0]
    assert fuzz.replay(0, i) in (0, 1)
    shown = capsys.readouterr().out
    assert f"input {i} of seed 0 (trend history" in shown and "--- judged:" in shown


def test_judge_counts_only_part_files_the_run_left(tmp_path, cache):
    (tmp_path / ".summary.md.4999999.k3x9.part").write_text("left by a killed run before this one\n")
    parts = fuzz.part_files(tmp_path)
    assert fuzz.judge(["route", "r.yaml"], 0, "", "", {}, tmp_path, parts_before=parts) == []
    (tmp_path / ".summary.html.77.abcd.part").write_text("left by this run\n")
    assert [k for k, _ in fuzz.judge(["route", "r.yaml"], 0, "", "", {}, tmp_path, parts_before=parts)] \
        == ["part file left"]
    # a route over a folder with a plant file writes its store like any route
    store = tmp_path / "s.sqlite"
    shutil.copy(fuzz.store_template(cache), store)
    before = fuzz.store_state(store)
    with open(store, "ab") as f:
        f.write(b"\0")
    argv = ["route", "folder", "--plant", "p.yaml", "--store", str(store)]
    assert fuzz.entry_point(argv) == "route --plant"
    assert fuzz.judge(argv, 0, "", "", {}, tmp_path, before, parts_before=fuzz.part_files(tmp_path)) == []


def test_store_state_reads_a_log_only_when_it_is_one(tmp_path, cache):
    """A garbage -wal file is thrown away by SQLite, so its removal is no change of the store; a
    log with a log's header holds writes, so a change in it is one."""
    store = tmp_path / "s.sqlite"
    shutil.copy(fuzz.store_template(cache), store)
    before = fuzz.store_state(store)
    wal = tmp_path / "s.sqlite-wal"
    wal.write_bytes(bytes(range(256)) * 16)
    assert fuzz.store_state(store) == before
    wal.write_bytes(b"\x37\x7f\x06\x82" + bytes(60))
    assert fuzz.store_state(store) != before


def test_findings_categories_reach_every_findings_action_and_learn(tmp_path, cache):
    reached = set()
    for i in range(300):
        if fuzz.category_of(0, i, fuzz.FINDINGS_CATEGORIES) in ("findings options", "findings store"):
            reached.add(fuzz.entry_point(fuzz.make_input(0, i, tmp_path / "x", cache, fuzz.FINDINGS_CATEGORIES).argv))
    assert reached == {"findings add", "findings import", "findings list", "findings delete", "learn"}
    assert {fuzz.category_of(0, i, ("findings csv",)) for i in range(50)} == {"findings csv"}


def test_the_findings_template_holds_two_readings_and_three_findings(cache):
    from engine.cli import main
    store = fuzz.findings_template(cache)
    assert fuzz.findings_count(store) == 3
    rc, out, err, tb = fuzz.run_in_process(main, ["findings", "list", "--store", str(store), "--json"])
    assert (rc, tb) == (0, None), err
    assert sorted(f["reading_id"] for f in strict_json(out)) == [1, 2, 2]


def test_judge_counts_a_findings_command_that_is_not_all_or_none(tmp_path, cache):
    store = tmp_path / "s.sqlite"
    shutil.copy(fuzz.findings_template(cache), store)
    argv = ["findings", "import", "f.csv", "--store", str(store)]
    count, before = fuzz.findings_count(store), fuzz.store_state(store)
    refused = "tellwave: error: f.csv:3: no stored reading has id 9\n"
    assert fuzz.judge(argv, 2, "", refused, {}, tmp_path, before, findings_before=count) == []
    said = "2 finding(s) from 2 row(s) of f.csv stored in s.sqlite\n"
    assert [k for k, _ in fuzz.judge(argv, 0, said, "", {}, tmp_path, before, findings_before=count)] == \
        ["not all or none"]             # it said two, the store holds none more
    db = sqlite3.connect(store, isolation_level=None)
    db.execute("INSERT INTO findings (reading_id, component, fault, found_on, stored_at) VALUES "
               "(1, 'pump', 'unbalance', '2026-05-01', '2026-05-01T00:00:00'),"
               " (2, 'pump', 'unbalance', '2026-05-01', '2026-05-01T00:00:00')")
    db.close()
    assert fuzz.judge(argv, 0, said, "", {}, tmp_path, before, findings_before=count) == []
    # one row stored of two said: a half import
    assert [k for k, _ in fuzz.judge(argv, 0, said.replace("2 finding", "1 finding"), "", {}, tmp_path, before,
                                      findings_before=count)] == ["not all or none"]
    # refused, yet the store changed
    assert [k for k, _ in fuzz.judge(argv, 2, "", refused, {}, tmp_path, before, findings_before=count)] == \
        ["not all or none"]
    # a listing only reads: a change is "store changed"
    assert [k for k, _ in fuzz.judge(["findings", "list", "--store", str(store)], 0, "", "", {}, tmp_path,
                                      before)] == ["store changed"]
