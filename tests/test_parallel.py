"""The suite runs on every core (pytest-xdist, ``-n auto``): the test extra brings it, pyproject chooses the
loadgroup distribution, make runs it, and tests/conftest.py keeps a file's shared set-up on one worker
(a module-scoped fixture made once, not once per worker), while the other tests go to any worker."""

from __future__ import annotations

import re
import shutil
import subprocess
import sys
import textwrap
import tomllib

from support import ROOT

PYPROJECT = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))


def test_the_test_extra_brings_xdist_and_the_default_options_choose_loadgroup():
    assert any(re.match(r"pytest-xdist\b", r) for r in PYPROJECT["project"]["optional-dependencies"]["test"])
    assert "--dist loadgroup" in PYPROJECT["tool"]["pytest"]["ini_options"]["addopts"]


def test_make_runs_the_suites_on_every_core():
    make = (ROOT / "Makefile").read_text(encoding="utf-8")
    runs = [line.strip() for line in make.splitlines() if "-m pytest" in line]
    assert runs and all(line.endswith("-n auto") for line in runs), runs
    assert any('-m "" -n auto' in line for line in runs), "make test-all runs the whole suite, as CI does"


SHARED = '''
import os
import time
import pytest

@pytest.fixture(scope="module")
def made(tmp_path_factory):
    with open(os.environ["MADE_LOG"], "a") as log:
        log.write(f"{os.getpid()}\\n")
    return 1

@pytest.mark.parametrize("i", range(4))
def test_uses_the_module_fixture(made, i):
    time.sleep(0.1)
'''

CACHED = '''
import functools
import time
import pytest

@functools.cache
def made():
    return 1

@pytest.mark.parametrize("i", range(4))
def test_uses_the_module_cache(i):
    time.sleep(0.1)
    assert made() == 1
'''

FREE = '''
import time
import pytest

@pytest.mark.parametrize("i", range(8))
def test_on_its_own(i):
    time.sleep(0.1)
'''


def test_tests_that_share_a_file_s_set_up_run_on_one_worker_and_the_rest_anywhere(tmp_path):
    suite = tmp_path / "suite"
    suite.mkdir()
    shutil.copy(ROOT / "tests" / "conftest.py", suite / "conftest.py")
    for name, text in (("test_shared.py", SHARED), ("test_cached.py", CACHED), ("test_free.py", FREE)):
        (suite / name).write_text(textwrap.dedent(text), encoding="utf-8")
    log = tmp_path / "made.log"
    done = subprocess.run([sys.executable, "-m", "pytest", "-n", "2", "--dist", "loadgroup", "-v", "-p",
                           "no:cacheprovider", "-o", "addopts=", "--rootdir", str(suite), "--basetemp",
                           str(tmp_path / "basetemp"), str(suite)],
                          cwd=suite, capture_output=True, text=True, timeout=240,
                          env={**_environment(), "MADE_LOG": str(log)})
    assert done.returncode == 0, done.stdout + done.stderr
    ran = re.findall(r"\[(gw\d+)\][^\n]*PASSED (test_\w+)\.py::", done.stdout)
    assert len(ran) == 16, done.stdout
    workers = {file: {w for w, f in ran if f == file} for file in ("test_shared", "test_cached", "test_free")}
    assert len(workers["test_shared"]) == 1 and len(workers["test_cached"]) == 1, workers
    assert len({w for w, _ in ran}) == 2, "both workers had tests"
    assert len(log.read_text().split()) == 1, "the module-scoped fixture was made once"


def _environment() -> dict:
    import os

    return {k: v for k, v in os.environ.items() if not k.startswith(("PYTEST_", "PYTHONPATH"))}
