"""Killing a route mid-run loses nothing already stored, and the next run resumes."""

from __future__ import annotations

import os
import signal
import sqlite3
import subprocess
import sys
import time

import pytest
from routes import make_route, processes_in_groups

from engine.history.store import Store
from engine.route import load_route, run_route

from support import ROOT

N = 14


def _stored(path) -> int:
    try:
        with sqlite3.connect(f"file:{path}?mode=ro", uri=True, timeout=5) as db:
            return db.execute("SELECT COUNT(*) FROM readings").fetchone()[0]
    except sqlite3.OperationalError:        # not created yet
        return 0


@pytest.mark.slow
def test_a_killed_route_keeps_what_it_stored_and_resumes(tmp_path):
    route = make_route(tmp_path / "r", n=N, bad=False, seed=100)
    store = tmp_path / "h.sqlite"
    proc = subprocess.Popen([sys.executable, "-m", "engine.cli", "route", str(route), "--store", str(store),
                             "--out", str(tmp_path / "out"), "--workers", "1", "--quiet"],
                            cwd=ROOT, start_new_session=True, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    try:
        deadline = time.monotonic() + 120
        while _stored(store) < 3 and proc.poll() is None and time.monotonic() < deadline:
            time.sleep(0.02)
        assert proc.poll() is None, "the route finished before it could be killed: " + proc.stderr.read().decode()
        os.killpg(proc.pid, signal.SIGKILL)            # the route and its worker, mid-run
    finally:
        proc.wait(timeout=30)
        proc.stderr.close()
    with Store(store) as s:
        assert s.integrity() == "ok"
        kept = s.readings()
        assert 3 <= len(kept) < N
        for r in kept:                                 # each stored reading is whole
            assert s.db.execute("SELECT COUNT(*) FROM channels WHERE reading_id = ?", (r["id"],)).fetchone()[0] == 1
            assert s.db.execute("SELECT COUNT(*) FROM indicators WHERE reading_id = ?", (r["id"],)).fetchone()[0] >= 5
            assert r["report"] and os.path.isfile(r["report"])
        resumed = run_route(load_route(route), s, tmp_path / "out", workers=1)
        assert len(resumed.skipped) == len(kept)
        assert len(resumed.diagnosed) == N - len(kept)
        assert len(s.readings()) == N


def _children_of(pids: set[int]) -> set[int]:
    """Every live process sharing the process group of ``pids``."""
    return set(processes_in_groups(pids))


@pytest.mark.skipif(not os.path.isdir("/proc"), reason="reads the process table from /proc")
def test_a_killed_route_leaves_no_process_behind(tmp_path):
    # the pool's workers, the fork server and the resource tracker held the store open for minutes
    route = make_route(tmp_path / "r", n=40, bad=False, seed=300)
    store = tmp_path / "h.sqlite"
    proc = subprocess.Popen([sys.executable, "-m", "engine.cli", "route", str(route), "--store", str(store),
                             "--out", str(tmp_path / "out"), "--workers", "2", "--quiet"],
                            cwd=ROOT, start_new_session=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    try:
        deadline = time.monotonic() + 120
        while _stored(store) < 2 and proc.poll() is None and time.monotonic() < deadline:
            time.sleep(0.02)
        assert proc.poll() is None, "the route finished before it could be killed"
        assert len(_children_of({proc.pid})) >= 4        # route, tracker, fork server, two workers
        proc.kill()                                      # the route alone: its children are not signalled
    finally:
        proc.wait(timeout=30)
    deadline = time.monotonic() + 10
    while _children_of({proc.pid}) and time.monotonic() < deadline:
        time.sleep(0.1)
    left = _children_of({proc.pid})
    for pid in left:                                     # do not leave them to the next test
        os.kill(pid, signal.SIGKILL)
    assert not left, f"{len(left)} process(es) of the killed route still alive"
