"""Data flows one way: a stage imports only the stages before it (DESIGN.md, "The pipeline").

Each module of the engine belongs to one stage; an import of a later stage
fails here, named by file and line. A new top-level module must be placed in
STAGES before this test passes, so the decision is made on purpose.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

ENGINE = Path(__file__).resolve().parent.parent / "engine"

# lower numbers come first; a module may import its own stage and any lower one
STAGES = {
    "common": 0,
    "machine": 1, "readings": 1, "simulation": 1,
    "analysis": 2,
    "evidence": 3,
    "reasoning": 4,
    "advice": 5, "alarms": 5,
    "report": 6,
    "history": 7, "trend": 7,
    "pipeline": 8, "planner": 8,
    "demo": 9, "route": 9,
    "cli": 10, "__init__": 10, "__main__": 10, "start": 10,
}


def _stage_of(parts: tuple[str, ...]) -> str:
    return parts[0].removesuffix(".py")


def _modules():
    for path in sorted(ENGINE.rglob("*.py")):
        rel = path.relative_to(ENGINE)
        yield path, rel.parts


def _imports(path: Path, parts: tuple[str, ...]):
    """(line, imported top-level engine module) for every import of the engine in ``path``."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    package = list(parts[:-1])
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom):
            if node.level:
                base = package[:len(package) - (node.level - 1)] if node.level > 1 else package
                target = base + (node.module.split(".") if node.module else [])
                if not target:                       # "from . import x" at the package root
                    target = [node.names[0].name]
                yield node.lineno, target[0]
            elif node.module and node.module.split(".")[0] == "engine":
                rest = node.module.split(".")[1:]
                yield node.lineno, rest[0] if rest else node.names[0].name
        elif isinstance(node, ast.Import):
            for alias in node.names:
                names = alias.name.split(".")
                if names[0] == "engine" and len(names) > 1:
                    yield node.lineno, names[1]


@pytest.mark.parametrize("path, parts", list(_modules()), ids=lambda v: "/".join(v) if isinstance(v, tuple) else "")
def test_no_stage_imports_a_later_one(path, parts):
    own = _stage_of(parts)
    assert own in STAGES, f"engine/{'/'.join(parts)}: place '{own}' in a stage in tests/test_layering.py"
    for line, target in _imports(path, parts):
        target = target.removesuffix(".py")
        if target not in STAGES:
            continue            # a name imported from the package itself, e.g. __version__
        assert STAGES[target] <= STAGES[own], \
            f"engine/{'/'.join(parts)}:{line}: {own} (stage {STAGES[own]}) imports {target} (stage {STAGES[target]})"

