"""The command line explains itself: every option has help, every default is shown, the
lists in the help come from the tables the code uses, and the bare command, --version and
rulebook list answer."""

from __future__ import annotations

import argparse
import re
import subprocess
import sys
import tomllib

import pytest

from engine import __version__
from engine.cli import COMMANDS, build_parser, main
from engine.common.units import known_units, unit, unit_aliases, units_by_quantity
from engine.readings.formats import READERS
from engine.simulation import FAULTS

from support import ROOT


def _parsers(parser: argparse.ArgumentParser, path=("tellwave",)):
    """(command path, parser) for the root and every subcommand, however deep."""
    yield path, parser
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            for name, sub in action.choices.items():
                yield from _parsers(sub, path + (name,))


PARSERS = {" ".join(path): p for path, p in _parsers(build_parser())}


def _action(command: str, flag: str) -> argparse.Action:
    for action in PARSERS[command]._actions:
        if flag in action.option_strings or flag == action.dest:
            return action
    raise AssertionError(f"{command} has no {flag}")


def _help(command: str, flag: str) -> str:
    """The help of one option as --help prints it (%(default)s and the like filled in)."""
    parser = PARSERS[command]
    return parser._get_formatter()._expand_help(_action(command, flag))


def _tokens(text: str) -> set[str]:
    return set(re.split(r"[\s,;()]+", text))


def test_the_walk_reaches_every_command_and_rulebook_action():
    assert len([c for c in PARSERS if c.count(" ") == 1]) == len(COMMANDS)
    assert {"tellwave rulebook explain", "tellwave rulebook list", "tellwave synth"} <= set(PARSERS)


@pytest.mark.parametrize("command", sorted(PARSERS))
def test_every_option_and_argument_has_help(command):
    parser = PARSERS[command]
    missing = []
    for action in parser._actions:
        if isinstance(action, argparse._HelpAction):
            continue
        if isinstance(action, argparse._SubParsersAction):
            missing += [f"{command} {c.dest}" for c in action._choices_actions if not (c.help or "").strip()]
            continue
        if not (action.help or "").strip() or action.help == argparse.SUPPRESS:
            missing.append(f"{command} {'/'.join(action.option_strings) or action.dest}")
    assert not missing, f"no help text: {missing}"
    parser.format_help()                 # a stray % in a help text fails here, not in a user's terminal


@pytest.mark.parametrize("command", sorted(PARSERS))
def test_every_default_is_shown(command):
    hidden = []
    for action in PARSERS[command]._actions:
        default = action.default
        if default in (None, False, [], argparse.SUPPRESS) or isinstance(action, argparse._HelpAction):
            continue
        if "default" not in _help(command, action.dest).lower():
            hidden.append(f"{'/'.join(action.option_strings) or action.dest} (default {default!r})")
    assert not hidden, f"{command}: defaults not in the help: {hidden}"


def test_the_help_of_the_options_users_ask_about():
    assert "default text" in _help("tellwave diagnose", "--format")
    fault = _help("tellwave synth", "--fault")
    assert "default healthy" in fault
    assert set(FAULTS) <= _tokens(fault), "every simulated fault is listed"
    assert "default 0" in _help("tellwave synth", "--seed")
    assert "default 2" in _help("tellwave synth", "--stage")
    assert "default" in _help("tellwave synth", "--component")
    for command in ("tellwave reading", "tellwave diagnose", "tellwave evidence"):
        direction = _help(command, "--direction")
        assert {"horizontal", "vertical", "axial"} <= _tokens(direction) and "default" in direction
    explain = _action("tellwave rulebook explain", "rule_id")
    assert explain.metavar == "RULE_ID" and "rulebook list" in explain.help


def test_reading_help_lists_every_reader_suffix_from_the_readers_table():
    text = PARSERS["tellwave reading"].format_help()
    assert ".mat" in READERS
    for suffix in READERS:
        assert re.search(rf"(?<![\w.]){re.escape(suffix)}(?!\w)", text), f"{suffix} not in reading --help"
    for command in ("tellwave diagnose", "tellwave evidence"):
        assert set(READERS) <= _tokens(_help(command, "readings"))


def test_unit_help_lists_every_unit_the_readers_accept():
    assert {"m/s", "mm"} <= set(known_units())
    assert sorted(n for names in units_by_quantity().values() for n in names) == known_units()
    for command in ("tellwave reading", "tellwave diagnose", "tellwave evidence"):
        listed = _tokens(_help(command, "--unit"))
        assert set(known_units()) <= listed, f"{command} --unit misses {set(known_units()) - listed}"
        assert set(unit_aliases()) <= listed
    for name in _tokens(_help("tellwave reading", "--unit")) & (set(known_units()) | set(unit_aliases())):
        unit(name)                     # and each one listed is accepted


def test_version(capsys):
    with pytest.raises(SystemExit) as stop:
        main(["--version"])
    assert stop.value.code == 0
    assert capsys.readouterr().out.strip() == f"tellwave {__version__}"
    pyproject = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))
    assert "version" not in pyproject["project"] and "version" in pyproject["project"]["dynamic"]
    assert pyproject["tool"]["setuptools"]["dynamic"]["version"] == {"attr": "engine.__version__"}, \
        "the version has one home, engine/__init__.py"
    from importlib.metadata import version

    assert version("tellwave") == __version__       # what the install recorded


def test_bare_command_prints_usage_and_every_command(capsys):
    assert main([]) == 2
    err = capsys.readouterr().err
    assert err.startswith("usage: tellwave")
    for command in (c for c in PARSERS if c.count(" ") == 1):
        assert re.search(rf"^\s+{re.escape(command.split()[1])}\b", err, re.M), f"{command} not listed"


def test_bare_command_as_a_process():
    done = subprocess.run([sys.executable, "-m", "engine.cli"], capture_output=True, text=True, cwd=ROOT, timeout=60)
    assert done.returncode == 2 and "usage: tellwave" in done.stderr and "diagnose" in done.stderr
    version = subprocess.run([sys.executable, "-m", "engine.cli", "--version"], capture_output=True, text=True,
                             cwd=ROOT, timeout=60)
    assert version.returncode == 0 and version.stdout.strip() == f"tellwave {__version__}"


def test_rulebook_list_names_every_loaded_rule(capsys):
    from engine.reasoning import load_rulebook

    assert main(["rulebook", "list"]) == 0
    lines = capsys.readouterr().out.splitlines()
    ids = {line.split()[0] for line in lines if line.strip()}
    rules = load_rulebook().rules
    assert {r.id for r in rules} <= ids
    assert "bearing.defect.envelope" in ids


def test_rulebook_without_an_action_prints_its_usage(capsys):
    assert main(["rulebook"]) == 2
    err = capsys.readouterr().err
    for action in ("check", "test", "explain", "list", "vocabulary", "parameters"):
        assert action in err


def test_demo_route_months_are_the_demo_plants():
    from engine.cli.demo_route import DEMO_MONTHS
    from engine.common.errors import UsageError
    from engine.demo.plant import MONTHS

    assert DEMO_MONTHS == MONTHS
    parser = build_parser()
    assert parser.parse_args(["demo-route", "--months", str(MONTHS)]).months == MONTHS
    for bad in ("0", str(MONTHS + 1)):
        with pytest.raises(UsageError):
            parser.parse_args(["demo-route", "--months", bad])
