"""Run a whole route: hash, skip what is stored, diagnose the rest in parallel, store, report.

Readings run in a local process pool (``workers`` processes, all cores by
default) or on a Dask distributed cluster (``scheduler`` address); either
way the same function diagnoses each reading and returns plain data. Only
this (parent) process writes the store and the reports, each reading in its
own transaction, so an interrupted route keeps everything it finished and a
second run resumes: readings whose content hash is stored are skipped.
At most a few readings per worker are in flight, so memory stays flat
however long the route.
"""

from __future__ import annotations

import os
import re
import time
from collections import Counter, defaultdict
from contextlib import contextmanager
from dataclasses import dataclass, field
from pathlib import Path

from ..history.record import content_hash, reading_key, rulebooks_hash
from ..history.store import Store
from .files import Route, route_inputs
from .work import diagnose_task

IN_FLIGHT_PER_WORKER = 4
CONNECT_TIMEOUT_S = 10


@dataclass
class RouteOutcome:
    """What a route run did: which tasks were diagnosed, skipped as stored, or failed, and why."""
    route: Route
    route_id: int
    hashes: dict[int, str]                      # task index -> the key of its diagnosis (``reading_key``)
    diagnosed: list[int] = field(default_factory=list)
    skipped: list[int] = field(default_factory=list)
    failed: list[dict] = field(default_factory=list)   # {file, error}
    wall_s: float = 0.0
    workers: int = 0
    where: str = "local"


def slug(text: str) -> str:
    """``text`` as a safe file-name part (letters, digits, '.', '_' and '-'; never empty)."""
    return re.sub(r"[^A-Za-z0-9._-]+", "-", text).strip("-").lower() or "machine"


EXTENSIONS = {"text": "txt", "md": "md", "html": "html", "json": "json"}


def summary_paths(out_dir) -> dict[str, Path]:
    """format -> the route summary's file in that format."""
    return {fmt: Path(out_dir) / f"summary.{ext}" for fmt, ext in EXTENSIONS.items()}


def trend_paths(route: Route, out_dir) -> dict[str, Path]:
    """machine name -> its trend page, ``trends/MACHINE.html`` (linked from the summary)."""
    paths: dict[str, Path] = {}
    used: set[str] = set()
    for name in sorted(set(_machine_names(route).values())):
        stem, k = slug(name), 1
        while stem in used:
            k += 1
            stem = f"{slug(name)}-{k}"
        used.add(stem)
        paths[name] = Path(out_dir) / "trends" / f"{stem}.html"
    return paths


def _machine_names(route: Route) -> dict[str, str]:
    """machine file -> the machine's name (its file's stem when the file does not load: that task fails)."""
    from ..common.errors import TellwaveError
    from ..machine import load_machine

    names = {}
    for path in sorted({t.machine_file for t in route.tasks}):
        try:
            names[path] = load_machine(path).name
        except TellwaveError:
            names[path] = Path(path).stem
    return names


def report_paths(route: Route, out_dir, fmt: str) -> dict[int, Path]:
    """task index -> its report: ``reports/MACHINE/FILE.EXT``, one file per task. Files of one machine
    that share a name (``a/pump.npz``, ``b/pump.npz``) are named by their folders below the folder they
    share (``a-pump.npz``); the same file listed twice gets ``-2``, ``-3`` in the route's order."""
    names = _machine_names(route)
    by_folder = defaultdict(list)
    for t in route.tasks:
        by_folder[slug(names[t.machine_file])].append(t)
    paths = {}
    for folder, tasks in by_folder.items():
        stem = {t.index: Path(t.files[0]).name for t in tasks}
        count = Counter(n.lower() for n in stem.values())       # some file systems ignore case
        clashing = [t for t in tasks if count[stem[t.index].lower()] > 1]
        if clashing:
            common = os.path.commonpath([os.path.dirname(t.files[0]) for t in clashing])
            for t in clashing:
                stem[t.index] = "-".join(Path(os.path.relpath(t.files[0], common)).parts)
        used: set[str] = set()
        for t in sorted(tasks, key=lambda t: t.index):
            name, k = stem[t.index], 1
            while name.lower() in used:
                k += 1
                name = f"{stem[t.index]}-{k}"
            used.add(name.lower())
            paths[t.index] = Path(out_dir) / "reports" / folder / f"{name}.{EXTENSIONS[fmt]}"
    return paths


def run_inputs(route: Route, store: Store, site=()) -> list[Path]:
    """Every file a route run reads: the route's files, the store with its journals, the site overlays."""
    from ..common.outfile import sqlite_files
    from ..reasoning.rulebook import rulebook_files

    return route_inputs(route) + sqlite_files(store.path) + (rulebook_files(*site) if site else [])


