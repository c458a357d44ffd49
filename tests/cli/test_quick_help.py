"""``tellwave --help`` lists the commands without importing the engine's numerical stack.

The goal is 0.3 s for the whole process (bench.speed, table 4); numpy alone takes about
0.15 s to import, so the test holds the cause rather than a wall time: neither numpy
nor a stage of the pipeline is imported to list the commands.
"""

from __future__ import annotations

import subprocess
import sys

import pytest

PROBE = ("import sys, contextlib, io\n"
         "import engine.cli\n"
         "out = io.StringIO()\n"
         "with contextlib.redirect_stdout(out):\n"
         "    try:\n"
         "        engine.cli.main({argv!r})\n"
         "    except SystemExit:\n"
         "        pass\n"
         "heavy = sorted(m for m in sys.modules if m in ('numpy', 'scipy', 'yaml', 'jsonschema')\n"
         "               or m.startswith(('engine.readings', 'engine.simulation', 'engine.analysis')))\n"
         "print(len(out.getvalue()), ' '.join(heavy))\n")


def _probe(argv: list[str]) -> tuple[int, list[str]]:
    done = subprocess.run([sys.executable, "-c", PROBE.format(argv=argv)], capture_output=True, text=True,
                          check=True)
    size, *heavy = done.stdout.split()
    return int(size), heavy


@pytest.mark.parametrize("argv", [["--help"], ["-h"]])
def test_top_level_help_imports_no_numerical_stack(argv):
    size, heavy = _probe(argv)
    assert size > 200                    # the help was printed
    assert heavy == []


def test_a_command_help_still_has_its_arguments():
    size, heavy = _probe(["synth", "--help"])
    assert "numpy" in heavy              # the fault names come from the simulation
    from engine.cli import build_parser

    whole = build_parser().format_help()
    listed = build_parser("").format_help()
    assert whole == listed               # the command list reads the same either way
    synth = build_parser("synth")._subparsers._group_actions[0].choices
    assert "--fault" in synth["synth"].format_help()
    assert "--fault" not in synth["diagnose"].format_help() and "--machine" not in synth["diagnose"].format_help()
