"""Shared fixtures: a seeded generator. Paths and signal helpers are in support.py.

Also how the suite is shared among pytest-xdist workers (``-n auto``; pyproject's addopts chooses
``--dist loadgroup``, which this file's scheduler serves): the tests of a file that makes something once for
several of its tests (a module- or class-scoped fixture, a module-level ``functools.cache``) run on one worker,
so that set-up is made once, not once per worker; every other test goes to whichever worker is free, the
tests marked slow first, so that no long test is left to run alone at the end.

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
SHARED_SET_UP = re.compile(r"""scope\s*=\s*["'](?:module|class|package)["']|^@(?:functools\.)?(?:cache|lru_cache)\b""",
                           re.MULTILINE)


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

    root = Path(config.rootpath)

    class SharedSetUpScheduling(LoadGroupScheduling):
        def _split_scope(self, nodeid: str) -> str:
            if nodeid.rfind("@") > nodeid.rfind("]"):         # an explicit xdist_group, should xdist set one
                return super()._split_scope(nodeid)
            file = file_of(nodeid)
            return file if shares_set_up(root / file) else nodeid

    return SharedSetUpScheduling(config, log)


@pytest.hookimpl(trylast=True)
def pytest_collection_modifyitems(config, items):
    """On an xdist worker, the tests marked slow that run on their own come first (a stable sort: the order
    within a file that shares its set-up is kept). The controller hands out work in this order after the
    files that share a set-up, the largest first."""
    if not hasattr(config, "workerinput"):
        return
    root = Path(config.rootpath)

    def late(item) -> bool:
        return not (item.get_closest_marker("slow") and not shares_set_up(root / file_of(item.nodeid)))

    items.sort(key=late)
