"""Fuzz every entry point of the command line with hostile and careless inputs; count what goes wrong.

Each input is one command line over files made by ``bench.hostile``. Categories (each a row of
the table; the weights in ``CATEGORIES`` spread inputs over every entry point):

- reading bytes, odd array, machine, sidecar, site, options: ``frequencies``, ``reading``,
  ``evidence``, ``diagnose`` (text, Markdown, JSON, HTML) and ``rulebook check`` over readings in
  every format with their bytes mutated, odd arrays saved as readings, machine files, sidecars and
  site overlays mutated byte by byte or value by value, hostile option values and output paths;
- route file, plant file: ``route ROUTE.yaml`` and ``route FOLDER --plant PLANT.yaml`` over a
  small survey (one or two 0.5 s readings, one worker) whose YAML is mutated (times such as
  "25:61", "", 1e18, huge integers, NUL in paths, missing files, duplicate entries, odd speeds,
  sample rates and units, clocks, patterns) or its bytes;
- route output: ``route --out`` into an occupied folder (summary files, folders and links where
  the summary goes, a file where reports go, a link to an input folder), or onto the store, the
  route file or a reading;
- store damaged: a valid store (made once per run by a small route, ``store_template``) damaged
  (``hostile.STORE_DAMAGE``: zeroed page, random bytes, last byte cut, dropped table, schema
  version as text or newer, a foreign SQLite file, infinities and NaN in it, odd times...) and
  given to ``history``, ``history --json``, ``history --delete N``, ``trend``, ``diagnose --store``
  and ``route --store``;
- site rules: site overlays with hazards in the structure of their rules (derivation cycles,
  66, 250 or more rules each with its own condition, deep chains, missing facts and fields)
  for ``rulebook check --site`` and ``diagnose --site``;
- plan: ``plan`` with extreme and boundary settings (rpm 0, rpm putting 2 x line frequency on a
  1X harmonic, Fmax 2^31, 10^7 lines, a duration of 0...), ``--reading``, a mutated ``--policy``,
  every format, ``-o``; the proof by simulation on one point;
- trend history: ``trend`` and ``history`` over a valid store with careless options;
- output target: ``-o`` of ``diagnose``, ``diagnose --store``, ``plan``, ``trend`` and ``synth``
  onto an input, the store, a link, /dev/null, a folder, a FIFO, a dangling link, NUL in the name.
- findings csv: ``findings import`` of a CSV of findings against a valid store holding two readings
  and three findings (``findings_template``), with one to three hazards (``CSV_HAZARDS``: encodings
  other than UTF-8, huge fields, missing, unknown or doubled columns, bad, future and too early dates,
  duplicate rows, unknown reading ids, machines, components and faults, NUL, control characters,
  ragged rows, stray quotes, line endings, empty files, thousands of rows, mutated bytes, a folder,
  FIFO, dangling link or the store itself in the file's place);
- findings options: ``findings add|import|list|delete`` with hostile option values (reading and
  finding ids, machine names, dates, components, faults, stages, work orders and notes);
- findings store: the same commands, valid, on a damaged store (``hostile.STORE_DAMAGE`` and
  ``FINDINGS_DAMAGE``: the findings table dropped or foreign, odd values in it, its readings gone).

``--categories`` draws from the named categories only (give the same to ``--replay``).

Worker processes call ``engine.cli.main`` in-process for the bulk; a worker killed by a signal
is a native crash of the input it was running, and an input still running after ``--hang``
seconds is a hang (the worker is killed and replaced). Every ``--subprocess-every``-th input
also runs through the real entry point in its own process. Default locations (the default
store) point into the scratch folder.

Counted as failures:

- traceback: an exception other than a TellwaveError left ``main``, or the subprocess printed one;
- native crash: a process ended by a signal;
- hang: an input ran longer than ``--hang`` seconds (default 20);
- memory: an input's peak resident memory above 1 GB (in-process: the worker's high-water
  mark, reset before each input; subprocess: its and its children's peak), a MemoryError, or a
  process killed by signal 9;
- bad exit: an exit code outside 0, 1, 2, 3, 4, 5, 7, 8, 9, or an error that is not exactly one
  ``tellwave: error:`` line on stderr (``rulebook check``: one such line per problem, then their count);
- bad JSON: JSON output (``--json``, ``--format json``) that a strict RFC 8259 parser refuses;
- control characters on stdout;
- input changed: a file the command reads (readings, sidecars, machine, route and plant files,
  site overlays, a store it only reads) changed, or a store no longer an SQLite file;
- store changed: a store given to a command that only reads it (``history`` without
  ``--delete``, ``trend``, ``route --out`` onto it...) changed, was created or removed;
- not all or none: ``findings add|import|delete`` refused yet changed the store, or done and the
  store does not hold exactly the findings it said it added (an import: at least one per row) or deleted;
- part file left: a ``.part`` file left behind; device replaced: /dev/null is no longer the
  null device (put back at once: the fuzz may run as root).

    python -m bench.fuzz [--inputs 10000] [--workers 2] [--seed 0] [--failures failures.tsv]
    python -m bench.fuzz --categories "findings csv,findings options,findings store" [--inputs 3000]
    python -m bench.fuzz --replay 1234 [--seed 0] [--subprocess]    # one input, its files kept, judged

The tables give, per category and per entry point, the inputs, how many ran to the end of the
command (exit 0, 7 or 9; the rest were refused at the edge), inputs per second and seconds per
input of one worker, and the count of each failure kind.
"""

from __future__ import annotations

import argparse
import contextlib
import csv
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
from datetime import date, timedelta
from pathlib import Path
from typing import NamedTuple

import yaml

from bench.hostile import (
    MACHINES,
    POLICY,
    READING_KINDS,
    RW2,
    RW2_NAME,
    SITE,
    STORE_DAMAGE,
    SUFFIX,
    TOKENS,
    damage_store,
    dump_yaml,
    history_command,
    hostile_out_folder,
    mutate_bytes,
    mutate_plant,
    mutate_route,
    mutate_tree,
    odd_array,
    plan_command,
    plant_tree,
    random_command,
    route_tree,
    short_reading,
    site_rules,
    strict_json,
    write_array,
    write_seed,
)

ALLOWED_EXIT = {0, 1, 2, 3, 4, 5, 7, 8, 9}
FAILURES = ("traceback", "native crash", "hang", "memory", "bad exit", "bad JSON", "control characters",
            "input changed", "store changed", "not all or none", "part file left", "device replaced")
SHORT = {"traceback": "tb", "native crash": "crash", "hang": "hang", "memory": "mem", "bad exit": "exit",
         "bad JSON": "json", "control characters": "ctrl", "input changed": "input", "store changed": "store",
         "not all or none": "all", "part file left": "part", "device replaced": "dev", "worker died": "died",
         "harness error": "harness"}
# (category, weight): the weights spread inputs over every entry point; the route and store
# categories run short readings so that they cost about as much per input as a diagnosis
CATEGORIES = (("reading bytes", 4), ("odd array", 3), ("machine", 3), ("sidecar", 2), ("site", 1), ("options", 2),
              ("route file", 2), ("plant file", 1), ("route output", 1), ("store damaged", 3), ("site rules", 1),
              ("plan", 2), ("trend history", 2), ("output target", 2),
              ("findings csv", 3), ("findings options", 2), ("findings store", 2))
FINDINGS_CATEGORIES = ("findings csv", "findings options", "findings store")
ARG_MAX = 100_000      # characters of one argument a subprocess can take (Linux: 128 KiB each); longer: in-process only
MEMORY_LIMIT_KB = 1024 * 1024        # peak resident memory of one input above 1 GB is a failure
WRITES_STORE = ("route", "route --plant", "diagnose --store", "history --delete",     # every other use only reads it
                "findings add", "findings import", "findings delete")
FINDINGS_WRITES = ("findings add", "findings import", "findings delete")     # all or nothing: a refusal writes nothing
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


