"""All the demo code lives in engine/demo/; the commands only parse arguments and call it."""

from __future__ import annotations

import ast
import subprocess
import sys

from support import ROOT

ENGINE = ROOT / "engine"


def test_no_module_outside_engine_demo_holds_the_demo_plant():
    found = []
    for path in sorted(ENGINE.rglob("*.py")):
        if path.parent.name == "demo" and path.parent.parent == ENGINE:
            continue
        text = path.read_text(encoding="utf-8")
        found += [f"{path.relative_to(ROOT)}: {word}" for word in ("Tallow Ridge", 'CASES / "demo"', "SURVEY_")
                  if word in text]
    assert not found, found


def test_the_demo_commands_only_parse_and_call_engine_demo():
    """Each demo command's run() is imports, calls into engine.demo and printing: no loops, no sums."""
    for name in ("demo.py", "demo_route.py"):
        tree = ast.parse((ENGINE / "cli" / name).read_text(encoding="utf-8"))
        run = next(n for n in tree.body if isinstance(n, ast.FunctionDef) and n.name == "run")
        calls = {n.func.id for n in ast.walk(run) if isinstance(n, ast.Call) and isinstance(n.func, ast.Name)}
        assert calls & {"run_demo", "write_month"}, name
        assert "sum" not in calls, f"{name} counts results itself"
        assert not [n for n in ast.walk(run) if isinstance(n, ast.While)], name
        literals = [n.value for n in ast.walk(tree) if isinstance(n, ast.Constant) and isinstance(n.value, int)
                    and not isinstance(n.value, bool) and n.value > 3]
        assert not literals, f"{name} holds demo numbers of its own: {literals}"


def test_the_demo_plants_months_are_read_without_loading_the_engine():
    """tellwave --help reads plant.MONTHS; importing it must not pull in the report or the pipeline."""
    code = ("import sys, engine.demo.plant as p; assert p.MONTHS >= 1; "
            "print(sorted(m for m in sys.modules if m.startswith(('engine.report', 'engine.pipeline', "
            "'engine.simulation', 'engine.reasoning', 'jinja2', 'scipy'))))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True, cwd=ROOT)
    assert out.stdout.strip() == "[]", out.stdout
