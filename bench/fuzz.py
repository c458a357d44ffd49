"""Fuzz the command line with hostile and careless inputs; count what goes wrong.

Each input is one command line (``frequencies``, ``reading``, ``evidence``,
``diagnose`` in text, Markdown or JSON, ``rulebook check``) over files made
by ``bench.hostile``: readings in every format with their bytes mutated,
odd arrays saved as readings, machine files, sidecars and site overlays
mutated byte by byte or value by value, hostile option values and output
paths. Input ``i`` of seed ``s`` is always the same input.

Worker processes call ``engine.cli.main`` in-process for the bulk; a worker
killed by a signal is a native crash of the input it was running, and an
input still running after ``--hang`` seconds is a hang (the worker is killed
and replaced). Every ``--subprocess-every``-th input also runs through the
installed entry point (``python -m engine.cli``) in its own process.

Counted as failures:

- traceback: an exception other than a TellwaveError left ``main``, or the
  subprocess printed one;
- native crash: a process ended by a signal;
- hang: an input ran longer than ``--hang`` seconds (default 20);
- bad exit: an exit code outside 0, 1, 2, 3, 4, 5, 7, or an error that is
  not exactly one ``tellwave: error:`` line on stderr;
- bad JSON: JSON output that a strict RFC 8259 parser refuses;
- control characters on stdout; an input file changed; a ``.part`` file left.

    python -m bench.fuzz [--inputs 10000] [--workers 2] [--seed 0]
    python -m bench.fuzz --replay 1234 [--seed 0]     # one input, its files kept, its command shown
"""

from __future__ import annotations

import argparse
import contextlib
import hashlib
import io
import multiprocessing as mp
import os
import random
import re
import shutil
import subprocess
import sys
import tempfile
import time
from collections import Counter
from pathlib import Path

import yaml

from bench.hostile import (MACHINES, READING_KINDS, SUFFIX, TOKENS, dump_yaml, mutate_bytes, mutate_tree,
                           odd_array, random_command, strict_json, write_array, write_seed)

ALLOWED_EXIT = {0, 1, 2, 3, 4, 5, 7}
FAILURES = ("traceback", "native crash", "hang", "bad exit", "bad JSON", "control characters",
            "input changed", "part file left")
CATEGORIES = (("reading bytes", 4), ("odd array", 3), ("machine", 3), ("sidecar", 2), ("site", 1), ("options", 2))
_CONTROL = re.compile("[\x00-\x08\x0b-\x1f\x7f-\x9f]")


def _ops(rng: random.Random, count: int):
    names = ["flip", "insert", "delete", "duplicate", "truncate", "replace"]
    ops = []
    for _ in range(count):
        payload = rng.choice(TOKENS) if rng.random() < 0.7 else bytes(rng.randrange(256) for _ in range(8))
        ops.append((rng.choice(names), rng.randrange(1 << 20), rng.randrange(1, 64), payload))
    return ops


def _mutate_yaml(rng: random.Random, path: Path) -> None:
    if rng.random() < 0.5:
        doc = yaml.safe_load(path.read_text(encoding="utf-8"))
        ops = [(rng.randrange(1 << 16), rng.randrange(1 << 16)) for _ in range(rng.randint(1, 4))]
        path.write_bytes(dump_yaml(mutate_tree(doc, ops)))
    else:
        path.write_bytes(mutate_bytes(path.read_bytes(), _ops(rng, rng.randint(1, 6))))


def make_input(seed: int, i: int, folder: Path) -> tuple[str, list[str], list[Path]]:
    """Input ``i``: (category, argv, input files) with its files written in ``folder``."""
    rng = random.Random(f"{seed}:{i}")
    if folder.exists():
        shutil.rmtree(folder)
    folder.mkdir(parents=True)
    category = rng.choices([c for c, _ in CATEGORIES], weights=[w for _, w in CATEGORIES])[0]
    machine = folder / "machine.yaml"
    machine.write_text(rng.choice(MACHINES).read_text(encoding="utf-8"), encoding="utf-8")
    kind = rng.choice(READING_KINDS)
    reading = write_seed(kind, folder, "reading")
    site = None
    if category == "reading bytes":
        reading.write_bytes(mutate_bytes(reading.read_bytes(), _ops(rng, rng.randint(1, 8))))
    elif category == "odd array":
        for extra in folder.glob("reading*"):
            extra.unlink()
        reading = write_array(kind, folder / f"reading{SUFFIX[kind]}", odd_array(rng))
    elif category == "machine":
        _mutate_yaml(rng, machine)
    elif category == "sidecar":
        side = reading.with_name(reading.name + ".yaml")
        if not side.exists():
            side.write_text(yaml.safe_dump({"unit": "g", "sample_rate_hz": 8192.0}))
        _mutate_yaml(rng, side)
    elif category == "site":
        site = write_seed("site", folder, "site")
        _mutate_yaml(rng, site)
    output = folder / "out" / "report.txt"
    fifo = folder / "fifo"
    os.mkfifo(fifo)         # a target that is not a regular file, inside the scratch folder
    argv = random_command(rng, reading, machine, site, output, fifo)
    if category == "machine" and rng.random() < 0.5:
        argv = ["frequencies", str(machine)] + (["--json"] if rng.random() < 0.5 else [])
    inputs = [p for p in folder.rglob("*") if p.is_file()]
    return category, argv, inputs