class _Progress:
    """done/total, failures and time left on stderr (tqdm); silent when ``show`` is False."""

    def __init__(self, total: int, show: bool):
        self.bar = None
        self.failed = 0
        if show and total:
            from tqdm import tqdm
            self.bar = tqdm(total=total, unit="reading", dynamic_ncols=True, desc="route",
                            bar_format="{desc}: {n}/{total} {bar}{postfix} [{elapsed} < {remaining}, {rate_fmt}]")
            self.bar.set_postfix_str("0 failed")

    def step(self, ok: bool) -> None:
        if self.bar is not None:
            if not ok:
                self.failed += 1
                self.bar.set_postfix_str(f"{self.failed} failed", refresh=False)
            self.bar.update(1)

    def close(self) -> None:
        if self.bar is not None:
            self.bar.close()


def _start_worker(lifeline) -> None:
    """Workers leave Ctrl-C to the parent, which stops the route and says how to resume; and they end
    when the route process ends, however it ends (``kill -9`` included).

    ``lifeline`` is the read end of a pipe whose one write end the route process holds: when the route
    dies the read gives EOF and the worker exits at once. Its parent is the fork server, not the route,
    so neither ``os.getppid()`` nor ``PR_SET_PDEATHSIG`` would notice; and each worker holds the fork
    server's own liveness pipe, so once the workers are gone the fork server and then the resource
    tracker see their pipes close and end too. The worker only reads the store, so nothing is lost.
    """
    import os
    import signal
    import threading

    signal.signal(signal.SIGINT, signal.SIG_IGN)

    def watch():
        try:
            lifeline.recv_bytes()
        except (EOFError, OSError):
            pass
        os._exit(1)

    threading.Thread(target=watch, name="route-lifeline", daemon=True).start()


def _start_fork_server() -> None:
    """Start the fork server (and the resource tracker it starts) with Ctrl-C ignored, so that neither
    they nor any worker forked from them takes one: an ignored signal stays ignored across fork and exec
    (Python then installs no handler of its own), while otherwise a Ctrl-C during the server's imports of
    the engine (before it ignores the signal itself) or in a new worker (before ``_start_worker`` runs)
    ends in a traceback. The route process blocks the signal meanwhile, so a Ctrl-C that comes in those
    milliseconds waits and reaches it once its own handler is back (Linux keeps a blocked signal pending
    even while it is ignored)."""
    import signal
    from multiprocessing import forkserver

    blocks = hasattr(signal, "pthread_sigmask")
    if blocks:
        signal.pthread_sigmask(signal.SIG_BLOCK, {signal.SIGINT})
    handler = signal.signal(signal.SIGINT, signal.SIG_IGN)
    try:
        forkserver.ensure_running()
    finally:
        signal.signal(signal.SIGINT, handler)
        if blocks:
            signal.pthread_sigmask(signal.SIG_UNBLOCK, {signal.SIGINT})


@contextmanager
def _ctrl_c_held():
    """Hold a Ctrl-C back until the block ends, then raise it. A submit starts a worker when the pool
    needs one; stopped in the middle, the worker is still forked but the pool no longer knows it, the
    route ends without waiting for it, and the worker fails on the route's queues, gone by then, with a
    traceback. Starting a worker waits for the fork server's imports, so a Ctrl-C can wait a second."""
    import signal

    held: list[int] = []
    try:
        handler = signal.signal(signal.SIGINT, lambda signum, frame: held.append(signum))
    except ValueError:                 # not the main thread: signals never reach this one
        yield
        return
    try:
        yield
    finally:
        signal.signal(signal.SIGINT, handler)
        if held:
            if callable(handler):
                handler(signal.SIGINT, None)
            elif handler == signal.SIG_DFL:
                raise KeyboardInterrupt


def _local(tasks, settings, workers):
    """Results of ``diagnose_task`` in completion order, from a pool of worker processes."""
    import multiprocessing
    from concurrent.futures import FIRST_COMPLETED, ProcessPoolExecutor, wait

    # forkserver: workers fork from a server that has imported the engine once (spawn would import it
    # again in every worker of every pool; plain fork is unsafe once threads run, e.g. the progress bar's)
    ctx = multiprocessing.get_context("forkserver")
    ctx.set_forkserver_preload(["engine.route.work", "engine.pipeline", "engine.reasoning", "engine.report"])
    _start_fork_server()
    pending = iter(tasks)
    lifeline, alive = ctx.Pipe(duplex=False)      # workers read ``lifeline``; only this process holds ``alive``
    with alive, lifeline, ProcessPoolExecutor(max_workers=workers, mp_context=ctx, initializer=_start_worker,
                                              initargs=(lifeline,)) as pool:
        running = set()
        try:
            while True:
                while len(running) < IN_FLIGHT_PER_WORKER * workers:
                    nxt = next(pending, None)
                    if nxt is None:
                        break
                    with _ctrl_c_held():     # a worker half started when the route stops fails noisily
                        running.add(pool.submit(diagnose_task, nxt[0], nxt[1], settings))
                if not running:
                    return
                done, running = wait(running, return_when=FIRST_COMPLETED)
                for f in done:
                    yield f.result()
        except BaseException:
            # the pool's own thread cancels what has not started: a future cancelled here, while that thread
            # finds the pool broken (a Ctrl-C reaches the workers too) and fails every pending one, made
            # Python 3.11's pool print a traceback (InvalidStateError: CANCELLED)
            pool.shutdown(wait=False, cancel_futures=True)
            raise


