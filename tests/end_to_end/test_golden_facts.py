"""Golden facts of two demo cases: a change of the evidence is a decision, never an accident.

The files in golden/ hold every evidence fact of two simulated demo readings
(the pump's outer-race case, seven channels; the cooling-tower gearbox's
tooth case, four channels). A change to the analysis or the extractors that
moves any value beyond floating-point tolerance fails here; when the change
is meant, regenerate the files and say why in the commit:

    python tests/end_to_end/test_golden_facts.py --write
"""

from __future__ import annotations

import json
import math
import sys
from pathlib import Path

import pytest

HERE = Path(__file__).resolve().parent
CASES = ("rw2-pump-nde-outer-race", "ct1-bevel-tooth")
REL_TOL = 1e-6
ABS_TOL = 1e-9


def _facts_of(name: str) -> list[dict]:
    from engine.evidence import extract_evidence
    from engine.machine import load_machine
    from engine.pipeline.cases import load_case, reading_of

    case = load_case(HERE.parent.parent / "cases" / "demo" / f"{name}.case.yaml")
    machine = load_machine(case.machine)
    return extract_evidence(reading_of(case, machine), machine)


def _golden(name: str) -> Path:
    return HERE / "golden" / f"{name}.facts.json"


def _same(a, b) -> bool:
    if isinstance(a, float) or isinstance(b, float):
        return isinstance(a, (int, float)) and isinstance(b, (int, float)) and \
            math.isclose(a, b, rel_tol=REL_TOL, abs_tol=ABS_TOL)
    return a == b


@pytest.mark.parametrize("name", CASES)
def test_facts_match_the_golden_file(name):
    expected = {f["id"]: f for f in json.loads(_golden(name).read_text())}
    got = {f["id"]: f for f in _facts_of(name)}
    assert sorted(got) == sorted(expected), set(got) ^ set(expected)
    differences = [(fid, field, expected[fid].get(field), got[fid].get(field))
                   for fid in expected for field in set(expected[fid]) | set(got[fid])
                   if not _same(expected[fid].get(field), got[fid].get(field))]
    assert not differences, differences[:10]


if __name__ == "__main__":
    if "--write" not in sys.argv:
        sys.exit("usage: python tests/end_to_end/test_golden_facts.py --write")
    for case in CASES:
        facts = _facts_of(case)
        _golden(case).write_text("[\n" + ",\n".join(json.dumps(f, sort_keys=True) for f in facts) + "\n]\n")
        print(f"wrote {_golden(case)} ({len(facts)} facts)")
