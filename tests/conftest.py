"""Shared fixtures: a seeded generator. Paths and signal helpers are in support.py.

Also how the suite is shared among pytest-xdist workers (``-n auto``; pyproject's addopts chooses
``--dist loadgroup``, which this file's scheduler serves): the tests of a file that makes something once for
several of its tests (a module- or class-scoped fixture, a module-level ``functools.cache``) run on one worker,
so that set-up is made once, not once per worker; every other test goes to whichever worker is free. Work is
handed out longest first, as far as the marks tell (``in_turn``), so that no long test is left to run alone
at the end.

(xdist's own ``xdist_group`` marks are still honoured, but pytest 9.2 no longer lets xdist put the group into
the test's id, so a mark added here would be lost; the scheduler reads the files instead.)
"""

from __future__ import annotations

import functools
import re
from pathlib import Path

import numpy as np
import pytest

# what makes a file's tests share a set-up: a fixture wider than one test, or a module-level cache
SHARED_SET_UP = re.compile(r"""scope\s*=\s*["'](?:module|class|package)["']|^@(?:functools\.)?(?:cache|lru_cache)\b"""
                           r"""|\bfunctools\.(?:cache|lru_cache)\(""", re.MULTILINE)


@pytest.fixture
def rng():
    return np.random.default_rng(20261202)


@functools.cache
def shares_set_up(path: Path) -> bool:
    """Whether the test file at ``path`` makes something once for several of its tests (see above)."""
    try:
        return SHARED_SET_UP.search(path.read_text(encoding="utf-8")) is not None
    except OSError:                # not a file (a doctest's id, say): nothing to share
        return False


def file_of(nodeid: str) -> str:
    """The file part of a test id (``tests/x/test_y.py::test_z[1]`` -> ``tests/x/test_y.py``)."""
    return nodeid.split("::", 1)[0]


@pytest.hookimpl(optionalhook=True)
def pytest_xdist_make_scheduler(config, log):
    """Under ``--dist loadgroup``: one work unit per file that shares a set-up, one per test elsewhere."""
    if config.getoption("dist") != "loadgroup":
        return None
    from xdist.scheduler import LoadGroupScheduling

    if not callable(getattr(LoadGroupScheduling, "_split_scope", None)):   # a private method: should a later
        return None                 # xdist drop it, its own scheduling runs the same tests, only less evenly
    config.option.loadscopereorder = False      # hand out work in the workers' collection order (in_turn)
    root = Path(config.rootpath)

    class SharedSetUpScheduling(LoadGroupScheduling):
        def _split_scope(self, nodeid: str) -> str:
            if nodeid.rfind("@") > nodeid.rfind("]"):         # an explicit xdist_group, should xdist set one
                return super()._split_scope(nodeid)
            file = file_of(nodeid)
            return file if shares_set_up(root / file) else nodeid

    return SharedSetUpScheduling(config, log)


def in_turn(slow: bool, shared: bool) -> int:
    """When a test's work unit is handed out (lower first): the files that share a slow set-up (rule coverage,
    the damage stages, the monthly routes), then slow tests on their own, then the other files that share a
    set-up, then the rest, each a few seconds at most, to even out the end."""
    return (0 if slow else 2) + (0 if shared else 1)


@pytest.hookimpl(trylast=True)
def pytest_collection_modifyitems(config, items):
    """On an xdist worker, sort the tests by ``in_turn`` (a stable sort: a file's order is kept within each
    step, and a file that shares its set-up moves whole, with its slowest test)."""
    if not hasattr(config, "workerinput"):
        return
    root = Path(config.rootpath)
    slow_files = {file_of(item.nodeid) for item in items if item.get_closest_marker("slow")}

    def turn(item) -> int:
        file = file_of(item.nodeid)
        shared = shares_set_up(root / file)
        return in_turn(file in slow_files if shared else item.get_closest_marker("slow") is not None, shared)

    items.sort(key=turn)