def store_template(cache: Path) -> Path:
    """A valid history store with two readings of the RW-2 pump a month apart, made once per cache
    folder by a small route (the store inputs copy and damage it)."""
    path = cache / "template.sqlite"
    if path.is_file():
        return path
    from engine.cli import main

    work = cache / f"template-work-{os.getpid()}"
    shutil.rmtree(work, ignore_errors=True)
    route, doc = route_tree(work)
    doc["readings"][1]["time"] = "2026-04-04T09:11:00"
    route.write_bytes(dump_yaml(doc))
    with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(io.StringIO()):
        rc = main(["route", str(route), "--out", str(work / "out"), "--store", str(work / "s.sqlite"),
                   "--workers", "1", "--quiet", "--format", "text"])
    if rc != 0:
        raise RuntimeError(f"the store template's route ended with exit {rc}")
    import sqlite3
    db = sqlite3.connect(work / "s.sqlite", isolation_level=None)
    db.execute("PRAGMA wal_checkpoint(TRUNCATE)")      # one self-contained file to copy, still in WAL mode
    db.close()
    tmp = cache / f"template.{os.getpid()}.tmp"
    shutil.copy(work / "s.sqlite", tmp)
    os.replace(tmp, path)
    shutil.rmtree(work, ignore_errors=True)
    return path


def _copy_store(template: Path, path: Path) -> Path:
    shutil.copy(template, path)
    return path


def _store_command(rng: random.Random, folder: Path, store: Path, reading: Path, route: Path | None) -> list[str]:
    """One of the commands that open a store: history, trend, diagnose --store, route --store."""
    pick = rng.choice(["history", "history", "trend", "trend", "diagnose", "route"])
    output = folder / "out" / "report.txt"
    if pick in ("history", "trend"):
        argv = history_command(rng, store, output)
        return argv if argv[0] == pick or rng.random() < 0.5 else history_command(rng, store, output)
    if pick == "diagnose":
        return ["diagnose", str(reading), "--machine", str(RW2), "--store", str(store), "--format",
                rng.choice(["text", "json", "md"]),
                "--taken-at", rng.choice(["2026-05-04T09:00:00", "2026-03-01T00:00:00"])]
    return ["route", str(route), "--store", str(store), "--out", str(folder / "route-out"), "--workers", "1",
            "--quiet", "--format", "text"] + (["--again"] if rng.random() < 0.3 else [])


def _whole_tool_input(category: str, rng: random.Random, folder: Path, cache: Path,
                      note: list[str]) -> tuple[list[str], list[Path]]:
    """(argv, files that must not change) of the categories beyond single readings; ``note`` gets
    what the input's hazard is where the command line does not show it."""
    keep: list[Path] = []
    if category == "route file":
        route, doc = route_tree(folder, readings=rng.choice([1, 2]))
        if rng.random() < 0.75:
            route.write_bytes(dump_yaml(mutate_route(rng, doc)))
        else:
            route.write_bytes(mutate_bytes(route.read_bytes(), _ops(rng, rng.randint(1, 4))))
        for extra in rng.sample(["delete reading", "delete machine", "reading is folder", "none"], 1):
            if extra == "delete reading":
                (folder / "readings" / "r1.npy").unlink()
            elif extra == "delete machine" and rng.random() < 0.5:
                (folder / "machines" / "m.yaml").unlink()
            elif extra == "reading is folder":
                (folder / "readings" / "r1.npy").unlink()
                (folder / "readings" / "r1.npy").mkdir()
        keep = [p for p in folder.rglob("*") if p.is_file()]
        out = str(folder / "out") if rng.random() < 0.95 else str(folder / "out\x00x")      # NUL in a path
        argv = ["route", str(route), "--out", out, "--store", str(folder / "s.sqlite"),
                "--workers", "1", "--quiet", "--format", rng.choice(["text", "json", "md", "html"])]
        return argv, keep
    if category == "plant file":
        readings, plant, doc = plant_tree(folder, readings=rng.choice([1, 2]))
        if rng.random() < 0.75:
            plant.write_bytes(dump_yaml(mutate_plant(rng, doc, readings)))
        else:
            plant.write_bytes(mutate_bytes(plant.read_bytes(), _ops(rng, rng.randint(1, 4))))
        keep = [p for p in folder.rglob("*") if p.is_file()]
        where = rng.choice([str(readings)] * 6 + [str(folder / "missing"), str(plant), str(folder)])
        argv = ["route", where, "--plant", str(plant), "--out", str(folder / "out"), "--store",
                str(folder / "s.sqlite"), "--workers", "1", "--quiet", "--format", rng.choice(["text", "json"])]
        return argv, keep
    if category == "route output":
        route, doc = route_tree(folder, readings=1)
        victim = folder / "readings" / "r1.npy"
        out, hazard = hostile_out_folder(rng, folder, victim)
        note.append(hazard)
        keep = [p for p in folder.rglob("*") if p.is_file() and "out" not in p.relative_to(folder).parts[:1]]
        store = folder / "s.sqlite"
        if rng.random() < 0.3:
            _copy_store(store_template(cache), store)
        # never the root folder or a system folder: the fuzz may run as root
        target = rng.choice([str(out)] * 5 + [str(store), str(route), str(victim), "", str(victim.parent)])
        if target == str(store) and not store.exists():
            _copy_store(store_template(cache), store)
        return ["route", str(route), "--out", target, "--store", str(store), "--workers", "1", "--quiet",
                "--format", rng.choice(["text", "md"])], keep
    if category == "store damaged":
        store = _copy_store(store_template(cache), folder / "store.sqlite")
        damage = rng.choice(STORE_DAMAGE)
        note.append(damage)
        damage_store(rng, store, damage)
        reading = short_reading(folder / "readings", "r9", seed=5)
        route, _ = route_tree(folder / "survey", readings=1)
        keep = [p for p in folder.rglob("*") if p.is_file() and p.name != "store.sqlite"
                and not p.name.startswith("store.sqlite-")]
        return _store_command(rng, folder, store, reading, route), keep
    if category == "trend history":
        store = _copy_store(store_template(cache), folder / "store.sqlite")
        keep = [p for p in folder.rglob("*") if p.is_file() and p.name != "store.sqlite"]
        return history_command(rng, store, folder / "out" / "trend.txt"), keep
    if category == "site rules":
        hazard, doc = site_rules(rng)
        note.append(hazard)
        site = folder / "site.yaml"
        site.write_bytes(dump_yaml(doc))
        if rng.random() < 0.5:
            return ["rulebook", "check", "--site", str(site)], [site]
        reading = short_reading(folder, "r1", seed=1)
        keep = [p for p in folder.rglob("*") if p.is_file()]
        return ["diagnose", str(reading), "--machine", str(RW2), "--site", str(site), "--format",
                rng.choice(["text", "json"])], keep
    if category == "plan":
        machine = folder / "machine.yaml"
        machine.write_text(RW2.read_text(encoding="utf-8"), encoding="utf-8")
        if rng.random() < 0.15:
            _mutate_yaml(rng, machine)
        policy = None
        if rng.random() < 0.2:
            policy = folder / "policy.yaml"
            policy.write_text(POLICY.read_text(encoding="utf-8"), encoding="utf-8")
            _mutate_yaml(rng, policy)
        reading = short_reading(folder, "r1", seed=2, kind=rng.choice(["npy", "csv", "wavf"]),
                                n=rng.choice([4096, 64, 1]))
        if rng.random() < 0.2:
            reading.write_bytes(mutate_bytes(reading.read_bytes(), _ops(rng, 2)))
        keep = [p for p in folder.rglob("*") if p.is_file()]
        argv = plan_command(rng, machine, reading, policy, folder / "out" / "plan.txt")
        if "--no-proof" not in argv:
            # the proof simulates every fault: one point, and no slow shaft (its long records take
            # seconds per fault), keep it as cheap as the other categories; slow speeds go without it
            if "--point" not in argv:
                argv += ["--point", "P1H"]
            if "--rpm" in argv and argv[argv.index("--rpm") + 1] in ("0.5", "60", "1e-9"):
                argv[argv.index("--rpm") + 1] = "1486"
        return argv, keep
    if category == "output target":
        store = _copy_store(store_template(cache), folder / "store.sqlite")
        reading = short_reading(folder, "r1", seed=3)
        machine = folder / "machine.yaml"
        machine.write_text(RW2.read_text(encoding="utf-8"), encoding="utf-8")
        (folder / "a-folder").mkdir()
        (folder / "link-to-reading").symlink_to(reading)
        (folder / "link-to-null").symlink_to("/dev/null")
        (folder / "dangling").symlink_to(folder / "nowhere" / "x")
        os.mkfifo(folder / "fifo")
        command = rng.choice(["diagnose", "diagnose", "plan", "trend", "synth", "diagnose --store"])
        target = rng.choice([str(reading), str(reading) + ".yaml", str(machine), str(store),
                             str(folder / "link-to-reading"),
                             str(folder / "link-to-null"), "/dev/null", str(folder / "a-folder"),
                             str(folder / "a-folder") + "/", str(folder / "fifo"), str(folder / "dangling"), "",
                             str(folder / "new.txt"), str(folder / "nul\x00.txt")])
        if command.startswith("diagnose"):
            argv = ["diagnose", str(reading), "--machine", str(machine), "--format", rng.choice(["text", "json", "md"]),
                    "-o", target]
            if command == "diagnose --store":
                argv += ["--store", str(store)]
        elif command == "plan":
            argv = ["plan", str(machine), "--no-proof", "--fmax", "1000", "--lines", "400", "-o", target]
        elif command == "trend":
            argv = ["trend", "RW-2 raw water pump", "--store", str(store), "--format", rng.choice(["text", "json"]),
                    "-o", target]
        else:
            argv = ["synth", str(machine), "--duration", "0.5", "--sample-rate", "4096", "-o",
                    target if rng.random() < 0.5 else target + rng.choice([".wav", ".npz", ".csv"])]
        # a file the command does not read may be overwritten; what it reads may not
        keep = {"diagnose": [reading, reading.with_name(reading.name + ".yaml"), machine], "plan": [machine],
                "trend": [], "synth": [machine]}[argv[0]]
        return argv, keep
    raise ValueError(f"unknown category {category!r}")