def _dask(tasks, settings, scheduler, outcome):
    """The same on a Dask distributed cluster: ``diagnose_task`` runs on its workers."""
    from distributed import Client, as_completed

    from ..common.errors import UsageError

    try:
        client = Client(scheduler, timeout=CONNECT_TIMEOUT_S)
    except (OSError, TimeoutError, ValueError) as exc:
        raise UsageError(f"cannot reach the Dask scheduler at {scheduler} ({exc.__class__.__name__})") from None
    with client:
        outcome.workers = max(1, sum(client.nthreads().values()))
        pending = iter(tasks)

        def submit(item):
            return client.submit(diagnose_task, item[0], item[1], settings, pure=False)

        queue = as_completed([submit(item) for _, item in zip(range(IN_FLIGHT_PER_WORKER * outcome.workers), pending)])
        for future in queue:
            result = future.result()
            nxt = next(pending, None)
            if nxt is not None:
                queue.add(submit(nxt))
            yield result


def check_outputs(route, out_dir, fmt: str, inputs) -> dict:
    """Every file a route will write (each reading's report, the summaries, the trend pages), checked against what it
    reads before anything is opened or diagnosed; the reports' paths by task index."""
    from ..common.outfile import check_target

    reports = report_paths(route, Path(out_dir), fmt)
    for path in [*reports.values(), *summary_paths(Path(out_dir)).values(), *trend_paths(route, out_dir).values()]:
        check_target(path, inputs)
    return reports


def run_route(route: Route, store: Store, out_dir, *, workers: int | None = None, scheduler: str | None = None,
              again: bool = False, fmt: str = "html", plots: bool | str | None = False, site=(),
              progress: bool = False, made_at: str | None = None, inputs=None,
              max_samples: int | None = None, alarms=(), units: dict | None = None) -> RouteOutcome:
    """Diagnose every reading of ``route`` not yet in ``store``; write reports under ``out_dir``.

    Every report of one run says it was made at the run's start (``made_at``,
    ISO 8601 to the minute, now when None), whichever worker wrote it. Before
    any reading is diagnosed, every file the run will write (each report and
    the summaries) is checked against ``inputs`` (default ``run_inputs``) by
    ``engine.common.outfile.check_target``. A reading is skipped when a diagnosis
    with its key (``history.record.reading_key``: files, machine, how the
    route reads them, rulebooks) is stored.
    """
    from ..common.outfile import known_inputs
    from ..report import write_atomically
    from ..report.document import report_time

    start = time.perf_counter()
    out_dir = Path(out_dir)
    inputs = known_inputs(inputs if inputs is not None else run_inputs(route, store, site))
    reports = check_outputs(route, out_dir, fmt, inputs)
    rules = rulebooks_hash(tuple(site))
    recordings = {t.index: content_hash(t.files) for t in route.tasks}
    limits = content_hash(alarms) if alarms else None     # other site alarms: another diagnosis to store
    hashes = {t.index: reading_key(t.files, t.machine_file, {"points": t.points, **t.options, "alarms": limits},
                                   rules)
              for t in route.tasks}
    route_id = store.start_route(route.name, route.file)
    outcome = RouteOutcome(route, route_id, hashes)
    todo, queued = [], set()
    for t in route.tasks:
        if hashes[t.index] in queued or (not again and store.has(hashes[t.index])):
            outcome.skipped.append(t.index)     # stored, or listed twice the same way in this route
        else:
            queued.add(hashes[t.index])
            todo.append((t, (hashes[t.index], recordings[t.index])))
    settings = {"site": tuple(str(s) for s in site), "clock": route.clock, "format": fmt, "plots": plots,
                "store": str(store.path.resolve()), "route_id": route_id, "made_at": made_at or report_time(),
                "max_samples": max_samples, "alarms": tuple(str(a) for a in alarms),
                "units": dict(units or {})}     # --frequency-unit, --velocity-unit: over the site's units
    outcome.workers = workers or os.cpu_count() or 1
    if scheduler:
        outcome.where = f"dask {scheduler}"
        results = _dask(todo, settings, scheduler, outcome) if todo else iter(())
    elif todo:
        results = _local(todo, settings, min(outcome.workers, len(todo)))
    else:
        results = iter(())
    by_index = {t.index: t for t in route.tasks}
    bar = _Progress(len(todo), progress)
    try:
        for result in results:
            task = by_index[result["index"]]
            bar.step(result["ok"])
            if not result["ok"]:
                outcome.failed.append({"file": result["file"], "error": result["error"]})
                continue
            record = result["record"]
            if result["report"] is not None:
                path = reports[task.index]
                write_atomically(path, result["report"], inputs)
                record["report"] = str(path.resolve())
            store.add(record, route_id=route_id, replace=again)
            outcome.diagnosed.append(task.index)
    finally:
        bar.close()
        outcome.wall_s = time.perf_counter() - start
    return outcome
