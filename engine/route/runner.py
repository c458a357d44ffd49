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

import re
import time
from dataclasses import dataclass, field
from pathlib import Path

from ..history.record import content_hash
from ..history.store import Store
from .files import Route, Task
from .work import diagnose_task

IN_FLIGHT_PER_WORKER = 4
CONNECT_TIMEOUT_S = 10


@dataclass
class RouteOutcome:
    route: Route
    route_id: int
    hashes: dict[int, str]                      # task index -> content hash
    diagnosed: list[int] = field(default_factory=list)
    skipped: list[int] = field(default_factory=list)
    failed: list[dict] = field(default_factory=list)   # {file, error}
    wall_s: float = 0.0
    workers: int = 0
    where: str = "local"


def slug(text: str) -> str:
    return re.sub(r"[^A-Za-z0-9._-]+", "-", text).strip("-").lower() or "machine"


def report_path(out_dir: Path, record: dict, task: Task, fmt: str) -> Path:
    ext = {"text": "txt", "md": "md", "html": "html", "json": "json"}[fmt]
    return out_dir / "reports" / slug(record["machine"]) / f"{Path(task.files[0]).name}.{ext}"


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


def _local(tasks, settings, workers):
    """Results of ``diagnose_task`` in completion order, from a pool of worker processes."""
    import multiprocessing
    from concurrent.futures import FIRST_COMPLETED, ProcessPoolExecutor, wait

    # forkserver: workers fork from a server that has imported the engine once (spawn would import it
    # again in every worker of every pool; plain fork is unsafe once threads run, e.g. the progress bar's)
    ctx = multiprocessing.get_context("forkserver")
    ctx.set_forkserver_preload(["engine.route.work", "engine.pipeline", "engine.reasoning", "engine.report"])
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
                    running.add(pool.submit(diagnose_task, nxt[0], nxt[1], settings))
                if not running:
                    return
                done, running = wait(running, return_when=FIRST_COMPLETED)
                for f in done:
                    yield f.result()
        except BaseException:
            for f in running:
                f.cancel()
            pool.shutdown(wait=False, cancel_futures=True)
            raise


def _dask(tasks, settings, scheduler, outcome):
    """The same on a Dask distributed cluster: ``diagnose_task`` runs on its workers."""
    from distributed import Client, as_completed

    from ..errors import UsageError

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


def run_route(route: Route, store: Store, out_dir, *, workers: int | None = None, scheduler: str | None = None,
              again: bool = False, fmt: str = "html", plots: bool = False, site=(),
              progress: bool = False, made_at: str | None = None) -> RouteOutcome:
    """Diagnose every reading of ``route`` not yet in ``store``; write reports under ``out_dir``.

    Every report of one run says it was made at the run's start (``made_at``,
    ISO 8601 to the minute, now when None), whichever worker wrote it.
    """
    import os

    from ..report import write_atomically
    from ..report.document import report_time

    start = time.perf_counter()
    out_dir = Path(out_dir)
    route_id = store.start_route(route.name, route.file)
    hashes = {t.index: content_hash(t.files) for t in route.tasks}
    outcome = RouteOutcome(route, route_id, hashes)
    todo = []
    for t in route.tasks:
        if not again and store.has(hashes[t.index]):
            outcome.skipped.append(t.index)
        else:
            todo.append((t, hashes[t.index]))
    settings = {"site": tuple(str(s) for s in site), "clock": route.clock, "format": fmt, "plots": plots,
                "store": str(store.path.resolve()), "route_id": route_id, "made_at": made_at or report_time()}
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
                path = report_path(out_dir, record, task, fmt)
                write_atomically(path, result["report"])
                record["report"] = str(path.resolve())
            store.add(record, route_id=route_id, replace=again)
            outcome.diagnosed.append(task.index)
    finally:
        bar.close()
        outcome.wall_s = time.perf_counter() - start
    return outcome