# --- findings: ``tellwave findings add|import|list|delete`` ------------------------------------------

FINDINGS_FAULTS = ("outer-race", "inner-race", "rolling-element", "cage", "unbalance", "misalignment-angular",
                   "looseness-structural", "vane-pass", "stator", "nothing-found")
FINDINGS_COMPONENTS = ("pump_de", "pump_nde", "motor_de", "motor_nde", "pump", "motor", "impeller", "M-RW2")
ODD_READING_IDS = ["0", "-1", "3", "99999", str(2 ** 63), str(2 ** 63 - 1), str(2 ** 70), "9" * 40, "1.0", "1e3",
                   "one", "", " ", " 1 ", "0x1", "+1", "1_000", "\u0661", "\x1b[31m1", "1\x00"]
ODD_MACHINES = ["nope", "rw-2 raw water pump", "RW-2 raw water pump ", "%", "_", "*", "", "\x1b]0;owned\x07",
                "a" * 5000, "RW-2\nraw water pump", "\u202eRW-2"]
ODD_DATES = ["2026-02-30", "2026-13-01", "", "04/05/2026", "yesterday", "2026-03-04T25:00", "0001-01-01",
             "9999-12-31", "+2026-05-05", "2026-5-5", "20260505", "2026-05-05T10:00:00+25:00", " 2026-05-05 ",
             "2026-05-05T10:00:00Z", "2026-03-01", "2026-03-04", "1e18", "nan", "2026-05-05\x00", "\x1b[2J"]
ODD_COMPONENTS = ["pump_xx", "", " ", "PUMP_DE", " pump_de", "\x1b[31mpump_de", "pump_de\x07", "a" * 3000,
                  "pump_de;DROP TABLE findings", "'", "\u202epump_de", "motor_de\nmotor_nde"]
ODD_FAULTS = ["outer_race", "Outer-Race", "healthy", "levels-implausible", "speed-differs", "other", "nothing found",
              "", " outer-race", "\x1b[31m", "a" * 3000, "NOTHING-FOUND", "%"]
ODD_STAGES = ["5", "0", "-1", "2.0", "none", "NONE", "1e0", "\u00b2", "\u0663", "", "nan", str(2 ** 70), "two"]
ODD_TEXTS = ["\x1b]0;owned\x07", "line\nbreak", "<b>bold</b> | *x*", "a" * 2000, "a" * 2001, "a" * 200_000,
             "\u202eevil", "tab\there", "\r", "$\\foo$", "\x7f\x9b"]
CSV_HAZARDS = ("bad encoding", "huge field", "missing column", "unknown column", "column twice", "bad date",
               "future date", "date before reading", "duplicate row", "unknown reading", "unknown machine",
               "unknown component", "unknown fault", "NUL", "control characters", "ragged row", "stage",
               "quoting", "line endings", "empty", "many rows", "byte mutation", "not a file")


def findings_template(cache: Path) -> Path:
    """A valid store with the RW-2 pump's two readings (ids 1 and 2, a month apart) and three findings,
    made once per cache folder. Unlike ``store_template`` its route's machine file is kept (in the cache),
    so the findings' components are checked against it."""
    path = cache / "findings-template.sqlite"
    if path.is_file():
        return path
    from engine.cli import main

    work = cache / f"findings-work-{os.getpid()}"          # kept: the stored readings name its machine file
    shutil.rmtree(work, ignore_errors=True)
    route, doc = route_tree(work)
    doc["readings"][1]["time"] = "2026-04-04T09:11:00"
    route.write_bytes(dump_yaml(doc))
    table = work / "found.csv"
    table.write_text("reading,machine,date,component,fault,stage,work_order,notes\n"
                     "1,,2026-03-20,pump_de,outer-race,2,WO-1,spall on the outer race\n"
                     ",RW-2 raw water pump,2026-04-10,pump_nde,nothing-found,none,WO-2,\n"
                     "2,,2026-04-11,pump,other,,WO-3,a loose guard\n", encoding="utf-8")
    store = work / "s.sqlite"
    with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(io.StringIO()):
        rc = main(["route", str(route), "--out", str(work / "out"), "--store", str(store), "--workers", "1",
                   "--quiet", "--format", "text"])
        rc = rc or main(["findings", "import", str(table), "--store", str(store)])
    if rc != 0:
        raise RuntimeError(f"the findings store template ended with exit {rc}")
    import sqlite3
    db = sqlite3.connect(store, isolation_level=None)
    db.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    db.close()
    tmp = cache / f"findings-template.{os.getpid()}.tmp"
    shutil.copy(store, tmp)
    os.replace(tmp, path)
    return path


def _valid_finding(rng: random.Random) -> dict:
    """One valid finding row against the template: reading 1 or 2, or the machine, a date after both."""
    by_machine = rng.random() < 0.3
    fault = rng.choice(FINDINGS_FAULTS + ("other",))
    day = rng.choice(["2026-04-05", "2026-05-01", "2026-06-30", "2026-04-04"])
    return {"reading": "" if by_machine else rng.choice(["1", "2"]), "machine": RW2_NAME if by_machine else "",
            "date": day, "component": rng.choice(FINDINGS_COMPONENTS), "fault": fault,
            "stage": rng.choice(["", "1", "2", "3", "4", "none"]), "work_order": rng.choice(["", "WO-77", "4411"]),
            "notes": "found at the repair" if fault == "other" or rng.random() < 0.4 else ""}


def _csv_text(names: list[str], rows: list[dict]) -> str:
    out = io.StringIO()
    w = csv.writer(out, lineterminator="\n")
    w.writerow(names)
    for r in rows:
        w.writerow([r.get(n, "") for n in names])
    return out.getvalue()