def _digest(paths: list[Path]) -> dict[Path, str]:
    out = {}
    for p in paths:
        try:
            out[p] = hashlib.sha256(p.read_bytes()).hexdigest()
        except OSError:
            out[p] = "unreadable"
    return out


def _json_target(argv: list[str]) -> str | None:
    """Where the command's JSON goes: 'stdout', a path, or None if it writes no JSON."""
    wants = "--json" in argv or ("--format" in argv and argv[argv.index("--format") + 1] == "json")
    if not wants:
        return None
    if "-o" in argv:
        return argv[argv.index("-o") + 1]
    return "stdout"


def judge(argv, rc, out: str, err: str, before: dict, folder: Path) -> list[tuple[str, str]]:
    """The failures of one finished run, as (kind, detail)."""
    found = []
    if rc not in ALLOWED_EXIT:
        found.append(("bad exit", f"exit {rc}: {err.strip()[-300:]}"))
    elif rc not in (0, 7):
        lines = err.splitlines()
        if len(lines) != 1 or not lines[0].startswith("tellwave: error: "):
            found.append(("bad exit", f"exit {rc} with stderr {err[-300:]!r}"))
    target = _json_target(argv)
    if target and rc in (0, 7):
        text = out if target == "stdout" else Path(target).read_text(encoding="utf-8") \
            if Path(target).is_file() else None
        if text is not None:
            try:
                strict_json(text)
            except ValueError as exc:
                found.append(("bad JSON", str(exc)[:200]))
    if _CONTROL.search(out.replace("\n", "").replace("\t", "")):
        found.append(("control characters", repr(_CONTROL.search(out).group())))
    after = _digest(list(before))
    changed = [str(p.name) for p in before if after.get(p) != before[p]]
    if changed:
        found.append(("input changed", ", ".join(changed)))
    parts = [p.name for p in folder.rglob("*.part")]
    if parts:
        found.append(("part file left", ", ".join(parts)))
    return found


def run_in_process(main, argv: list[str]) -> tuple[int, str, str, str | None]:
    """(exit code, stdout, stderr, traceback or None) of ``main(argv)``."""
    out, err = io.StringIO(), io.StringIO()
    try:
        with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
            rc = main(argv)
    except SystemExit as exc:           # argparse --help and --version
        rc = exc.code if isinstance(exc.code, int) else 0
    except Exception as exc:            # anything else is the failure we look for
        import traceback
        frames = traceback.extract_tb(exc.__traceback__)
        where = f"{Path(frames[-1].filename).name}:{frames[-1].lineno}" if frames else "?"
        return -1, out.getvalue(), err.getvalue(), f"{type(exc).__name__}: {str(exc)[:200]} at {where}"
    return rc, out.getvalue(), err.getvalue(), None


def run_subprocess(argv: list[str], hang_s: float) -> tuple[int | None, str, str]:
    try:
        done = subprocess.run([sys.executable, "-m", "engine.cli", *argv], capture_output=True, text=True,
                              timeout=hang_s, errors="backslashreplace")
    except subprocess.TimeoutExpired:
        return None, "", ""
    return done.returncode, done.stdout, done.stderr


def one(seed: int, i: int, base: Path, main, subprocess_every: int, hang_s: float) -> dict:
    folder = base / f"input{i}"
    try:
        category, argv, inputs = make_input(seed, i, folder)
    except Exception as exc:     # the generator failed, not tellwave: shown apart, never hidden
        return {"i": i, "category": "harness", "argv": [], "rc": None,
                "failures": [("harness error", f"{type(exc).__name__}: {exc}"[:200])]}
    before = _digest(inputs)
    rc, out, err, tb = run_in_process(main, argv)
    failures = [("traceback", tb)] if tb else judge(argv, rc, out, err, before, folder)
    if subprocess_every and i % subprocess_every == 0:
        category, argv, inputs = make_input(seed, i, folder)
        before = _digest(inputs)
        src, sout, serr = run_subprocess(argv, hang_s)
        if src is None:
            failures.append(("hang", "subprocess"))
        elif src < 0:
            failures.append(("native crash", f"signal {-src} (subprocess)"))
        elif "Traceback (most recent call last)" in serr:
            failures.append(("traceback", "subprocess: " + serr.strip().splitlines()[-1][:200]))
        else:
            failures += judge(argv, src, sout, serr, before, folder)
    shutil.rmtree(folder, ignore_errors=True)
    return {"i": i, "category": category, "argv": argv, "rc": rc, "failures": failures}


def _worker(wid: int, seed: int, base: str, conn, results, subprocess_every: int, hang_s: float) -> None:
    import warnings
    warnings.simplefilter("ignore")
    from engine.cli import main
    os.chdir(base)      # default report names land in the scratch folder
    while True:
        i = conn.recv()
        if i is None:
            return
        results.put(("start", wid, i))
        results.put(("done", wid, i, one(seed, i, Path(base), main, subprocess_every, hang_s)))


