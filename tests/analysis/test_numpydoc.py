"""Every public function of the analysis is documented the same way, and its examples run.

numpydoc sections (Parameters with units, Returns, References naming the
published source, Examples with a doctest) on each module-level function of
engine/analysis/ whose name does not start with ``_``; the doctests run here,
so an example that no longer gives what it shows fails the suite.
``plotdata.py`` is the report's plot data (documented with the report).
"""

from __future__ import annotations

import doctest
import importlib
import inspect
from pathlib import Path

import numpy as np
import pytest

ANALYSIS = Path(__file__).resolve().parents[2] / "engine" / "analysis"
MODULES = sorted(f"engine.analysis.{p.stem}" for p in ANALYSIS.glob("*.py")
                 if not p.stem.startswith("_") and p.stem != "plotdata")
SECTIONS = ("Parameters\n", "Returns\n", "References\n", "Examples\n")


def _public_functions(module):
    for name, obj in vars(module).items():
        if inspect.isfunction(obj) and not name.startswith("_") and obj.__module__ == module.__name__:
            yield name, obj


@pytest.mark.parametrize("name", MODULES)
def test_every_public_function_has_numpydoc_sections(name):
    module = importlib.import_module(name)
    missing = []
    for fname, fn in _public_functions(module):
        doc = inspect.getdoc(fn) or ""
        lacking = [s.strip() for s in SECTIONS if s not in doc] + ([">>>"] if ">>>" not in doc else [])
        if lacking:
            missing.append(f"{fname}: {', '.join(lacking)}")
    assert not missing, f"{name}: " + "; ".join(missing)


@pytest.mark.parametrize("name", MODULES)
def test_doctests_run(name):
    module = importlib.import_module(name)
    finder = doctest.DocTestFinder(exclude_empty=True)
    runner = doctest.DocTestRunner(optionflags=doctest.NORMALIZE_WHITESPACE)
    tests = finder.find(module, globs={"np": np, **vars(module)})
    for test in tests:
        runner.run(test)
    result = runner.summarize(verbose=False)
    assert result.failed == 0, f"{name}: {result.failed} of {result.attempted} examples failed (see the output above)"
    if any(_public_functions(module)):
        assert result.attempted > 0