def findings_csv(rng: random.Random, path: Path, note: list[str]) -> Path:
    """A findings CSV file at ``path``: valid rows against the template, with one to three hazards
    (``CSV_HAZARDS``); returns the path the command is given (it may be a folder, a FIFO, missing)."""
    names = ["reading", "machine", "date", "component", "fault"] + rng.sample(["stage", "work_order", "notes"],
                                                                            rng.randint(0, 3))
    rng.shuffle(names)
    rows = [_valid_finding(rng) for _ in range(rng.randint(1, 6))]
    hazards = rng.sample(CSV_HAZARDS, rng.choice([0, 1, 1, 1, 2, 3]))
    note.extend(hazards)
    encoding, ending, data_hazards = "utf-8", "\n", []

    def some_row():
        return rng.choice(rows)
    for h in hazards:
        if h == "huge field":
            some_row()[rng.choice(names)] = "x" * rng.choice([2001, 70_000, 140_000, 1_000_000])
        elif h == "missing column":
            names.remove(rng.choice([n for n in names if n in ("date", "component", "fault", "reading", "machine")]))
        elif h == "unknown column":
            names.insert(rng.randrange(len(names) + 1), rng.choice(["Reading", "severity", "", " ", "date_found",
                                                                  "\x1b[31mx", "comp\x00"]))
        elif h == "column twice":
            names.append(rng.choice(names))
        elif h == "bad date":
            some_row()["date"] = rng.choice(ODD_DATES)
        elif h == "future date":
            some_row()["date"] = (date.today() + timedelta(days=rng.choice([1, 2, 365, 3000]))).isoformat()
        elif h == "date before reading":
            some_row().update(date=rng.choice(["2026-03-01", "2026-03-03", "2025-12-31"]), reading="1", machine="")
        elif h == "duplicate row":
            rows.append(dict(some_row()))
        elif h == "unknown reading":
            some_row().update(reading=rng.choice(ODD_READING_IDS), machine=rng.choice(["", RW2_NAME]))
        elif h == "unknown machine":
            some_row().update(reading="", machine=rng.choice(ODD_MACHINES))
        elif h == "unknown component":
            some_row()["component"] = rng.choice(ODD_COMPONENTS)
        elif h == "unknown fault":
            some_row()["fault"] = rng.choice(ODD_FAULTS)
        elif h == "control characters":
            some_row()[rng.choice(names)] = rng.choice(ODD_TEXTS)
        elif h == "stage":
            some_row()["stage"] = rng.choice(ODD_STAGES)
        elif h == "many rows":
            rows += [_valid_finding(rng) for _ in range(rng.choice([300, 3000]))]
        elif h == "bad encoding":
            encoding = rng.choice(["utf-16", "latin-1", "cp1252", "utf-32", "utf-8-sig"])
            some_row()["notes"] = "roulement usé, Lager beschädigt"
        elif h == "line endings":
            ending = rng.choice(["\r\n", "\r", "\n\n", "\u2028"])
        else:
            data_hazards.append(h)
    text = _csv_text(names, rows).replace("\n", ending)
    if "empty" in data_hazards:
        text = rng.choice(["", "\n", text.split(ending)[0] + ending, ",,,,\n", "\ufeff", ending * 50])
    if "ragged row" in data_hazards:
        lines = text.split(ending)
        k = rng.randrange(len(lines))             # the header too; a file may be one line
        lines[k] = lines[k] + rng.choice([",", ",extra", ""]) if rng.random() < 0.5 else lines[k].rpartition(",")[0]
        text = ending.join(lines)
    if "quoting" in data_hazards:
        at = rng.randrange(len(text) + 1)
        text = text[:at] + rng.choice(['"', '"unterminated', '""', '"a\nb"', "'", '"\x00"']) + text[at:]
    if "NUL" in data_hazards:
        at = rng.randrange(len(text) + 1)
        text = text[:at] + "\x00" + text[at:]
    try:
        data = text.encode(encoding)
    except UnicodeEncodeError:
        data = text.encode(encoding, errors="replace")
    if "byte mutation" in data_hazards:
        data = mutate_bytes(data, _ops(rng, rng.randint(1, 6)))
    path.write_bytes(data)
    if "not a file" in data_hazards:
        path.unlink()
        kind = rng.choice(["folder", "fifo", "missing", "dangling", "link to the store", "empty name"])
        note.append(kind)
        if kind == "folder":
            path.mkdir()
        elif kind == "fifo":
            os.mkfifo(path)
        elif kind == "dangling":
            path.symlink_to(path.parent / "nowhere.csv")
        elif kind == "link to the store":
            path.symlink_to(path.parent / "store.sqlite")
        elif kind == "empty name":
            return Path("")
    return path


def _findings_command(rng: random.Random, store: Path, folder: Path, note: list[str], hostile: bool) -> list[str]:
    """One findings command on ``store``: add, import, list or delete, with hostile values if ``hostile``."""
    action = rng.choice(["add", "add", "import", "import", "list", "delete", "learn"])
    store_args = ["--store", str(store)] if rng.random() < 0.97 else []       # else the default store (scratch)
    if action == "learn":
        return _learn_command(rng, store, folder, store_args, hostile)
    if action == "import":
        return ["findings", "import", str(findings_csv(rng, folder / "found.csv", note))] + store_args
    if action == "list":
        machine = [rng.choice([RW2_NAME] * 4 + ODD_MACHINES)] if rng.random() < 0.6 else []
        return ["findings", "list"] + (machine if hostile or not machine else [RW2_NAME]) + store_args \
            + (["--json"] if rng.random() < 0.5 else [])
    if action == "delete":
        fid = rng.choice(["1", "2", "3"] + (ODD_READING_IDS if hostile else []))
        return ["findings", "delete", fid] + store_args
    row = _valid_finding(rng)
    if hostile:
        for _ in range(rng.randint(1, 3)):
            field = rng.choice(["reading", "machine", "date", "component", "fault", "stage", "work_order", "notes",
                                "future"])
            values = {"reading": ODD_READING_IDS, "machine": ODD_MACHINES, "date": ODD_DATES,
                      "component": ODD_COMPONENTS, "fault": ODD_FAULTS, "stage": ODD_STAGES,
                      "work_order": ODD_TEXTS, "notes": ODD_TEXTS}
            if field == "future":
                row["date"] = (date.today() + timedelta(days=rng.choice([1, 400]))).isoformat()
            else:
                row[field] = rng.choice(values[field])
    argv = ["findings", "add"]
    which = [("--reading", row["reading"]), ("--machine", row["machine"])]
    given = [w for w in which if w[1]] or [rng.choice(which)]
    if hostile and rng.random() < 0.1:
        given = which                                   # both, which is refused
    for opt, value in given:
        argv += [opt, value]
    for opt, key in (("--date", "date"), ("--component", "component"), ("--fault", "fault"), ("--stage", "stage"),
                     ("--work-order", "work_order"), ("--notes", "notes")):
        if row[key] or key in ("date", "component", "fault"):
            if hostile and key in ("date", "component", "fault") and rng.random() < 0.04:
                continue                                # a needed option left out
            argv += [f"{opt}={row[key]}" if row[key].startswith("-") else opt] + \
                ([] if row[key].startswith("-") else [row[key]])
    return argv + store_args


def _learn_command(rng: random.Random, store: Path, folder: Path, store_args: list[str], hostile: bool) -> list[str]:
    """``tellwave learn`` on ``store``: machines, format, report and overlay targets, some of them inputs
    (the store, a folder, the null device, one file for both) that must be refused before any work."""
    argv = ["learn"]
    if rng.random() < 0.5:
        argv.append(rng.choice(ODD_MACHINES) if hostile else RW2_NAME)
    argv += store_args
    if rng.random() < 0.6:
        argv += ["--format", rng.choice(["text", "md", "html", "json"] + (["pdf", ""] if hostile else []))]
    targets = [folder / "out" / "learned.yaml", folder / "out" / "report.txt"]
    if hostile:
        targets += [store, folder, Path("/dev/null"), folder / ("n" * 300)]
    report = rng.choice(targets) if rng.random() < 0.4 else None
    if report is not None:
        argv += ["-o", str(report)]
    if rng.random() < 0.7:
        overlay = report if report is not None and hostile and rng.random() < 0.2 else rng.choice(targets)
        argv += ["--overlay", str(overlay)]
    if hostile and rng.random() < 0.2:
        argv += ["--site", str(rng.choice([SITE, folder, folder / "missing"]))]
    return argv