def fuzz(inputs: int, workers: int, seed: int, hang_s: float, subprocess_every: int, progress=print) -> dict:
    ctx = mp.get_context("spawn")
    results = ctx.Queue()
    counts: Counter = Counter()
    examples: dict[str, list] = {}
    categories: Counter = Counter()
    exits: Counter = Counter()
    todo = iter(range(inputs))
    done = 0
    t0 = time.perf_counter()
    with tempfile.TemporaryDirectory(prefix="tellwave-fuzz-") as base:
        pool: dict[int, tuple] = {}

        def spawn(wid):
            parent, child = ctx.Pipe()
            proc = ctx.Process(target=_worker, args=(wid, seed, base, child, results, subprocess_every, hang_s),
                               daemon=True)
            proc.start()
            pool[wid] = (proc, parent, None, None)
            feed(wid)

        def feed(wid):
            proc, conn, _, _ = pool[wid]
            conn.send(next(todo, None))

        def record(kind, i, detail):
            counts[kind] += 1
            examples.setdefault(kind, [])
            if len(examples[kind]) < 5:
                examples[kind].append((i, detail))

        for wid in range(workers):
            spawn(wid)
        while done < inputs:
            try:
                msg = results.get(timeout=0.5)
            except Exception:
                msg = None
            if msg is not None and msg[0] == "start":
                _, wid, i = msg
                proc, conn, _, _ = pool[wid]
                pool[wid] = (proc, conn, i, time.perf_counter())
            elif msg is not None and msg[0] == "done":
                _, wid, i, result = msg
                done += 1
                categories[result["category"]] += 1
                exits[result["rc"]] += 1
                for kind, detail in result["failures"]:
                    record(kind, i, f"{' '.join(result['argv'])[:200]} -> {detail}")
                proc, conn, _, _ = pool[wid]
                pool[wid] = (proc, conn, None, None)
                feed(wid)
                if done % 500 == 0:
                    progress(f"{done} inputs, {sum(counts.values())} failures, {time.perf_counter() - t0:.0f} s")
            for wid, (proc, conn, current, started) in list(pool.items()):
                if current is not None and started is not None and time.perf_counter() - started > hang_s:
                    proc.kill()
                    proc.join()
                    record("hang", current, f"over {hang_s:.0f} s")
                    done += 1
                    spawn(wid)
                elif not proc.is_alive() and current is not None:
                    code = proc.exitcode
                    record("native crash" if code and code < 0 else "worker died", current, f"exit {code}")
                    done += 1
                    spawn(wid)
        for proc, conn, _, _ in pool.values():
            with contextlib.suppress(Exception):
                conn.send(None)
            proc.join(timeout=5)
            if proc.is_alive():
                proc.kill()
    return {"inputs": done, "counts": counts, "examples": examples, "categories": categories, "exits": exits,
            "seconds": time.perf_counter() - t0}


def replay(seed: int, i: int) -> int:
    folder = Path(tempfile.mkdtemp(prefix=f"tellwave-fuzz-{i}-"))
    category, argv, _ = make_input(seed, i, folder / "files")
    print(f"input {i} of seed {seed} ({category}); files in {folder / 'files'}")
    print("tellwave " + " ".join(repr(a) if (not a or " " in a) else a for a in argv))
    from engine.cli import main
    rc, out, err, tb = run_in_process(main, argv)
    print(f"exit {rc}\n--- stdout\n{out[:3000]}\n--- stderr\n{err[:3000]}" + (f"\n--- exception\n{tb}" if tb else ""))
    return 0


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--inputs", type=int, default=10_000)
    parser.add_argument("--workers", type=int, default=max(1, min(4, (os.cpu_count() or 2))))
    parser.add_argument("--seed", type=int, default=0)
    parser.add_argument("--hang", type=float, default=20.0, help="seconds before an input counts as a hang")
    parser.add_argument("--subprocess-every", type=int, default=25,
                        help="also run every Nth input through the real entry point (0: never)")
    parser.add_argument("--replay", type=int, help="run one input and keep its files")
    args = parser.parse_args()
    if args.replay is not None:
        return replay(args.seed, args.replay)
    report = fuzz(args.inputs, args.workers, args.seed, args.hang, args.subprocess_every)
    print(f"\n{report['inputs']} inputs (seed {args.seed}) in {report['seconds']:.0f} s with {args.workers} workers")
    print("by kind: " + ", ".join(f"{k} {n}" for k, n in sorted(report["categories"].items())))
    print("exit codes: " + ", ".join(f"{k}: {n}" for k, n in sorted(report["exits"].items())))
    for kind in FAILURES + ("worker died", "harness error"):
        print(f"  {kind:<20} {report['counts'].get(kind, 0)}")
    for kind, items in report["examples"].items():
        print(f"\n{kind}:")
        for i, detail in items:
            print(f"  input {i}: {detail}")
    return 1 if sum(n for k, n in report["counts"].items() if k != "harness error") else 0


if __name__ == "__main__":
    raise SystemExit(main())
