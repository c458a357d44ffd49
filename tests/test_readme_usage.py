"""The README's Usage section lists every command and every option of the command line, and no option
the command line does not have; CI runs the README's install and test commands."""

from __future__ import annotations

import argparse
import re

import pytest

from engine.cli import build_parser

from support import ROOT

README = (ROOT / "README.md").read_text(encoding="utf-8")


def _parsers(parser: argparse.ArgumentParser, path=("tellwave",)):
    """(command, parser) for the root and every subcommand, however deep."""
    yield " ".join(path), parser
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            for name, sub in action.choices.items():
                yield from _parsers(sub, path + (name,))


PARSERS = dict(_parsers(build_parser()))


def _is_group(parser: argparse.ArgumentParser) -> bool:
    return any(isinstance(a, argparse._SubParsersAction) for a in parser._actions)


def _synopsis() -> dict[str, str]:
    """The Usage section's code block as {command: its text}: an entry starts at a line that begins
    with 'tellwave ' and goes on over the indented lines below it."""
    section = README.split("\n## Usage\n", 1)[1].split("\n## ", 1)[0]
    block = section.split("```sh\n", 1)[1].split("```", 1)[0]
    entries: list[str] = []
    for line in block.splitlines():
        if line.startswith("tellwave "):
            entries.append(line)
        elif line.strip():
            assert line.startswith(" ") and entries, f"a Usage line that belongs to no command: {line!r}"
            entries[-1] += " " + line.strip()
    synopsis: dict[str, str] = {}
    for entry in entries:
        words = entry.split()
        command = max((c for c in PARSERS if words[:len(c.split())] == c.split()), key=len)
        assert command not in synopsis, f"{command} is listed twice in the Usage section"
        synopsis[command] = entry
    return synopsis


SYNOPSIS = _synopsis()
COMMANDS = sorted(c for c, p in PARSERS.items() if not _is_group(p)) + ["tellwave"]


def _options(parser: argparse.ArgumentParser) -> list[argparse.Action]:
    return [a for a in parser._actions if not isinstance(a, (argparse._HelpAction, argparse._SubParsersAction))]


def test_the_synopsis_is_read_as_it_should_be():
    # the parse above must find the commands a reader sees, or the checks below prove nothing
    assert "tellwave rulebook explain" in SYNOPSIS and "tellwave diagnose" in SYNOPSIS
    assert "--taken-at" in SYNOPSIS["tellwave diagnose"] and "--taken-at" not in SYNOPSIS["tellwave evidence"]


@pytest.mark.parametrize("command", COMMANDS)
def test_every_command_and_option_is_in_the_usage_section(command):
    assert command in SYNOPSIS, f"the README's Usage section has no line for `{command}`"
    tokens = set(re.split(r"[\s\[\]|,]+", SYNOPSIS[command]))
    missing = []
    for action in _options(PARSERS[command]):
        if action.option_strings:
            if not set(action.option_strings) & tokens:
                missing.append("/".join(action.option_strings))
        else:
            name = action.metavar or action.dest.upper()
            if not any(t.startswith(name) for t in tokens):
                missing.append(name)
    assert not missing, f"`{command}` in the README's Usage section lacks {missing}"


@pytest.mark.parametrize("command", sorted(SYNOPSIS))
def test_the_usage_section_names_no_option_the_command_lacks(command):
    known = {s for a in _options(PARSERS[command]) for s in a.option_strings}
    named = set(re.findall(r"(?<![\w-])(--?[a-z][a-z-]*)", SYNOPSIS[command]))
    assert named <= known, f"`{command}` in the README's Usage section names {sorted(named - known)}, which it lacks"


def test_ci_runs_the_readme_install_and_test_commands():
    ci = (ROOT / ".ci" / "run").read_text(encoding="utf-8")
    assert "python3 -m venv .venv" in ci
    assert ".venv/bin/pip install --quiet -e '.[test]'" in ci
    assert re.search(r'^\.venv/bin/python -m pytest -m "" -n auto$', ci, re.M), "CI runs pytest as the README does"
    tests = README.split("## Set-up", 1)[1]
    assert ("python3 -m venv .venv && .venv/bin/pip install -e '.[test]' && "
            ".venv/bin/python -m pytest -m \"\" -n auto") in tests
    # the lint steps follow the tests and can fail CI
    assert ci.index("-m pytest") < ci.index("ruff check .") < ci.index("mypy")