FINDINGS_DAMAGE = ("drop findings", "findings odd values", "readings gone under findings", "findings foreign table",
                   "findings duplicated")


def damage_findings(rng: random.Random, path: Path, how: str) -> None:
    """Damage the findings of the valid store at ``path`` in the way ``how`` names (one of FINDINGS_DAMAGE)."""
    import sqlite3

    statements = {
        "drop findings": ["DROP TABLE findings"],
        "findings odd values": rng.sample([
            "UPDATE findings SET stage = 'two'", "UPDATE findings SET stage = 9e999", "UPDATE findings SET stage = 99",
            "UPDATE findings SET found_on = 'x'", "UPDATE findings SET found_on = '9999-99-99'",
            "UPDATE findings SET found_on = 1e18", "UPDATE findings SET component = x'00ff1b5b33316d'",
            "UPDATE findings SET fault = char(27) || ']0;owned' || char(7)", "UPDATE findings SET notes = 9e999",
            "UPDATE findings SET work_order = zeroblob(100000)", "UPDATE findings SET notes = x'c328'",
            "UPDATE findings SET reading_id = 'one'", "UPDATE findings SET reading_id = 99",
            "UPDATE findings SET id = 9223372036854775807 WHERE id = 1", "UPDATE findings SET stored_at = ''",
            "UPDATE findings SET fault = 'no-such-fault'"], rng.randint(1, 3)),
        "readings gone under findings": ["DELETE FROM readings WHERE id = 1"],
        "findings foreign table": ["DROP TABLE findings", "CREATE TABLE findings (x TEXT)",
                                   "INSERT INTO findings VALUES ('a stranger''s row')"],
        "findings duplicated": ["DROP INDEX findings_by_reading",
                                "CREATE TABLE f2 AS SELECT * FROM findings",
                                "DROP TABLE findings",
                                "CREATE TABLE findings (id INTEGER, reading_id INTEGER, component TEXT, fault TEXT,"
                                " stage INTEGER, found_on TEXT, work_order TEXT, notes TEXT, stored_at TEXT)",
                                "INSERT INTO findings SELECT * FROM f2", "INSERT INTO findings SELECT * FROM f2",
                                "DROP TABLE f2"],
    }[how]
    db = sqlite3.connect(path, isolation_level=None)
    try:
        db.execute("PRAGMA foreign_keys=OFF")
        for s in statements:
            with contextlib.suppress(sqlite3.IntegrityError):      # two odd values making rows alike: one kept
                db.execute(s)
        db.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    finally:
        db.close()


def _findings_input(category: str, rng: random.Random, folder: Path, cache: Path,
                    note: list[str]) -> tuple[list[str], list[Path]]:
    store = _copy_store(findings_template(cache), folder / "store.sqlite")
    if category == "findings store":
        if rng.random() < 0.5:
            damage = rng.choice(STORE_DAMAGE)
            damage_store(rng, store, damage)
        else:
            damage = rng.choice(FINDINGS_DAMAGE)
            damage_findings(rng, store, damage)
        note.append(damage)
        argv = _findings_command(rng, store, folder, note, hostile=False)
    elif category == "findings csv":
        argv = ["findings", "import", str(findings_csv(rng, folder / "found.csv", note)), "--store", str(store)]
        if rng.random() < 0.05:
            argv += ["--site", str(SITE)]
    else:
        argv = _findings_command(rng, store, folder, note, hostile=True)
    keep = [p for p in folder.rglob("*") if p.is_file() and not p.name.startswith("store.sqlite")]
    return argv, keep


def findings_count(store: Path | None) -> int | None:
    """How many findings ``store`` holds, read without writing; None when it cannot be read."""
    import sqlite3

    if store is None or not _is_sqlite(store):
        return None
    try:
        db = sqlite3.connect(f"file:{store}?mode=ro", uri=True)
        try:
            return int(db.execute("SELECT count(*) FROM findings").fetchone()[0])
        finally:
            db.close()
    except (sqlite3.Error, ValueError, TypeError):
        return None


def _pick_category(rng: random.Random, only: tuple[str, ...] = ()) -> str:
    chosen = [(c, w) for c, w in CATEGORIES if not only or c in only]
    return rng.choices([c for c, _ in chosen], weights=[w for _, w in chosen])[0]


def category_of(seed: int, i: int, only: tuple[str, ...] = ()) -> str:
    """The category of input ``i`` without making it (the first draw of its generator); ``only``: the
    categories drawn from (all when empty)."""
    return _pick_category(random.Random(f"{seed}:{i}"), only)


class Input(NamedTuple):
    category: str
    argv: list[str]
    inputs: list[Path]          # files the command must not change
    note: str                   # the hazard, where the command line does not show it (a store's damage)


def make_input(seed: int, i: int, folder: Path, cache: Path | None = None, only: tuple[str, ...] = ()) -> Input:
    """Input ``i`` with its files written in ``folder``;
    ``cache`` holds what inputs share (the valid store templates), made on first use; ``only`` the
    categories drawn from (all when empty)."""
    rng = random.Random(f"{seed}:{i}")
    if folder.exists():
        shutil.rmtree(folder)
    folder.mkdir(parents=True)
    cache = cache or folder.parent
    category = _pick_category(rng, only)
    if category in FINDINGS_CATEGORIES:
        note: list[str] = []
        argv, keep = _findings_input(category, rng, folder, cache, note)
        return Input(category, argv, keep, ", ".join(note))
    if category not in ("reading bytes", "odd array", "machine", "sidecar", "site", "options"):
        note: list[str] = []
        argv, keep = _whole_tool_input(category, rng, folder, cache, note)
        return Input(category, argv, keep, ", ".join(note))
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
    return Input(category, argv, inputs, "")


def entry_point(argv: list[str]) -> str:
    """The entry point an argv exercises, for the table (a command, with the option that changes its job)."""
    if not argv:
        return "-"
    name = argv[0]
    if name in ("rulebook", "findings") and len(argv) > 1:
        return f"{name} {argv[1]}"
    if name == "history" and "--delete" in argv:
        return "history --delete"
    if name == "diagnose" and "--store" in argv:
        return "diagnose --store"
    if name == "route" and "--plant" in argv:
        return "route --plant"
    return name


def store_of(argv: list[str]) -> Path | None:
    if "--store" in argv:
        k = argv.index("--store")
        if k + 1 < len(argv) and not argv[k + 1].startswith("-"):
            return Path(argv[k + 1])
    return None


def _digest(paths: list[Path]) -> dict[Path, str]:
    out = {}
    for p in paths:
        try:
            out[p] = hashlib.sha256(p.read_bytes()).hexdigest()
        except OSError:
            out[p] = "unreadable"
    return out


def store_state(path: Path | None) -> str | None:
    """What a store holds, as far as a reader could tell: missing, a folder, or the digest of the
    file with its write-ahead log (a change left in the log is a change of the store)."""
    if path is None:
        return None
    if not os.path.lexists(path):
        return "missing"
    if path.is_dir():
        return "folder"
    parts = []
    for p in (path, Path(str(path) + "-wal")):
        try:
            data = p.read_bytes()
        except OSError:
            continue
        if p == path or data[:4] in _WAL_MAGIC:     # a log without a log's header holds nothing SQLite reads
            parts.append(hashlib.sha256(data).hexdigest())
    kind = "sqlite:" if _is_sqlite(path) else "other:"
    return kind + ":".join(parts) if parts else "unreadable"


_SQLITE = b"SQLite format 3\x00"
_WAL_MAGIC = (b"\x37\x7f\x06\x82", b"\x37\x7f\x06\x83")


def _is_sqlite(path: Path) -> bool:
    try:
        with open(path, "rb") as f:
            return f.read(16) == _SQLITE
    except OSError:
        return False


def _was_sqlite(state: str) -> bool:
    return state.startswith("sqlite:")


