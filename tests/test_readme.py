"""The README's set-up says, before its commands, which Pythons work (as pyproject.toml
does) and what a Debian or Ubuntu machine must have for the install to compile."""

from __future__ import annotations

import re
import sys
import tomllib

from support import ROOT

README = (ROOT / "README.md").read_text(encoding="utf-8")
DEMO = "python3 -m venv .venv && .venv/bin/pip install -e . && .venv/bin/tellwave demo --out tellwave-demo"
TESTS = "python3 -m venv .venv && .venv/bin/pip install -e '.[test]' && .venv/bin/python -m pytest"


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
