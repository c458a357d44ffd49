"""The planner keeps no copy of another stage's knowledge: rates come from kinematics, matching and
ownership from the evidence's public API, and the verdicts from the Reasoner (no rule evaluator here)."""

from __future__ import annotations

import ast
import inspect
import re
from pathlib import Path

import engine.evidence.envelope as envelope

PLANNER = Path(__file__).resolve().parents[2] / "engine" / "planner"
SOURCES = sorted(PLANNER.glob("*.py"))


def _imports_from_outside(path: Path):
    """(line, module, name) of every name a planner module imports from another package of the engine."""
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.ImportFrom) and node.level >= 2 and node.module:
            for alias in node.names:
                yield node.lineno, node.module, alias.name


def test_the_planner_imports_no_private_module_or_name_of_another_stage():
    found = [f"{p.name}:{line} {module}.{name}" for p in SOURCES for line, module, name in _imports_from_outside(p)
             if any(part.startswith("_") for part in module.split(".")) or name.startswith("_")]
    assert not found, found


def test_the_planner_asks_the_envelope_functions_not_its_tables():
    used = {name for p in SOURCES for _, module, name in _imports_from_outside(p) if module == "evidence.envelope"}
    assert used, "the planner judges a bearing geometry by the envelope's own ownership rule"
    for name in used:
        obj = getattr(envelope, name)
        assert inspect.isfunction(obj) and obj.__doc__, f"{name}: import a documented function, not a table"


# a product of a machine's geometry with a speed: vanes, bars, teeth, line frequency, bearing multiples
GEOMETRY = re.compile(r"\.(vanes|rotor_bars|driving_teeth|driven_teeth|line_frequency_hz|poles)\b|bearing_multiples")


def test_every_rate_the_planner_uses_comes_from_kinematics():
    found = [f"{p.name}:{n}: {line.strip()}" for p in SOURCES
             for n, line in enumerate(p.read_text(encoding="utf-8").splitlines(), 1) if GEOMETRY.search(line)]
    assert not found, found


def test_no_second_rule_evaluator():
    assert not (PLANNER / "routes.py").exists()
    # the proof decides with the Reasoner: the only rule ids the planner names are route labels in targets.py
    # and the sources of needs; no planner module reads a rule's conditions
    readers = [p.name for p in SOURCES if ".conditions" in p.read_text(encoding="utf-8") and p.name != "needs.py"]
    assert not readers, readers
