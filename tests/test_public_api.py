"""The public API is what the README promises ("From Python"), ``engine.__all__`` says the same,
every name imports, and nothing else is promised."""

from __future__ import annotations

import importlib
import re
import subprocess
import sys
import types

import pytest

import engine

from support import ROOT

README = (ROOT / "README.md").read_text(encoding="utf-8")


def _section() -> str:
    return README.split("### From Python", 1)[1].split("\n#", 1)[0]


def _documented() -> set[str]:
    """Every name in backticks on the section's list lines (``engine.__all__`` itself aside)."""
    lines = [line for line in _section().splitlines() if line.startswith("- ")]
    return {name for line in lines for name in re.findall(r"`([A-Za-z_]\w*)`", line)}


def test_the_readme_documents_exactly_engine_all():
    documented = _documented()
    assert documented, "the README's From Python section lists no names"
    assert documented == set(engine.__all__), \
        f"only in the README: {sorted(documented - set(engine.__all__))}; " \
        f"only in __all__: {sorted(set(engine.__all__) - documented)}"


def test_every_public_name_imports_and_is_what_its_module_defines():
    for name in engine.__all__:
        value = getattr(importlib.import_module("engine"), name)
        assert not isinstance(value, types.ModuleType), name
        assert getattr(value, "__name__", name) == name, f"engine.{name} is {value!r}"


def test_star_import_gives_exactly_all():
    namespace: dict = {}
    exec("from engine import *", namespace)
    assert set(namespace) - {"__builtins__"} == set(engine.__all__)


def test_nothing_else_is_promised():
    """Past ``__all__`` the package holds only its version, dunders and submodules; an unknown
    name is an AttributeError, not a lazy import of anything."""
    for name in engine.__all__:
        getattr(engine, name)
    extra = [n for n, v in vars(engine).items() if not n.startswith("_") and n not in engine.__all__
             and not isinstance(v, types.ModuleType)]
    assert not extra, extra
    with pytest.raises(AttributeError, match="has no attribute 'analyse'"):
        _ = engine.analyse


def test_the_errors_are_one_family():
    for name in engine.__all__:
        if name.endswith("Error"):
            assert issubclass(getattr(engine, name), engine.TellwaveError), name
    assert issubclass(engine.DataQualityWarning, Warning)


def test_the_readme_example_runs(tmp_path):
    """The section's example, on a simulated reading of the demo pump written where it reads one."""
    from engine.simulation import simulate, write_simulation

    machine = engine.load_machine(ROOT / "cases/machines/rw2-raw-water-pump.yaml")
    wav = write_simulation(simulate(machine, "unbalance", None, 3, None, 12800.0, 2.0, 1), tmp_path / "reading.wav")[0]
    example = _section().split("```python", 1)[1].split("```", 1)[0]
    assert '"reading.wav"' in example
    code = example.replace('"reading.wav"', repr(str(wav)))
    done = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, timeout=120)
    assert done.returncode == 0, done.stderr[-2000:]
    assert "unbalance" in done.stdout, done.stdout