def _json_target(argv: list[str]) -> str | None:
    """Where the command's JSON goes: 'stdout', a path, or None if it writes no JSON."""
    wants = "--json" in argv or ("--format" in argv and argv[argv.index("--format") + 1] == "json")
    if not wants or argv[0] in ("route", "synth"):
        return None
    if "-o" in argv:
        return argv[argv.index("-o") + 1]
    return "stdout"


def part_files(folder: Path) -> set[Path]:
    return set(folder.rglob("*.part")) if os.path.isdir(folder) else set()


def judge(argv, rc, out: str, err: str, before: dict, folder: Path, store_before: str | None = None,
          peak_kb: int | None = None, parts_before: set | None = None,
          findings_before: int | None = None) -> list[tuple[str, str]]:
    """The failures of one finished run, as (kind, detail). ``store_before`` is the state of the
    store the command was given (``store_state``), ``peak_kb`` its peak resident memory,
    ``parts_before`` the ``.part`` files the input itself holds (left by an earlier killed run),
    ``findings_before`` how many findings the store held (``findings_count``)."""
    found = []
    if rc not in ALLOWED_EXIT:
        found.append(("bad exit", f"exit {rc}: {err.strip()[-300:]}"))
    elif rc not in (0, 7, 9):
        lines = err.splitlines()
        if argv[:2] == ["rulebook", "check"] and len(lines) > 2 and re.fullmatch(
                rf"tellwave: {len(lines) - 1} problems in the rulebooks", lines[-1]):
            lines = lines[:1] if all(x.startswith("tellwave: error: ") for x in lines[:-1]) else lines
        if len(lines) != 1 or not lines[0].startswith("tellwave: error: "):
            found.append(("bad exit", f"exit {rc} with stderr {err[-300:]!r}"))
    target = _json_target(argv)
    if target and rc in (0, 7):
        try:
            text = out if target == "stdout" else Path(target).read_text(encoding="utf-8") \
                if Path(target).is_file() else None
        except (OSError, UnicodeDecodeError) as exc:
            text = None
            found.append(("bad JSON", f"cannot read {target}: {exc}"[:200]))
        if text is not None:
            try:
                strict_json(text)
            except ValueError as exc:
                found.append(("bad JSON", str(exc)[:200]))
    if _CONTROL.search(out.replace("\n", "").replace("\t", "")):
        found.append(("control characters", repr(_CONTROL.search(out).group())))
    after = _digest(list(before))
    changed = [str(p.relative_to(folder)) if p.is_relative_to(folder) else str(p)
               for p in before if after.get(p) != before[p]]
    if changed:
        found.append(("input changed", ", ".join(changed)[:200]))
    store = store_of(argv)
    if store_before not in (None, "missing", "folder") and store is not None and not _is_sqlite(store) \
            and _was_sqlite(store_before):
        found.append(("input changed", f"the store {store.name} is no longer an SQLite file"))
    elif store_before is not None and store is not None and entry_point(argv) not in WRITES_STORE:
        now = store_state(store)
        if now != store_before:
            what = "created" if store_before == "missing" else "removed" if now == "missing" else "rewritten"
            found.append(("store changed", f"{entry_point(argv)} {what} {store.name}"))
    found += _judge_findings(argv, rc, out, store, store_before, findings_before)
    parts = sorted(p.name for p in part_files(folder) - (parts_before or set()))
    if parts:
        found.append(("part file left", ", ".join(parts)[:200]))
    if peak_kb is not None and peak_kb > MEMORY_LIMIT_KB:
        found.append(("memory", f"peak resident {peak_kb / 1024:.0f} MB"))
    if "/dev/null" in argv and not _null_device_intact():
        found.append(("device replaced", "/dev/null is no longer the null device (restored)"))
    return found


def _judge_findings(argv, rc, out: str, store: Path | None, store_before: str | None,
                    findings_before: int | None) -> list[tuple[str, str]]:
    """A findings command that writes: refused, it leaves the store as it was (no half import, no new
    store); done, the store holds exactly the findings it says it added (an import: at least one per row)."""
    entry = entry_point(argv)
    if entry not in FINDINGS_WRITES or store is None or store_before is None:
        return []
    if rc != 0:
        now = store_state(store)
        if now != store_before and not (store_before == "missing" and now == "missing"):
            return [("not all or none", f"{entry} refused (exit {rc}) yet changed {store.name}")]
        return []
    if findings_before is None:
        return []
    after = findings_count(store)
    said = {"findings add": len(re.findall(r"^finding \d+: ", out, re.M)), "findings delete": -1}
    if entry == "findings import":
        m = re.match(r"(\d+) finding\(s\) from (\d+) row\(s\)", out)
        if not m or int(m[1]) < int(m[2]):
            return [("not all or none", f"findings import said {out[:120]!r}")]
        said[entry] = int(m[1])
    if after is None or after - findings_before != said[entry]:
        return [("not all or none", f"{entry}: {findings_before} findings before, {after} after, "
                                    f"{said[entry]:+d} said")]
    return []


def _null_device_intact() -> bool:
    """True if /dev/null is still the character device; if not, put it back (the fuzz runs as root
    in containers, and a writer that replaced it would break every later command)."""
    import stat
    info = os.lstat("/dev/null")
    if stat.S_ISCHR(info.st_mode):
        return True
    with contextlib.suppress(OSError):
        os.unlink("/dev/null")
        os.mknod("/dev/null", 0o666 | stat.S_IFCHR, os.makedev(1, 3))
        os.chmod("/dev/null", 0o666)
    return False


def _reset_peak() -> bool:
    """Start a new peak of this process's resident memory (Linux: write 5 to clear_refs)."""
    try:
        with open("/proc/self/clear_refs", "w") as f:
            f.write("5")
        return True
    except OSError:
        return False


def _memory_kb(field: str) -> int | None:
    try:
        with open("/proc/self/status") as f:
            for line in f:
                if line.startswith(field + ":"):
                    return int(line.split()[1])
    except OSError:
        pass
    return None


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


# the real entry point in its own process, which writes its peak resident memory (with its
# children's) to the file named in TELLWAVE_FUZZ_RSS when it exits
_MEASURED = ("import atexit, os, resource, runpy, sys\n"
             "def _peak():\n"
             "    kb = max(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss,\n"
             "             resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss)\n"
             "    with open(os.environ['TELLWAVE_FUZZ_RSS'], 'w') as f:\n"
             "        f.write(str(kb))\n"
             "atexit.register(_peak)\n"
             "sys.argv = ['tellwave', *sys.argv[1:]]\n"
             "runpy.run_module('engine.cli', run_name='__main__')\n")


def run_subprocess(argv: list[str], hang_s: float, env: dict | None = None) -> tuple[int | None, str, str, int | None]:
    """(exit code or None on a hang, stdout, stderr, peak resident memory in kB or None)."""
    with tempfile.NamedTemporaryFile(prefix="tellwave-fuzz-rss-", delete=False) as f:
        rss = Path(f.name)
    try:
        done = subprocess.run([sys.executable, "-c", _MEASURED, *argv], capture_output=True, text=True,
                              timeout=hang_s, errors="backslashreplace",
                              env={**(env or os.environ), "TELLWAVE_FUZZ_RSS": str(rss)})
    except subprocess.TimeoutExpired:
        return None, "", "", None
    finally:
        try:
            text = rss.read_text()
        except OSError:
            text = ""
        with contextlib.suppress(OSError):
            rss.unlink()
    peak = int(text) if text.strip().isdigit() else None
    return done.returncode, done.stdout, done.stderr, peak


