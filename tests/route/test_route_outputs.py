"""Route outputs and the resume key: nothing a route reads is written over, every output is checked
before the first reading is diagnosed, each reading gets its own report, and a reading is skipped
only when it was diagnosed the same way (files, machine, points, unit, speed, rulebooks)."""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import yaml
from routes import PUMP

from engine.cli import main
from engine.history.record import content_hash, reading_key, rulebooks_hash
from engine.history.store import Store
from engine.machine import load_machine
from engine.simulation import simulate, write_simulation


def _reading(path, seed=0, point="P1H", fault="unbalance", component="pump"):
    path.parent.mkdir(parents=True, exist_ok=True)
    sim = simulate(load_machine(PUMP), fault, component, 2, fs_hz=12800.0, duration_s=1.0, seed=seed, points=[point])
    write_simulation(sim, path)
    return path


def _route(path, readings, machines=None):
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(yaml.safe_dump({"route": "outputs", "machines": machines or {"rw2": str(PUMP)},
                                    "readings": readings}, sort_keys=False))
    return path


def _run(route, tmp_path, *more):
    return main(["route", str(route), "--store", str(tmp_path / "h.sqlite"), "--out", str(tmp_path / "out"),
                 "--workers", "1", "--quiet", *map(str, more)])


def _stored(tmp_path):
    if not (tmp_path / "h.sqlite").exists():
        return []
    with Store(tmp_path / "h.sqlite") as store:
        return store.readings()


def test_a_route_file_inside_out_named_like_a_summary_is_never_overwritten(tmp_path, capsys):
    _reading(tmp_path / "r.wav")
    route = _route(tmp_path / "out" / "summary.md", [{"file": "../r.wav", "machine": "rw2"}])
    before = route.read_bytes()
    assert _run(route, tmp_path) == 2
    err = capsys.readouterr().err
    assert "summary.md" in err and "input of this run" in err and err.count("\n") == 1
    assert route.read_bytes() == before
    assert _stored(tmp_path) == []          # refused before the first reading was diagnosed


def test_a_linked_summary_fails_before_any_reading_and_nothing_is_written(tmp_path, capsys):
    _reading(tmp_path / "r.wav")
    route = _route(tmp_path / "route.yaml", [{"file": "r.wav", "machine": "rw2"}])
    kept = tmp_path / "elsewhere.html"
    kept.write_text("mine\n")
    (tmp_path / "out").mkdir()
    (tmp_path / "out" / "summary.html").symlink_to(kept)
    assert _run(route, tmp_path) == 2
    err = capsys.readouterr().err
    assert "summary.html" in err and "symbolic link" in err
    assert kept.read_text() == "mine\n" and _stored(tmp_path) == []
    assert not (tmp_path / "out" / "reports").exists() and not (tmp_path / "out" / "summary.json").exists()


def test_a_report_target_that_is_a_folder_fails_before_any_reading(tmp_path, capsys):
    """The second reading's report cannot be written: the first is not diagnosed either."""
    _reading(tmp_path / "q.wav")
    _reading(tmp_path / "r.wav", seed=1)
    route = _route(tmp_path / "route.yaml", [{"file": "q.wav", "machine": "rw2"}, {"file": "r.wav", "machine": "rw2"}])
    (tmp_path / "out" / "reports" / "rw-2-raw-water-pump" / "r.wav.html").mkdir(parents=True)
    assert _run(route, tmp_path) == 2
    assert "r.wav.html" in capsys.readouterr().err and _stored(tmp_path) == []
    assert not (tmp_path / "out" / "reports" / "rw-2-raw-water-pump" / "q.wav.html").exists()


