"""Route and plant files: what they may say, and one-line errors for what they must not."""

from __future__ import annotations

import json

import pytest
import yaml
from routes import PUMP, make_route

from engine.cli import main
from engine.common.errors import RouteError
from engine.route import load_folder, load_route


def _write(path, data):
    path.write_text(yaml.safe_dump(data, sort_keys=False))
    return path


def test_a_route_file_gives_tasks_with_resolved_paths(tmp_path):
    route = load_route(make_route(tmp_path, n=2, bad=False))
    assert [t.name for t in route.tasks] == ["r0.wav", "r1.wav"]
    assert all(t.machine_file == str(PUMP) for t in route.tasks)
    assert route.tasks[0].points == {"P1H": "P1H"}


@pytest.mark.parametrize("data, problem", [
    ({"readings": [{"file": "a.wav"}]}, "machine"),
    ({"readings": [{"file": "a.wav", "files": ["b.wav"], "machine": "m"}]}, "only one of"),
    ({"readings": [{"file": "a.wav", "machine": "nowhere.yaml"}]}, "neither a name"),
    ({"machines": {"m": "missing.yaml"}, "readings": [{"file": "a.wav", "machine": "m"}]}, "no such machine file"),
    ({"readings": [{"file": "a.wav", "machine": "m", "colour": "red"}]}, "unknown field"),
    ({"clock": {"start": "soon"}, "readings": [{"file": "a.wav", "machine": str(PUMP)}]}, "ISO 8601"),
], ids=["no-machine", "file-and-files", "unknown-machine", "missing-machine-file", "unknown-field", "bad-clock"])
def test_bad_route_files_are_one_line_errors(tmp_path, data, problem):
    path = _write(tmp_path / "route.yaml", data)
    with pytest.raises(RouteError, match=problem) as err:
        load_route(path)
    assert str(path) in str(err.value) and err.value.exit_code == 2


def test_the_command_reports_a_bad_route_file_in_one_line(tmp_path, capsys):
    path = _write(tmp_path / "route.yaml", {"readings": []})
    assert main(["route", str(path), "--store", str(tmp_path / "h.sqlite")]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "route.yaml" in err


def test_a_folder_maps_to_machines_through_a_plant_file(tmp_path):
    make_route(tmp_path / "readings", n=3, bad=False)
    plant = _write(tmp_path / "plant.yaml", {"plant": "Tallow Ridge", "machines": [
        {"file": str(PUMP), "readings": ["r*.wav"]}]})
    route = load_folder(tmp_path / "readings", plant)
    assert [t.name for t in route.tasks] == ["r0.wav", "r1.wav", "r2.wav"]
    assert route.name == "Tallow Ridge"


def test_a_file_matched_by_two_machines_is_an_error(tmp_path):
    make_route(tmp_path / "readings", n=1, bad=False)
    plant = _write(tmp_path / "plant.yaml", {"machines": [{"file": str(PUMP), "readings": ["r*"]},
                                                          {"file": str(PUMP), "readings": ["*.wav"]}]})
    with pytest.raises(RouteError, match="matches both"):
        load_folder(tmp_path / "readings", plant)


def test_a_route_that_maps_a_channel_the_file_lacks_fails_that_reading_only(tmp_path):
    from engine.history.store import Store
    from engine.route import run_route

    path = make_route(tmp_path, n=2, bad=False)
    data = yaml.safe_load(path.read_text())
    data["readings"][0]["points"] = {"ch9": "P1H"}
    data["readings"][1]["points"] = {"P2H": "XYZ"}
    _write(path, data)
    with Store(tmp_path / "h.sqlite") as store:
        outcome = run_route(load_route(path), store, tmp_path / "out", workers=1)
    assert outcome.diagnosed == []
    problems = sorted(f["error"] for f in outcome.failed)
    assert "channel 'ch9'" in problems[0] and "point 'XYZ'" in problems[1]


def test_a_reading_of_another_machine_is_named_in_the_summary_and_the_route_goes_on(tmp_path, capsys):
    # issue 19: a reading whose points (P1H, P2H of RW-2) the route's machine (BW-1) lacks
    path = make_route(tmp_path, n=2, bad=False)
    data = yaml.safe_load(path.read_text())
    data["machines"]["bw1"] = str(PUMP.with_name("bw1-backwash-blower.yaml"))
    data["readings"][0]["machine"] = "bw1"
    del data["readings"][0]["points"]
    _write(path, data)
    code = main(["route", str(path), "--store", str(tmp_path / "h.sqlite"), "--out", str(tmp_path / "out"),
                 "--workers", "1"])
    assert code == 9
    summary = (tmp_path / "out" / "summary.json").read_text()
    (failure,) = json.loads(summary)["failures"]
    assert failure["file"].endswith("r0.wav") and "at point 'P1H'" in failure["error"]
    assert "its points are MDEH, BDEH, BDEV" in failure["error"]
    assert json.loads(summary)["counts"]["diagnosed"] == 1
    assert "r0.wav" in capsys.readouterr().out
