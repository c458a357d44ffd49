"""Route files and plant files -> a ``Route``: the list of reading tasks of one survey.

A route file lists each reading with its machine, point mapping and time. A
plant file maps the readings of a folder (each with its sidecar) to machines
by file-name pattern. Both are checked against their JSON Schema; a machine
file that does not exist is a one-line error naming the route file and the line.
Everything a worker would otherwise trip over is found here, before any reading
is diagnosed: each reading's time is resolved (with the route's clock) and a
path no system can open (a NUL character, text the file system cannot encode)
is refused, each as a ``RouteError`` naming the route file, the line and the field.
Tasks are plain data, so they cross to worker processes and Dask workers.
"""

from __future__ import annotations

import fnmatch
import os
from dataclasses import dataclass, field
from pathlib import Path

from ..common.errors import RouteError, UsageError
from ..common.yamlfile import read_yaml, validate
from ..history.times import Clock, iso, parse_time, resolve_time
from ..readings.formats import is_reading_name


@dataclass(frozen=True)
class Task:
    """One reading of a route: plain data a worker can diagnose on its own."""

    index: int
    files: tuple[str, ...]
    machine_file: str
    points: dict = field(default_factory=dict)      # channel -> point id
    time: str | None = None                         # ISO 8601, resolved from the route's time and clock
    options: dict = field(default_factory=dict)     # speed_rpm, sample_rate_hz, unit
    phase_1x: tuple = ()                            # the route's 1X phase readings (``PhaseReading``)

    @property
    def name(self) -> str:
        """The name of the task's first file, as summaries show it."""
        return Path(self.files[0]).name


@dataclass(frozen=True)
class Route:
    """A route as read from its file or a folder and plant file: its tasks, its clock, and the
    files of the folder that no pattern maps."""
    name: str
    file: str | None
    tasks: tuple[Task, ...]
    clock: Clock | None = None
    unmatched: tuple[str, ...] = ()     # reading files of a folder that no pattern of the plant file maps


def route_inputs(route: Route) -> list[Path]:
    """Every file a route reads: the route or plant file, each reading with its sidecar, each machine file."""
    from ..readings import sidecar_path

    files = [Path(route.file)] if route.file else []
    for t in route.tasks:
        for f in t.files:
            files += [Path(f), sidecar_path(f)]
    files += sorted({Path(t.machine_file) for t in route.tasks})
    return files


def _absolute(p) -> str:
    """An absolute path that keeps symbolic links (a linked reading keeps the sidecar beside the link)."""
    return os.path.normpath(os.path.abspath(p))


def path_problem(text: str) -> str | None:
    """Why ``text`` cannot name a file on this system (None when it can): an empty name, a NUL
    character, or text the file system's encoding cannot hold (a lone surrogate)."""
    if not text:
        return "an empty path"
    if "\0" in text:
        return "the path contains a NUL character, which no file name can hold"
    try:
        os.fsencode(text)
    except UnicodeError:
        return "the path holds characters the file system cannot encode"
    return None


def _check_path(text: str, where: list, doc, path: str) -> None:
    problem = path_problem(text)
    if problem is not None:
        field = ".".join(map(str, where))
        raise RouteError(f"{field}: {problem}", path=path, line=doc.line_of(where))


def _time(stated, clock: Clock | None, where: list, doc, path: str) -> str | None:
    """A reading's time as the route states it, resolved now so that a bad one stops the route before it runs."""
    if stated is None:
        return None
    field = ".".join(map(str, where))
    try:
        when = resolve_time(stated, clock, what=field)
        return iso(when) if when is not None else None
    except UsageError as exc:
        raise RouteError(exc.problem, path=path, line=doc.line_of(where)) from None


def _clock(data: dict | None, path: str) -> Clock | None:
    if not data:
        return None
    try:
        return Clock(parse_time(data["start"], what="clock.start"), data.get("interval_s"))
    except UsageError as exc:
        raise RouteError(exc.problem, path=path) from None