def test_two_files_of_one_name_get_two_reports(tmp_path):
    _reading(tmp_path / "a" / "pump.wav", seed=1)
    _reading(tmp_path / "b" / "pump.wav", seed=2, fault="inner-race", component="pump_de")
    route = _route(tmp_path / "route.yaml", [{"file": "a/pump.wav", "machine": "rw2"},
                                             {"file": "b/pump.wav", "machine": "rw2"}])
    assert _run(route, tmp_path, "--format", "json") in (0, 7)
    rows = _stored(tmp_path)
    reports = sorted(r["report"] for r in rows)
    assert len(rows) == 2 and len(set(reports)) == 2
    assert [p.rsplit("/", 1)[1] for p in reports] == ["a-pump.wav.json", "b-pump.wav.json"]
    # each report is its own reading's: the stored verdicts differ, and so do the reports
    docs = [json.loads(Path(p).read_text()) for p in reports]
    assert docs[0] != docs[1]
    summary = json.loads((tmp_path / "out" / "summary.json").read_text())
    links = [r["report"] for m in summary["machines"] for r in m["readings"]]
    assert sorted(links) == ["reports/rw-2-raw-water-pump/a-pump.wav.json",
                             "reports/rw-2-raw-water-pump/b-pump.wav.json"]


def _second_machine(tmp_path):
    """The demo pump under another name: the same file can be listed for both."""
    text = PUMP.read_text().replace("machine: RW-2 raw water pump", "machine: RW-3 raw water pump")
    assert "RW-3" in text
    path = tmp_path / "rw3.yaml"
    path.write_text(text)
    return path


def test_one_file_listed_for_two_machines_is_diagnosed_for_each(tmp_path, capsys):
    _reading(tmp_path / "r.wav")
    route = _route(tmp_path / "route.yaml", [{"file": "r.wav", "machine": "rw2"}, {"file": "r.wav", "machine": "rw3"}],
                   machines={"rw2": str(PUMP), "rw3": str(_second_machine(tmp_path))})
    assert _run(route, tmp_path) in (0, 7)
    assert sorted(r["machine"] for r in _stored(tmp_path)) == ["RW-2 raw water pump", "RW-3 raw water pump"]
    summary = json.loads((tmp_path / "out" / "summary.json").read_text())
    assert summary["counts"]["diagnosed"] == 2 and summary["counts"]["machines"] == 2
    assert sorted(m["machine"] for m in summary["machines"]) == ["RW-2 raw water pump", "RW-3 raw water pump"]
    assert all(len(m["readings"]) == 1 for m in summary["machines"])


def test_a_corrected_unit_is_diagnosed_again_and_replaces_the_stale_result(tmp_path):
    _reading(tmp_path / "r.wav")
    # the file holds acceleration in g (its sidecar says so); the route first says velocity in mm/s
    route = _route(tmp_path / "route.yaml", [{"file": "r.wav", "machine": "rw2", "unit": "mm/s"}])
    _run(route, tmp_path)
    (wrong,) = _stored(tmp_path)
    _route(route, [{"file": "r.wav", "machine": "rw2", "unit": "g"}])
    _run(route, tmp_path)
    summary = json.loads((tmp_path / "out" / "summary.json").read_text())
    assert summary["counts"]["diagnosed"] == 1 and summary["counts"]["skipped"] == 0
    (right,) = _stored(tmp_path)            # one reading of the file, not the stale one beside it
    assert right["content_hash"] != wrong["content_hash"]
    assert right["recording_hash"] == wrong["recording_hash"] == content_hash([tmp_path / "r.wav"])
    # the same route once more: now it is stored as the route reads it
    _run(route, tmp_path)
    summary = json.loads((tmp_path / "out" / "summary.json").read_text())
    assert summary["counts"]["diagnosed"] == 0 and summary["counts"]["skipped"] == 1
    assert [r["id"] for r in _stored(tmp_path)] == [right["id"]]


def test_the_key_covers_what_changes_a_diagnosis(tmp_path):
    r = _reading(tmp_path / "r.wav")
    other = _second_machine(tmp_path)
    site = tmp_path / "site"
    site.mkdir()
    (site / "extra.yaml").write_text("rules: []\n")
    rules = rulebooks_hash()
    base = reading_key([r], PUMP, {}, rules)
    assert reading_key([r], PUMP, {"unit": None, "points": {}}, rules) == base     # unstated is unstated
    changed = [reading_key([r], other, {}, rules),
               reading_key([r], PUMP, {"points": {"P1H": "P2H"}}, rules),
               reading_key([r], PUMP, {"unit": "g"}, rules),
               reading_key([r], PUMP, {"speed_rpm": 1480}, rules),
               reading_key([r], PUMP, {}, rulebooks_hash((str(site),)))]
    assert len({base, *changed}) == 6
    sidecar = tmp_path / "r.wav.yaml"
    sidecar.write_text(sidecar.read_text() + "\n# edited\n")
    assert reading_key([r], PUMP, {}, rules) != base


