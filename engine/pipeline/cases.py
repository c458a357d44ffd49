"""Cases: a reading (a file, or a simulation recipe), its machine and the conclusion expected.

A site keeps its confirmed diagnoses as cases, so ``tellwave rulebook test``
shows that a new or changed rule does not break a diagnosis that was right.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from ..common.errors import CaseError
from ..common.yamlfile import read_yaml, validate
from ..machine import load_machine
from ..readings import combine_readings, load_reading, phase_entries, with_phase
from ..reasoning import CONFIDENT, Reasoner, Reasoning


@dataclass(frozen=True)
class Case:
    """One case file: its machine, reading files or simulation recipe, stated speed (r/min) and expected conclusion."""

    name: str
    path: str
    machine: Path
    readings: tuple[Path, ...]
    simulate: dict | None
    speed_rpm: float | None
    expect: dict
    phase_1x: tuple = ()          # 1X phase readings given with the reading (``PhaseReading``)


@dataclass(frozen=True)
class CaseResult:
    """One case run: whether the reasoning reached the expected conclusion, and what it concluded."""

    case: Case
    passed: bool
    got: str          # what the reasoning concluded, in words


def load_case(path) -> Case:
    """The case file at ``path``, checked; CaseError when it, or a file or fault it names, is wrong."""
    doc = read_yaml(path, CaseError)
    validate(doc, "case.schema.json", CaseError)
    base = Path(path).parent
    d = doc.data
    machine = base / d["machine"]
    if not machine.exists():
        raise CaseError(f"machine file {d['machine']} not found", path=str(path), line=doc.line_of(["machine"]))
    if d.get("simulate") is not None:
        from ..simulation import fault_of

        fault_of(d["simulate"]["fault"], CaseError, str(path), doc.line_of(["simulate", "fault"]))
    readings = tuple(base / r for r in d.get("readings", []))
    for i, r in enumerate(readings):
        if not r.exists():
            raise CaseError(f"reading file {d['readings'][i]} not found", path=str(path),
                            line=doc.line_of(["readings", i]))
    phase = phase_entries(d.get("phase_1x") or [], str(path), lambda i: doc.line_of(["phase_1x", i]))
    return Case(d["case"], str(path), machine, readings, d.get("simulate"), d.get("speed_rpm"), d["expect"], phase)


MAX_CASE_DEPTH = 20       # a --depth beyond this is no folder of cases a person keeps


def _skipped(folder: Path) -> bool:
    """A folder no case file is looked for in: hidden (``.git``, ``.venv``), a Python virtual
    environment (it holds ``pyvenv.cfg``) or an installed package tree (``site-packages``), or a cache."""
    name = folder.name
    return (name.startswith(".") or name in ("site-packages", "dist-packages", "node_modules", "__pycache__")
            or (folder / "pyvenv.cfg").is_file())


def case_files(folder, depth: int = 0) -> list[Path]:
    """Every ``*.case.yaml`` in ``folder``, sorted; with ``depth`` N also in sub-folders up to N levels
    down, leaving out hidden, virtual-environment and package folders (``_skipped``) and hidden files.
    CaseError if ``folder`` is no folder."""
    folder = Path(folder)
    if not folder.is_dir():
        raise CaseError("not a folder of case files", path=str(folder))
    found: list[Path] = []
    level: list[Path] = [folder]
    for down in range(depth + 1):
        below: list[Path] = []
        for here in level:
            try:
                entries = sorted(here.iterdir())
            except OSError:
                continue           # a folder that cannot be listed holds no case this run can read
            for entry in entries:
                if entry.name.startswith("."):
                    continue
                if entry.name.endswith(".case.yaml") and entry.is_file():
                    found.append(entry)
                elif down < depth and entry.is_dir() and not entry.is_symlink() and not _skipped(entry):
                    below.append(entry)
        level = below
    return sorted(found)


def simulation_of(case: Case, machine):
    """The case's simulation recipe, run (None for a case with reading files)."""
    if case.simulate is None:
        return None
    from ..simulation import clip_channel, simulate

    s = case.simulate
    sim = simulate(machine, s["fault"], s.get("component"), s.get("stage", 2), s.get("rpm"),
                   s.get("sample_rate_hz", 25600.0), s.get("duration_s", 4.0), s.get("seed", 0), s.get("points"))
    if "clip" in s:
        sim = clip_channel(sim, s["clip"]["channel"], s["clip"]["fraction"])
    return sim


def reading_of(case: Case, machine):
    """The case's reading: its simulation as a Reading, or its reading files combined into one."""
    sim = simulation_of(case, machine)
    if sim is not None:
        from ..simulation import as_reading
        return with_phase(as_reading(sim, source=case.path), case.phase_1x)
    return with_phase(combine_readings([load_reading(p, speed_rpm=case.speed_rpm) for p in case.readings]),
                      case.phase_1x)


def _pct(certainty: float) -> str:
    return f"{100 * certainty:.0f} %"


def describe(result: Reasoning) -> str:
    """What the reasoning concluded, in a few words, certainty in percent."""
    if result.withheld:
        return "withheld: " + ", ".join(f"{h.fault} {_pct(h.certainty)}" for h in result.reading_problems
                                        if h.confident)
    top = result.top
    if top is None or top.certainty < CONFIDENT:
        return "nothing confident" + (f" (best {_faults(top)} on {top.component}, {_pct(top.certainty)})"
                                      if top else "")
    more = [f"{_faults(h)} on {h.component} ({_pct(h.certainty)})" for h in result.confident()[1:]]
    return f"{_faults(top)} on {top.component} ({_pct(top.certainty)})" + (f"; also {', '.join(more)}" if more else "")


def _faults(h) -> str:
    """The fault ids a hypothesis names: one, or a fault and the rival it cannot be told from ("outer-race or
    rolling-element")."""
    return " or ".join(h.faults)


def _names(h, wanted: dict) -> bool:
    """Whether ``h`` names the wanted fault: as its own, or as a rival the evidence cannot tell from it."""
    return wanted["fault"] in h.faults and wanted.get("component", h.component) == h.component


def judge(expect: dict, result: Reasoning) -> bool:
    """Whether ``result`` reaches the expected conclusion, and no confident fault the case does not allow."""
    if expect.get("withheld"):
        return result.withheld
    if result.withheld:
        return False
    top = result.top
    confident = top is not None and top.certainty >= CONFIDENT
    if expect.get("nothing"):
        return not confident
    allowed = [{"fault": expect["fault"]} | ({"component": expect["component"]} if "component" in expect else {})]
    allowed += expect.get("also", [])
    return (confident and _names(top, allowed[0])
            and all(any(_names(h, a) for a in allowed) for h in result.confident()))


def run_case(case: Case, reasoner: Reasoner) -> CaseResult:
    """Diagnose ``case`` with ``reasoner`` and judge the conclusion against the expected one."""
    from . import diagnose

    machine = load_machine(case.machine)
    result = diagnose(reading_of(case, machine), machine, reasoner).reasoning
    return CaseResult(case, judge(case.expect, result), describe(result))