def load_route(path) -> Route:
    """A route file (YAML, ``engine/common/schemas/route.schema.json``)."""
    path = str(path)
    doc = read_yaml(path, RouteError)
    if not isinstance(doc.data, dict):
        raise RouteError("a route file must be a mapping with a readings: list", path=path, line=1)
    validate(doc, "route.schema.json", RouteError)
    base = Path(_absolute(Path(path).parent))
    for key, file in doc.data.get("machines", {}).items():
        _check_path(file, ["machines", key], doc, path)
    machines = {k: _absolute(base / v) for k, v in doc.data.get("machines", {}).items()}
    clock = _clock(doc.data.get("clock"), path)
    for key, file in machines.items():
        if not os.path.isfile(file):
            raise RouteError(f"machines.{key}: no such machine file {file}", path=path,
                             line=doc.line_of(["machines", key]))
    from ..readings import phase_entries

    tasks = []
    for i, item in enumerate(doc.data["readings"]):
        where = ["readings", i]
        files = [item["file"]] if "file" in item else item["files"]
        for j, f in enumerate(files):
            _check_path(f, where + (["file"] if "file" in item else ["files", j]), doc, path)
        _check_path(item["machine"], where + ["machine"], doc, path)
        resolved = tuple(_absolute(base / f) for f in files)
        machine = machines.get(item["machine"]) or _absolute(base / item["machine"])
        if not os.path.isfile(machine):
            raise RouteError(f"readings.{i}.machine: {item['machine']!r} is neither a name under machines: "
                             "nor a machine file", path=path, line=doc.line_of(where + ["machine"]))
        options = {k: item[k] for k in ("speed_rpm", "sample_rate_hz", "unit") if k in item}
        time = _time(item.get("time"), clock, where + ["time"], doc, path)
        phase = phase_entries(item.get("phase_1x") or [], path,
                              lambda j, where=where: doc.line_of(where + ["phase_1x", j]))
        tasks.append(Task(i, resolved, machine, dict(item.get("points", {})), time, options, phase))
    return Route(doc.data.get("route", Path(path).stem), path, tuple(tasks), clock)


def load_folder(folder, plant_file) -> Route:
    """Every reading file of ``folder`` that the plant file maps to a machine."""
    plant_file = str(plant_file)
    doc = read_yaml(plant_file, RouteError)
    if not isinstance(doc.data, dict):
        raise RouteError("a plant file must be a mapping with a machines: list", path=plant_file, line=1)
    validate(doc, "plant.schema.json", RouteError)
    folder = Path(folder)
    if not folder.is_dir():
        raise RouteError("no such folder of readings", path=str(folder))
    base = Path(_absolute(Path(plant_file).parent))
    files = sorted(p for p in folder.iterdir() if is_reading_name(p.name) and os.path.isfile(p))
    tasks: list[Task] = []
    taken: dict[Path, str] = {}
    for m, entry in enumerate(doc.data["machines"]):
        _check_path(entry["file"], ["machines", m, "file"], doc, plant_file)
        machine = _absolute(base / entry["file"])
        if not os.path.isfile(machine):
            raise RouteError(f"machines.{m}.file: no such machine file {machine}", path=plant_file,
                             line=doc.line_of(["machines", m, "file"]))
        for p in files:
            if any(fnmatch.fnmatch(p.name, pattern) for pattern in entry["readings"]):
                if p in taken:
                    raise RouteError(f"{p.name} matches both {taken[p]} and {entry['file']}", path=plant_file,
                                     line=doc.line_of(["machines", m, "readings"]))
                taken[p] = entry["file"]
                tasks.append(Task(len(tasks), (_absolute(p),), machine))
    if not tasks:
        raise RouteError("no reading file in the folder matches the plant file's patterns", path=str(folder))
    unmatched = tuple(_absolute(p) for p in files if p not in taken)
    return Route(doc.data.get("plant", folder.name), plant_file, tuple(tasks),
                 _clock(doc.data.get("clock"), plant_file), unmatched)
