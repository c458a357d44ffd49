"""Users' text in every output (engine/common/escape.py): Markdown and HTML escaped, control
characters shown as their codes on the terminal, in reports and in error lines.

The tests named ``test_defect_NN_*`` reproduce issue 12's defects and keep their names.
"""

from __future__ import annotations

import json

import pytest
import yaml

from bench.hostile import seed_signal
from engine.cli import main
from engine.common.errors import MachineError
from engine.machine import load_machine
from engine.readings import load_reading, sidecar_path
from engine.report import render

from support import RW2, npz_reading, reasoner

HOSTILE_NAME = "RW-2 <script>x</script> | *bold* _u_ [link](http://x) \x1b[31mRED\x1b]0;title\x07"


@pytest.fixture
def hostile_document(tmp_path):
    machine = tmp_path / "m.yaml"
    machine.write_text(RW2.read_text().replace("machine: RW-2 raw water pump",
                                               "machine: " + json.dumps(HOSTILE_NAME)))
    reading = npz_reading(tmp_path / "r.npz", seed_signal())
    channel = {"name": "a", "label": "P1 | H `x` \x1b[2J", "point": "P1H"}
    sidecar_path(reading).write_text(yaml.safe_dump({"channels": [channel]}))
    return machine, reading


def test_defect_11_markdown_escapes_names(tmp_path, capsys, hostile_document):
    machine, reading = hostile_document
    out = tmp_path / "r.md"
    assert main(["diagnose", str(reading), "--machine", str(machine), "--format", "md", "-o", str(out)]) in (0, 7)
    md = out.read_text()
    assert "<script>" not in md and r"\<script\>" in md
    assert r"\| \*bold\* \_u\_ \[link\]" in md
    # the escape character is shown as its code; Markdown escapes the code's own backslash and bracket
    assert "\x1b" not in md and r"\\x1b\[31mRED" in md
    # every table row keeps its header's column count: a name's | cannot add a cell
    cells, checked = None, 0
    for line in md.splitlines():
        if not line.startswith("|"):
            cells = None
        elif cells is None:
            cells = line.count("|")                  # the header row: no user's text in it
        elif "P1" in line:
            assert line.replace("\\|", "").count("|") == cells, line
            checked += 1
    assert checked >= 2                              # the zones table and the site alarms table


def test_defect_11_text_report_and_terminal_output_carry_no_control_characters(capsys, hostile_document):
    machine, reading = hostile_document
    assert main(["diagnose", str(reading), "--machine", str(machine)]) in (0, 7)
    out = capsys.readouterr().out
    assert "\x1b" not in out and "\x07" not in out and r"\x1b[31mRED" in out
    assert main(["frequencies", str(machine)]) == 0
    out = capsys.readouterr().out
    assert "\x1b" not in out and out.startswith("RW-2 <script>x</script>")


def test_defect_11_error_messages_carry_no_control_characters(tmp_path, capsys):
    path = tmp_path / "bad\x1b[31mname.yaml"
    assert main(["frequencies", str(path)]) == MachineError.exit_code
    err = capsys.readouterr().err
    assert "\x1b" not in err and r"bad\x1b[31mname.yaml: no such file" in err


def test_defect_11_html_report_with_mathtext_channel_name(tmp_path):
    from engine.pipeline import diagnose, document_of

    reading = npz_reading(tmp_path / "r.npz", seed_signal())
    sidecar_path(reading).write_text(yaml.safe_dump({"channels": [{"name": "a", "label": "$\\foo$", "point": "P1H"}]}))
    d = diagnose(load_reading(reading), load_machine(RW2), reasoner(), plots=True)
    assert "$\\foo$" in render(document_of(d), "html")
