"""``rulebook test FOLDER`` looks for case files in the folder given, or ``--depth N`` levels of its
sub-folders, never in hidden, virtual-environment or package folders, and says how many it found
(issue 24, item 10: ``rulebook test /tmp`` ran another environment's case files for minutes)."""

from __future__ import annotations

import pytest

from engine.cli import main
from engine.pipeline.cases import case_files

from support import ROOT, one_error_line

RW2 = ROOT / "cases/machines/rw2-raw-water-pump.yaml"
CASE = (f"case: unbalance, found at repair\nmachine: {RW2}\n"
        "simulate: {fault: unbalance, component: pump, stage: 3, seed: 1, duration_s: 2.0, sample_rate_hz: 12800}\n"
        # the pump is measured horizontally only: horizontal and vertical phase at its drive end make it a call
        "phase_1x: [{point: P1H, phase_deg: 40}, {point: pump_de, direction: vertical, phase_deg: 128}]\n"
        "expect: {fault: unbalance, component: pump}\n")


@pytest.fixture
def tree(tmp_path):
    """top.case.yaml; a/mid.case.yaml; a/b/deep.case.yaml; and case files where none may be looked for."""
    (tmp_path / "a" / "b").mkdir(parents=True)
    for rel in ("top.case.yaml", "a/mid.case.yaml", "a/b/deep.case.yaml"):
        (tmp_path / rel).write_text(CASE)
    hidden = ["env/lib/site-packages/pkg/x.case.yaml", ".git/y.case.yaml", "venv2/z.case.yaml",
              "node_modules/m/w.case.yaml", ".hidden.case.yaml"]
    for rel in hidden:
        (tmp_path / rel).parent.mkdir(parents=True, exist_ok=True)
        (tmp_path / rel).write_text(CASE)
    (tmp_path / "venv2" / "pyvenv.cfg").write_text("home = /usr/bin\n")
    return tmp_path


def _names(paths):
    return [p.name for p in paths]


def test_the_folder_given_only_by_default(tree):
    assert _names(case_files(tree)) == ["top.case.yaml"]


@pytest.mark.parametrize("depth, names", [(1, ["mid.case.yaml", "top.case.yaml"]),
                                          (2, ["deep.case.yaml", "mid.case.yaml", "top.case.yaml"]),
                                          (9, ["deep.case.yaml", "mid.case.yaml", "top.case.yaml"])])
def test_depth_searches_that_many_levels_and_never_hidden_or_environment_folders(tree, depth, names):
    assert sorted(_names(case_files(tree, depth))) == names


def test_the_command_says_how_many_it_found(tree, capsys):
    assert main(["rulebook", "test", str(tree / "a"), "--depth", "1"]) == 0
    out = capsys.readouterr().out
    assert out.startswith("2 case file(s) found in the folder and 1 level(s) of sub-folders")
    assert "2 of 2 cases pass" in out


def test_a_folder_with_case_files_only_below_says_how_to_reach_them(tree, capsys):
    (tree / "top.case.yaml").unlink()
    err = one_error_line(capsys, 2, ["rulebook", "test", tree])
    assert "no *.case.yaml files in the folder (--depth N also searches sub-folders)" in err


@pytest.mark.parametrize("value, words", [("x", "whole number"), ("-1", "0 to 20"), ("21", "0 to 20")])
def test_a_bad_depth_is_a_usage_error(tree, capsys, value, words):
    err = one_error_line(capsys, 2, ["rulebook", "test", tree, "--depth", value])
    assert "argument --depth" in err and words in err
