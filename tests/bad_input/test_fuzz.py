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
import tempfile
from pathlib import Path

import numpy as np
import pytest
import yaml
from hypothesis import HealthCheck, given, settings, strategies as st
from hypothesis.extra import numpy as hnp

from engine.errors import MachineError, ReadingError, RulebookError, TellwaveError
from engine.jsonout import dumps
from engine.kinematics import forcing_frequencies
from engine.machine import load_machine
from engine.pipeline import diagnose
from engine.readings import load_reading, sidecar_path
from engine.reasoning import Reasoner, load_rulebook

from bench import fuzz
from bench.hostile import (MACHINES, ODD_VALUES, READING_KINDS, SUFFIX, TOKENS, dump_yaml, mutate_bytes,
                           mutate_tree, strict_json, write_array, write_seed)
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


@fuzz_settings(150)
@given(i=st.integers(0, 10 ** 6))
def test_command_line(i):
    """Random commands over mutated files through ``engine.cli.main`` (bench.fuzz's checks)."""
    from engine.cli import main

    with tempfile.TemporaryDirectory() as tmp, contextlib.chdir(tmp):   # default report names land here
        category, argv, inputs = fuzz.make_input(20261202, i, Path(tmp) / "files")
        before = fuzz._digest(inputs)
        rc, out, err, tb = fuzz.run_in_process(main, argv)
        assert tb is None, (argv, tb)
        assert fuzz.judge(argv, rc, out, err, before, Path(tmp) / "files") == [], (argv, rc, err)


def test_fuzz_generators_are_deterministic(tmp_path):
    a = fuzz.make_input(7, 42, tmp_path / "a")
    b = fuzz.make_input(7, 42, tmp_path / "b")
    assert a[0] == b[0] and [x.replace("/a/", "/b/") for x in a[1]] == b[1]
    assert [p.read_bytes() for p in sorted(a[2])] == [p.read_bytes() for p in sorted(b[2])]
    assert random.Random("7:42").random() == random.Random("7:42").random()