def one(seed: int, i: int, base: Path, main, subprocess_every: int, hang_s: float, only: tuple[str, ...] = ()) -> dict:
    folder = base / f"input{i}"
    t0 = time.perf_counter()
    try:
        category, argv, inputs, note = make_input(seed, i, folder, base / "cache", only)
    except Exception as exc:     # the generator failed, not tellwave: shown apart, never hidden
        import traceback
        where = traceback.extract_tb(exc.__traceback__)[-1]
        return {"i": i, "category": "harness", "argv": [], "rc": None, "seconds": time.perf_counter() - t0,
                "failures": [("harness error", f"{type(exc).__name__}: {exc} at {Path(where.filename).name}:"
                                               f"{where.lineno}"[:200])]}
    before = _digest(inputs)
    findings_before = findings_count(store_of(argv))      # read before the state: a reader may tidy the log
    store_before = store_state(store_of(argv))
    parts_before = part_files(folder)
    measured = _reset_peak()
    rc, out, err, tb = run_in_process(main, argv)
    peak = _memory_kb("VmHWM") if measured else None
    if tb and tb.startswith("MemoryError"):
        failures = [("memory", tb)]
    elif tb:
        failures = [("traceback", tb)]
    else:
        failures = judge(argv, rc, out, err, before, folder, store_before, peak, parts_before, findings_before)
    if subprocess_every and i % subprocess_every == 0 and not any("\x00" in a or len(a) > ARG_MAX for a in argv):
        category, argv, inputs, note = make_input(seed, i, folder, base / "cache", only)
        before = _digest(inputs)
        findings_before = findings_count(store_of(argv))
        store_before = store_state(store_of(argv))
        parts_before = part_files(folder)
        src, sout, serr, speak = run_subprocess(argv, hang_s)
        if src is None:
            failures.append(("hang", "subprocess"))
        elif src == -9:
            failures.append(("memory", "killed by signal 9 (subprocess; the kernel's out-of-memory killer?)"))
        elif src < 0:
            failures.append(("native crash", f"signal {-src} (subprocess)"))
        elif "Traceback (most recent call last)" in serr:
            last = serr.strip().splitlines()[-1][:200]
            failures.append(("memory" if last.startswith("MemoryError") else "traceback", "subprocess: " + last))
        else:
            failures += [(k, d + " (subprocess)") for k, d in
                         judge(argv, src, sout, serr, before, folder, store_before, speak, parts_before,
                               findings_before)]
    shutil.rmtree(folder, ignore_errors=True)
    now = _memory_kb("VmRSS")
    return {"i": i, "category": category, "argv": argv, "rc": rc, "failures": failures, "note": note,
            "seconds": time.perf_counter() - t0, "retire": now is not None and now > MEMORY_LIMIT_KB // 2}


def _scratch_env(base: str) -> None:
    """Keep every default location (the default history store, caches) inside the scratch folder."""
    os.environ["XDG_DATA_HOME"] = os.path.join(base, "xdg-data")
    os.environ["XDG_CACHE_HOME"] = os.path.join(base, "xdg-cache")
    os.environ["MPLCONFIGDIR"] = os.path.join(base, "mpl")


def _worker(wid: int, seed: int, base: str, conn, results, subprocess_every: int, hang_s: float,
            only: tuple[str, ...] = ()) -> None:
    import warnings
    warnings.simplefilter("ignore")
    _scratch_env(base)
    from engine.cli import main
    os.chdir(base)      # default report names land in the scratch folder
    while True:
        i = conn.recv()
        if i is None:
            return
        results.put(("start", wid, i))
        result = one(seed, i, Path(base), main, subprocess_every, hang_s, only)
        results.put(("done", wid, i, result))
        if result.get("retire"):        # memory a big input left behind would count against the next
            return


class Tally:
    """Counts per category and per entry point: inputs, seconds, failures of each kind."""

    def __init__(self):
        self.rows: dict[tuple[str, str], Counter] = {}
        self.examples: dict[str, list] = {}
        self.counts: Counter = Counter()

    def add(self, table: str, key: str, seconds: float, failures, rc=None) -> None:
        row = self.rows.setdefault((table, key), Counter())
        row["inputs"] += 1
        row["ran"] += rc in (0, 7, 9)       # reached the end of the command, not refused at the edge
        row["seconds"] += seconds
        for kind, _ in failures:
            row[kind] += 1

    def render(self, table: str, title: str) -> str:
        kinds = [k for k in FAILURES + ("worker died", "harness error")
                 if any(c[k] for (t, _), c in self.rows.items() if t == table)]
        head = (f"{title:<22} {'inputs':>7} {'ran':>5} {'in/s':>6} {'s/in':>6}"
                + "".join(f" {SHORT[k]:>6}" for k in kinds))
        lines = [head, "-" * len(head)]
        total = Counter()
        for (t, key), c in sorted(self.rows.items(), key=lambda kv: kv[0][1]):
            if t != table:
                continue
            total.update(c)
            lines.append(self._line(key, c, kinds))
        lines.append(self._line("all", total, kinds))
        return "\n".join(lines)

    @staticmethod
    def _line(key, c, kinds):
        per = c["seconds"] / c["inputs"] if c["inputs"] else 0.0
        rate = c["inputs"] / c["seconds"] if c["seconds"] else 0.0
        return (f"{key[:22]:<22} {c['inputs']:>7} {c['ran']:>5} {rate:>6.1f} {per:>6.2f}"
                + "".join(f" {c[k]:>6}" for k in kinds))


def fuzz(inputs: int, workers: int, seed: int, hang_s: float, subprocess_every: int, progress=print,
         only: tuple[str, ...] = ()) -> dict:
    ctx = mp.get_context("spawn")
    results = ctx.Queue()
    counts: Counter = Counter()
    examples: dict[str, list] = {}
    failed: list[tuple[int, str, str, str, str]] = []        # (input, category, kind, argv, detail)
    tally = Tally()
    categories: Counter = Counter()
    exits: Counter = Counter()
    todo = iter(range(inputs))
    done = 0
    t0 = time.perf_counter()
    with tempfile.TemporaryDirectory(prefix="tellwave-fuzz-") as base:
        pool: dict[int, tuple] = {}
        (Path(base) / "cache").mkdir()
        _scratch_env(base)          # the subprocess runs inherit it
        store_template(Path(base) / "cache")        # once, before the workers race to make it
        if not only or set(only) & set(FINDINGS_CATEGORIES):
            findings_template(Path(base) / "cache")

        def spawn(wid):
            parent, child = ctx.Pipe()
            proc = ctx.Process(target=_worker, args=(wid, seed, base, child, results, subprocess_every, hang_s, only),
                               daemon=False)     # a route in the worker starts its own pool
            proc.start()
            pool[wid] = (proc, parent, None, None)
            feed(wid)

        def feed(wid):
            proc, conn, _, _ = pool[wid]
            conn.send(next(todo, None))

        def record(kind, i, detail, category="?", argv=()):
            counts[kind] += 1
            examples.setdefault(kind, [])
            if len(examples[kind]) < 5:
                examples[kind].append((i, detail))
            failed.append((i, category, kind, " ".join(_shell(a) for a in argv), detail))

        def lost(wid, current, kind, detail):
            category = category_of(seed, current, only)     # the command: python -m bench.fuzz --replay N
            record(kind, current, f"(worker lost; --replay {current}) -> {detail}", category)
            tally.add("category", category, hang_s if kind == "hang" else 0.0, [(kind, detail)])
            tally.add("entry", "(lost: see --replay)", 0.0, [(kind, detail)])

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
                tally.add("category", result["category"], result["seconds"], result["failures"], result["rc"])
                tally.add("entry", entry_point(result["argv"]), result["seconds"], result["failures"], result["rc"])
                for kind, detail in result["failures"]:
                    note = f" [{result['note']}]" if result.get("note") else ""
                    record(kind, i, f"{' '.join(result['argv'])[:200]}{note} -> {detail}",
                           result["category"] + note, result["argv"])
                proc, conn, _, _ = pool[wid]
                pool[wid] = (proc, conn, None, None)
                if result.get("retire"):
                    proc.join(timeout=10)
                    spawn(wid)
                else:
                    feed(wid)
                if done % 500 == 0:
                    progress(f"{done} inputs, {sum(counts.values())} failures, {time.perf_counter() - t0:.0f} s")
            for wid, (proc, _conn, current, started) in list(pool.items()):
                if current is not None and started is not None and time.perf_counter() - started > hang_s:
                    proc.kill()
                    proc.join()
                    lost(wid, current, "hang", f"over {hang_s:.0f} s")
                    done += 1
                    spawn(wid)
                elif not proc.is_alive() and current is not None:
                    code = proc.exitcode
                    kind = "memory" if code == -9 else "native crash" if code and code < 0 else "worker died"
                    lost(wid, current, kind, f"worker exit {code}")
                    done += 1
                    spawn(wid)
        for proc, conn, _, _ in pool.values():
            with contextlib.suppress(Exception):
                conn.send(None)
            proc.join(timeout=5)
            if proc.is_alive():
                proc.kill()
    return {"inputs": done, "counts": counts, "examples": examples, "categories": categories, "exits": exits,
            "seconds": time.perf_counter() - t0, "tally": tally, "failed": failed}


def replay(seed: int, i: int, subprocess_too: bool = False, hang_s: float = 20.0, only: tuple[str, ...] = ()) -> int:
    """Run input ``i`` in this process (and, with ``subprocess_too``, through the real entry point),
    keep its files, show the command, its output and how the fuzz judges it. Exit 1 if it fails."""
    folder = Path(tempfile.mkdtemp(prefix=f"tellwave-fuzz-{i}-"))
    _scratch_env(str(folder))
    os.chdir(folder)            # default report names land beside the input's files
    (folder / "cache").mkdir()
    category, argv, inputs, note = make_input(seed, i, folder / "files", folder / "cache", only)
    print(f"input {i} of seed {seed} ({category}{': ' + note if note else ''}, {entry_point(argv)}); "
          f"files in {folder / 'files'}")
    print("tellwave " + " ".join(_shell(a) for a in argv))
    from engine.cli import main
    before = _digest(inputs)
    findings_before = findings_count(store_of(argv))
    store_before = store_state(store_of(argv))
    parts_before = part_files(folder / "files")
    measured = _reset_peak()
    rc, out, err, tb = run_in_process(main, argv)
    peak = _memory_kb("VmHWM") if measured else None
    failures = [("memory" if tb.startswith("MemoryError") else "traceback", tb)] if tb else \
        judge(argv, rc, out, err, before, folder / "files", store_before, peak, parts_before, findings_before)
    print(f"exit {rc}\n--- stdout\n{out[:3000]}\n--- stderr\n{err[:3000]}" + (f"\n--- exception\n{tb}" if tb else ""))
    if subprocess_too and not any("\x00" in a or len(a) > ARG_MAX for a in argv):
        category, argv, inputs, note = make_input(seed, i, folder / "files", folder / "cache", only)
        before = _digest(inputs)
        findings_before = findings_count(store_of(argv))
        store_before = store_state(store_of(argv))
        parts_before = part_files(folder / "files")
        src, sout, serr, speak = run_subprocess(argv, hang_s)
        print(f"--- subprocess: exit {src}, peak {speak} kB\n{serr[-3000:]}")
        if src is None:
            failures.append(("hang", "subprocess"))
        elif "Traceback (most recent call last)" in serr or src < 0:
            failures.append(("traceback" if src >= 0 else "native crash", "subprocess"))
        else:
            failures += judge(argv, src, sout, serr, before, folder / "files", store_before, speak, parts_before,
                              findings_before)
    print("--- judged: " + ("; ".join(f"{k}: {d}" for k, d in failures) if failures else "no failure"))
    return 1 if failures else 0


def _shell(arg: str) -> str:
    """An argument as a POSIX shell would need it (NUL and control characters as $'...')."""
    import shlex
    if _CONTROL.search(arg) or "\x00" in arg:
        return "$'" + arg.encode("unicode_escape").decode("ascii").replace("'", "\\'") + "'"
    return shlex.quote(arg)


def cause(kind: str, category: str, argv: str, detail: str) -> str:
    """A failure's likely root cause, to group reproducers: the exception and where it was raised,
    or the failure kind with the command and the hazard (paths and numbers left out)."""
    entry = entry_point(argv.split(" ")) if argv else category.partition(" [")[0]
    if kind == "traceback":
        m = re.search(r"(\w+(?:Error|Exception|Warning)?): .* at (\S+:\d+)", detail)
        hazard = category.partition("[")[2].rstrip("]")
        if m:
            return f"traceback {m.group(1)} at {m.group(2)} ({entry}{', ' + hazard if hazard else ''})"
        return f"traceback ({entry}) " + re.sub(r"[/\w.-]*/", "", detail)[:80]
    hazard = category.partition("[")[2].rstrip("]")
    detail = re.sub(r"/\S*/", "", detail)
    detail = re.sub(r"\d+", "N", detail)
    return f"{kind} ({entry}{', ' + hazard if hazard else ''}): {detail[:90]}"


def print_causes(failed, limit: int = 3) -> None:
    groups: dict[str, list] = {}
    for i, category, kind, argv, detail in sorted(failed):
        groups.setdefault(cause(kind, category, argv, detail.rpartition(" -> ")[2] if " -> " in detail
                                else detail), []).append((i, argv))
    print(f"\nby cause ({len(groups)}): count, first inputs (--replay N), one command")
    for key, items in sorted(groups.items(), key=lambda kv: (-len(kv[1]), kv[0])):
        numbers = ", ".join(str(i) for i, _ in items[:limit]) + (", ..." if len(items) > limit else "")
        print(f"  {len(items):>4}  {key}\n        inputs {numbers}\n        tellwave {items[0][1][:240]}")


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--inputs", type=int, default=10_000)
    parser.add_argument("--workers", type=int, default=max(1, min(4, (os.cpu_count() or 2))))
    parser.add_argument("--seed", type=int, default=0)
    parser.add_argument("--hang", type=float, default=20.0, help="seconds before an input counts as a hang")
    parser.add_argument("--subprocess-every", type=int, default=25,
                        help="also run every Nth input through the real entry point (0: never)")
    parser.add_argument("--replay", type=int, help="run one input and keep its files")
    parser.add_argument("--subprocess", action="store_true", help="with --replay: also run it in its own process")
    parser.add_argument("--failures", metavar="FILE", help="write every failure found, one per line (TSV)")
    parser.add_argument("--categories", metavar="A,B", default="",
                        help="draw inputs from these categories only (e.g. 'findings csv,findings options,"
                             "findings store'; give the same to --replay)")
    args = parser.parse_args()
    only = tuple(c.strip() for c in args.categories.split(",") if c.strip())
    unknown = [c for c in only if c not in dict(CATEGORIES)]
    if unknown:
        parser.error(f"unknown categor{'ies' if len(unknown) > 1 else 'y'} {', '.join(unknown)}; "
                     f"categories are {', '.join(c for c, _ in CATEGORIES)}")
    if args.replay is not None:
        return replay(args.seed, args.replay, args.subprocess, args.hang, only)
    report = fuzz(args.inputs, args.workers, args.seed, args.hang, args.subprocess_every, only=only)
    print(f"\n{report['inputs']} inputs (seed {args.seed}) in {report['seconds']:.0f} s with {args.workers} workers, "
          f"{report['inputs'] / report['seconds']:.2f} inputs/s")
    exits = sorted(report["exits"].items(), key=lambda kv: str(kv[0]))
    print("exit codes: " + ", ".join(f"{k}: {n}" for k, n in exits))
    print("failure kinds: " + ", ".join(f"{v} = {k}" for k, v in SHORT.items()))
    print("\n" + report["tally"].render("category", "category"))
    print("\n" + report["tally"].render("entry", "entry point"))
    print()
    for kind in FAILURES + ("worker died", "harness error"):
        print(f"  {kind:<20} {report['counts'].get(kind, 0)}")
    for kind, items in report["examples"].items():
        print(f"\n{kind}:")
        for i, detail in items:
            print(f"  input {i}: {detail}")
    print_causes(report["failed"])
    if args.failures:
        with open(args.failures, "w", encoding="utf-8") as f:
            f.write("input\tcategory\tkind\tcommand\tdetail\n")
            for row in sorted(report["failed"]):
                f.write("\t".join(str(x).replace("\t", " ").replace("\n", " ") for x in row) + "\n")
    return 1 if sum(n for k, n in report["counts"].items() if k != "harness error") else 0


if __name__ == "__main__":
    raise SystemExit(main())
