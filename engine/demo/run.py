"""``tellwave demo``: regenerate every demo case's reading as files, diagnose them as a user
would, and write one HTML report per case plus an index.

The cases live in cases/demo/ (Tallow Ridge Water Works, an invented plant).
Each reading is written by the simulator (WAV with its sidecar and truth
file), read back through the ordinary readers and diagnosed from the file.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime, timedelta
from pathlib import Path

from ..common.outfile import check_target, known_inputs
from ..common.paths import CASES
from ..machine import load_machine
from ..pipeline import diagnose, document_of
from ..pipeline.cases import Case, case_files, describe, judge, load_case, reading_of, simulation_of
from ..readings import load_reading
from ..reasoning import Reasoner
from ..report import render, write_atomically
from ..simulation import write_simulation

DEMO_CASES = CASES / "demo"
SURVEY_START = datetime(2026, 3, 2, 8, 30)      # the demo's readings are stamped a few minutes apart from here
SURVEY_STEP = timedelta(minutes=4)


@dataclass(frozen=True)
class DemoResult:
    """One demo case diagnosed: its report, whether it reached the expected conclusion, and what it concluded."""

    case: Case
    report: Path
    passed: bool
    got: str


def run_demo(out_dir, reasoner: Reasoner, cases_dir=DEMO_CASES, progress=print, inputs=()) -> list[DemoResult]:
    """Diagnose each demo case into ``out_dir``; every file it writes is checked against ``inputs`` first."""
    out_dir = Path(out_dir)
    readings_dir = out_dir / "readings"
    inputs = known_inputs(inputs)
    cases = case_files(cases_dir)
    for path in cases:
        name = Path(path).name.removesuffix(".case.yaml")
        for target in (out_dir / f"{name}.html", readings_dir / f"{name}.wav", readings_dir / f"{name}.wav.yaml"):
            check_target(target, inputs)
    check_target(out_dir / "index.html", inputs)
    readings_dir.mkdir(parents=True, exist_ok=True)
    results = []
    for i, path in enumerate(cases):
        case = load_case(path)
        machine = load_machine(case.machine)
        name = Path(path).name.removesuffix(".case.yaml")
        sim = simulation_of(case, machine)
        if sim is not None:
            taken = (SURVEY_START + i * SURVEY_STEP).isoformat()
            phase = [{"point": p.point, **({"direction": p.direction} if p.direction else {}), "phase_deg": p.phase_deg,
                      **({"amplitude_mm_s_rms": p.amplitude_mm_s_rms} if p.amplitude_mm_s_rms else {})}
                     for p in case.phase_1x]
            files = write_simulation(sim, readings_dir / f"{name}.wav", timestamp=taken, inputs=inputs,
                                     phase_1x=phase)
            reading = load_reading(files[0])
        else:
            reading = reading_of(case, machine)
        d = diagnose(reading, machine, reasoner, plots=True)
        report = write_atomically(out_dir / f"{name}.html", render(document_of(d), "html"), inputs)
        result = DemoResult(case, report, judge(case.expect, d.reasoning), describe(d.reasoning))
        progress(f"{'ok  ' if result.passed else 'MISS'} {name}: {result.got}")
        results.append(result)
    rows = [{"name": r.case.name, "report": r.report.name, "diagnosis": r.got, "as_expected": r.passed}
            for r in results]
    index = render({"cases": rows}, "html", "demo")
    write_atomically(out_dir / "index.html", index, inputs)
    return results


def summary(results: list[DemoResult], out_dir) -> str:
    """One line: how many cases were diagnosed as expected, and where the reports are."""
    missed = sum(not r.passed for r in results)
    return (f"{len(results) - missed} of {len(results)} demo cases diagnosed as expected; "
            f"reports in {out_dir}/ (open {out_dir}/index.html)")
