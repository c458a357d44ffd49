"""The README's set-up says, before its commands, which Pythons work (as pyproject.toml
does) and what a Debian or Ubuntu machine must have for the install to compile."""

from __future__ import annotations

import re
import sys
import tomllib

from support import ROOT

README = (ROOT / "README.md").read_text(encoding="utf-8")
DEMO = "python3 -m venv .venv && .venv/bin/pip install -e . && .venv/bin/tellwave demo --out tellwave-demo"
TESTS = "python3 -m venv .venv && .venv/bin/pip install -e '.[test]' && .venv/bin/python -m pytest -m \"\" -n auto"


def _supported() -> list[str]:
    """The minor versions pyproject's requires-python admits, e.g. ['3.11', '3.12']."""
    spec = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))["project"]["requires-python"]
    low = re.search(r">=\s*3\.(\d+)", spec)
    high = re.search(r"<\s*3\.(\d+)", spec)
    assert low and high, f"requires-python {spec!r}: expected a lower and an upper bound"
    return [f"3.{m}" for m in range(int(low.group(1)), int(high.group(1)))]


def _before_the_commands() -> str:
    setup = README.split("## Set-up", 1)[1]
    return setup.split(DEMO, 1)[0]


def test_the_two_set_up_commands_are_unchanged():
    setup = README.split("## Set-up", 1)[1].split("\n## ", 1)[0]
    assert DEMO in setup and TESTS in setup
    assert setup.index(DEMO) < setup.index(TESTS)


def test_the_supported_pythons_come_before_the_commands_and_match_pyproject():
    versions = _supported()
    text = _before_the_commands()
    assert " or ".join(versions) in text or ", ".join(versions) in text, \
        f"the set-up should name Python {versions} before its commands"
    assert f"{sys.version_info.major}.{sys.version_info.minor}" in versions, "this Python is not a supported one"


def test_the_system_packages_come_before_the_commands():
    text = _before_the_commands()
    assert re.search(r"apt-get install [^\n]*python3-venv", text)
    for package in ("python3-venv", "python3-dev"):
        assert package in text
    assert re.search(r"\b(gcc|build-essential)\b", text), "a C compiler for durable-rules"


def test_ci_runs_the_readme_s_test_command_and_fails_when_a_test_fails():
    """.ci/run's pytest line is the README's (the whole suite, markers and all), and its exit status is pytest's."""
    ci = (ROOT / ".ci" / "run").read_text(encoding="utf-8")
    runs = [line.strip() for line in ci.splitlines() if "-m pytest" in line and not line.lstrip().startswith("#")]
    assert runs == [TESTS.rsplit(" && ", 1)[1]], runs
    assert "set -euo pipefail" in ci and 'exit "$status"' in ci


def test_the_default_run_leaves_out_only_the_marked_tests():
    options = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))["tool"]["pytest"]["ini_options"]
    assert '-m "not slow and not browser and not install"' in options["addopts"]
    declared = {m.split(":")[0] for m in options["markers"]}
    assert {"slow", "browser", "install"} <= declared


def test_the_map_of_the_tests_names_every_folder_and_top_level_test():
    """tests/README.md stays a map: every folder and top-level test file has its row, and every row is real."""
    text = (ROOT / "tests" / "README.md").read_text(encoding="utf-8")
    rows = set(re.findall(r"^\| `([\w./]+)` \|", text, re.MULTILINE))
    tests = ROOT / "tests"
    folders = {f"{p.name}/" for p in tests.iterdir() if p.is_dir() and any(p.glob("test_*.py"))}
    files = {p.name for p in tests.glob("test_*.py")}
    assert folders | files <= rows, f"missing from tests/README.md: {sorted((folders | files) - rows)}"
    assert rows <= folders | files, f"tests/README.md names what is not there: {sorted(rows - folders - files)}"