def test_a_folder_route_names_the_files_no_pattern_maps(tmp_path, capsys):
    folder = tmp_path / "readings"
    for i in range(2):
        _reading(folder / f"rw2-{i}.wav", seed=i)
    for name in ("spare-1.wav", "spare-2.wav", "old.csv"):
        shutil.copy(folder / "rw2-0.wav", folder / name)
    plant = tmp_path / "plant.yaml"
    plant.write_text(yaml.safe_dump({"machines": [{"file": str(PUMP), "readings": ["rw2-*"]}]}))
    main(["route", str(folder), "--plant", str(plant), "--store", str(tmp_path / "h.sqlite"),
          "--out", str(tmp_path / "out"), "--workers", "1", "--quiet"])
    err = capsys.readouterr().err
    (line,) = [x for x in err.splitlines() if "match no pattern" in x]
    assert line.startswith("tellwave: 3 reading file(s)") and "plant.yaml" in line
    assert all(name in line for name in ("spare-1.wav", "spare-2.wav", "old.csv"))
    assert len(_stored(tmp_path)) == 2


def test_a_file_listed_twice_the_same_way_is_diagnosed_and_shown_once(tmp_path):
    _reading(tmp_path / "r.wav")
    route = _route(tmp_path / "route.yaml", [{"file": "r.wav", "machine": "rw2"}, {"file": "r.wav", "machine": "rw2"}])
    _run(route, tmp_path)
    summary = json.loads((tmp_path / "out" / "summary.json").read_text())
    assert summary["counts"]["diagnosed"] == 1 and summary["counts"]["skipped"] == 1
    (machine,) = summary["machines"]
    assert len(machine["readings"]) == 1 and len(_stored(tmp_path)) == 1


def test_a_summary_over_a_store_holding_an_impossible_certainty_is_written(tmp_path, capsys):
    """A certainty the store cannot give (infinite, read as missing) counts as none in the route
    summary instead of stopping it with a TypeError after every reading is stored."""
    import sqlite3

    first = _route(tmp_path / "a" / "route.yaml", [{"file": str(_reading(tmp_path / "a" / "p.wav")),
                                                    "machine": "rw2", "points": {"P1H": "P1H"},
                                                    "time": "2026-01-05T08:00:00"}])
    assert _run(first, tmp_path) in (0, 7)
    with sqlite3.connect(tmp_path / "h.sqlite") as db:
        db.execute("UPDATE hypotheses SET certainty = 9e999")
    db.close()
    second = _route(tmp_path / "b" / "route.yaml", [{"file": str(_reading(tmp_path / "b" / "p.wav", seed=1)),
                                                     "machine": "rw2", "points": {"P1H": "P1H"},
                                                     "time": "2026-02-05T08:00:00"}])
    capsys.readouterr()
    assert _run(second, tmp_path, "--again") in (0, 7)
    summary = json.loads((tmp_path / "out" / "summary.json").read_text())
    assert summary


def test_route_max_samples_reaches_its_workers(tmp_path, capsys):
    """``route --max-samples`` bounds each reading as the other reading commands do: a one-second
    reading of 12,800 samples fails under a limit of 4,096 and is diagnosed under the default."""
    route = _route(tmp_path / "r" / "route.yaml", [{"file": str(_reading(tmp_path / "r" / "p.wav")),
                                                    "machine": "rw2", "points": {"P1H": "P1H"},
                                                    "time": "2026-01-05T08:00:00"}])
    assert _run(route, tmp_path, "--max-samples", 4096) == 9
    failures = json.loads((tmp_path / "out" / "summary.json").read_text())["failures"]
    assert len(failures) == 1 and "4096" in json.dumps(failures)
    assert _run(route, tmp_path) in (0, 7)
