"""Every public class, function and method of the engine says in a docstring what it is for."""

from __future__ import annotations

import ast

import pytest

from support import ROOT

HELD = ("common", "machine", "readings", "simulation", "analysis", "evidence", "reasoning", "report", "history",
        "trend", "pipeline", "planner", "demo", "route", "cli")


def undocumented(path) -> list[str]:
    """``name:line`` of each public definition of a module without a docstring (a private class's
    members and definitions inside functions are not public)."""
    missing = []

    def walk(body, prefix):
        for node in body:
            definition = isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef, ast.ClassDef))
            if definition and not node.name.startswith("_"):
                if ast.get_docstring(node) is None:
                    missing.append(f"{prefix}{node.name}:{node.lineno}")
                if isinstance(node, ast.ClassDef):
                    walk(node.body, f"{prefix}{node.name}.")

    walk(ast.parse(path.read_text(encoding="utf-8")).body, "")
    return missing


FILES = sorted([*(p for folder in HELD for p in (ROOT / "engine" / folder).rglob("*.py")),
                *(ROOT / "engine").glob("*.py")])


def test_every_held_folder_is_walked():
    walked = {p.relative_to(ROOT / "engine").parts[0] for p in FILES}
    packages = {p.name for p in (ROOT / "engine").iterdir() if (p / "__init__.py").is_file()}
    assert packages == set(HELD), "a package of the engine is not held to docstrings: add it to HELD"
    assert set(HELD) <= walked and len(FILES) > 100


def test_a_definition_without_a_docstring_is_found(tmp_path):
    module = tmp_path / "m.py"
    module.write_text('def f():\n    return 1\n\n\nclass C:\n    """C."""\n\n    def g(self):\n        pass\n\n'
                      '    def _h(self):\n        pass\n\n\ndef _private():\n    pass\n')
    assert undocumented(module) == ["f:1", "C.g:8"]


@pytest.mark.parametrize("path", FILES, ids=lambda p: str(p.relative_to(ROOT / "engine")))
def test_every_public_definition_has_a_docstring(path):
    assert undocumented(path) == []
