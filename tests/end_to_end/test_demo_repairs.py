"""The demo plant's repair log: each month after which a machine was opened holds a findings CSV that
`tellwave findings import` reads, naming components of that machine's file and faults the rulebooks know."""

from __future__ import annotations

import csv

import pytest
import yaml

from engine.common.paths import CASES
from engine.demo.plant import FINDINGS_COLUMNS, MONTHS, PLAN, REPAIRS, write_findings
from engine.history.findings import CSV_COLUMNS, NOTHING_FOUND, components_of_machine, from_row, read_csv
from engine.reasoning import load_rulebook


def machine_files() -> dict[str, str]:
    out = {}
    for file, *_ in PLAN:
        path = CASES / "machines" / file
        out[yaml.safe_load(path.read_text())["machine"]] = str(path)
    return out


def test_every_repair_row_is_a_valid_finding_of_a_demo_machine():
    faults = set(load_rulebook().faults)
    files = machine_files()
    assert set(FINDINGS_COLUMNS) <= set(CSV_COLUMNS)
    for month, row in REPAIRS:
        assert 1 <= month < MONTHS
        finding = from_row(dict(zip(FINDINGS_COLUMNS, row)))
        assert finding.machine in files
        assert finding.component in components_of_machine(files[finding.machine])
        assert finding.fault in faults or finding.fault == NOTHING_FOUND


@pytest.mark.parametrize("month", range(1, MONTHS + 1))
def test_the_log_follows_the_plan(tmp_path, month):
    """A repair ends the fault it found: the simulated stage drops after the month the machine was opened."""
    written = write_findings(tmp_path, month)
    rows = [row for after, row in REPAIRS if after == month]
    if not rows:
        assert written is None and not (tmp_path / "findings.csv").exists()
        return
    parsed = read_csv(written)
    assert [r for _, r in parsed] == [dict(zip(FINDINGS_COLUMNS, row)) for row in rows]
    with written.open(newline="", encoding="utf-8") as f:
        assert next(csv.reader(f)) == list(FINDINGS_COLUMNS)
    by_name = {yaml.safe_load((CASES / "machines" / file).read_text())["machine"]: (fault, comp, stages)
               for file, _, fault, comp, stages, _ in PLAN}
    for name, _, component, fault, *_ in rows:
        planned_fault, planned_component, stages = by_name[name]
        if fault == NOTHING_FOUND:
            assert stages[month - 1] is None
            continue
        assert (fault, component) == (planned_fault, planned_component)
        assert stages[month - 1] is not None
        assert month == MONTHS or stages[month] is None or stages[month] < stages[month - 1]
