"""``tellwave findings``: add, import, list and delete; every bad input is one line, exit 2, and nothing
written; ``tellwave history`` shows the findings beside the readings they judge."""

from __future__ import annotations

import json

import pytest
from test_store import record

from engine.cli import main
from engine.history.store import Store

from support import ROOT

PUMP = "RW-2 raw water pump"
MACHINE_FILE = str(ROOT / "cases" / "machines" / "rw2-raw-water-pump.yaml")


@pytest.fixture
def store(tmp_path) -> str:
    path = tmp_path / "h.sqlite"
    with Store(path) as s:
        s.add(dict(record(1, when="2026-01-12T08:30:00"), machine_file=MACHINE_FILE))
        s.add(dict(record(2, when="2026-02-12T08:30:00"), machine_file=MACHINE_FILE))
    return str(path)


def _count(store: str) -> int:
    with Store(store, create=False) as s:
        return len(s.findings())


def _one_line(capsys) -> str:
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "Traceback" not in err, err
    return err


ADD = ["findings", "add", "--reading", "1", "--date", "2026-01-20", "--component", "pump_de", "--fault", "outer-race"]


def test_add_list_and_delete(store, capsys):
    assert main(ADD + ["--stage", "2", "--work-order", "WO-7", "--store", store]) == 0
    assert "finding 1: outer-race on pump_de (2026-01-20) judges reading 1" in capsys.readouterr().out
    assert main(["findings", "add", "--machine", PUMP, "--date", "2026-02-20", "--component", "impeller",
                 "--fault", "nothing-found", "--store", store]) == 0
    capsys.readouterr()
    assert main(["findings", "list", PUMP, "--store", store, "--json"]) == 0
    listed = json.loads(capsys.readouterr().out)
    assert [(f["id"], f["reading_id"], f["fault"], f["stage"], f["work_order"]) for f in listed] == [
        (1, 1, "outer-race", 2, "WO-7"), (2, 2, "nothing-found", None, None)]
    assert main(["findings", "list", "--store", store]) == 0
    assert "WO-7" in capsys.readouterr().out
    assert main(["findings", "delete", "1", "--store", store]) == 0
    assert "deleted finding 1" in capsys.readouterr().out
    assert _count(store) == 1
    assert main(["findings", "delete", "1", "--store", store]) == 2
    assert "no stored finding has id 1" in _one_line(capsys)


@pytest.mark.parametrize("change, problem", [
    ({"--reading": "9"}, "no stored reading has id 9"),
    ({"--component": "gearbox"}, "'gearbox' is not in the machine file"),
    ({"--fault": "wobble"}, "'wobble' is no fault id"),
    ({"--fault": "signal-corrupted"}, "'signal-corrupted' is no fault id"),   # a reading's problem, not the machine's
    ({"--date": "2999-01-01"}, "in the future"),
    ({"--date": "2026-01-11"}, "before reading 1"),
    ({"--stage": "7"}, "damage stage"),
    ({"--fault": "other"}, "say what was found"),
])
def test_each_bad_finding_is_one_line_and_nothing_written(store, capsys, change, problem):
    args = list(ADD)
    for option, value in change.items():
        if option in args:
            args[args.index(option) + 1] = value
        else:
            args += [option, value]
    assert main(args + ["--store", store]) == 2
    assert problem in _one_line(capsys)
    assert _count(store) == 0


def test_an_unknown_machine_and_a_machine_without_readings_that_early_are_refused(store, capsys):
    base = ["findings", "add", "--component", "pump_de", "--fault", "unbalance", "--store", store]
    assert main(base + ["--machine", "RW-9", "--date", "2026-02-20"]) == 2
    assert "no stored reading of machine 'RW-9'" in _one_line(capsys)
    assert main(base + ["--machine", PUMP, "--date", "2026-01-01"]) == 2
    assert "no stored reading on or before 2026-01-01" in _one_line(capsys)
    assert _count(store) == 0


def test_a_duplicate_finding_is_refused(store, capsys):
    assert main(ADD + ["--store", store]) == 0
    capsys.readouterr()
    assert main(ADD + ["--notes", "again", "--store", store]) == 2
    assert "finding 1 already records outer-race on pump_de for reading 1" in _one_line(capsys)
    assert _count(store) == 1


def test_a_csv_is_written_whole_or_not_at_all(store, tmp_path, capsys):
    good = tmp_path / "good.csv"
    good.write_text("reading,machine,date,component,fault,stage,work_order,notes\n"
                    "1,,2026-01-20,pump_de,outer-race,3,WO-1,\"spall, load zone\"\n"
                    ",RW-2 raw water pump,2026-02-20,impeller,other,,WO-2,wear ring rubbed\n", encoding="utf-8")
    bad = tmp_path / "bad.csv"
    bad.write_text("reading,date,component,fault\n"
                   "2,2026-02-20,pump_de,unbalance\n"
                   "1,2026-01-20,pump_de,wobble\n", encoding="utf-8")
    assert main(["findings", "import", str(bad), "--store", store]) == 2
    assert f"{bad}:3: fault 'wobble'" in _one_line(capsys)
    assert _count(store) == 0                           # line 2 was sound, and is not written either
    assert main(["findings", "import", str(good), "--store", store]) == 0
    assert "2 finding(s) from 2 row(s)" in capsys.readouterr().out
    assert main(["findings", "import", str(good), "--store", store]) == 2     # every row is already there
    assert f"{good}:2: finding 1 already records" in _one_line(capsys)
    assert _count(store) == 2


def test_a_csv_row_given_wrongly_names_its_line(store, tmp_path, capsys):
    path = tmp_path / "f.csv"
    path.write_text("reading,date,component,fault,stage\n1,2026-01-20,pump_de,unbalance,\n"
                    "1,2026-01-20,pump_de,outer-race,9\n", encoding="utf-8")
    assert main(["findings", "import", str(path), "--store", store]) == 2
    assert f"{path}:3: stage '9'" in _one_line(capsys)
    assert main(["findings", "import", str(tmp_path / "none.csv"), "--store", store]) == 2
    assert "none.csv: no such file" in _one_line(capsys)
    assert _count(store) == 0


def test_a_missing_store_is_not_made(tmp_path, capsys):
    path = tmp_path / "none.sqlite"
    assert main(ADD + ["--store", str(path)]) == 8
    _one_line(capsys)
    assert not path.exists()


def test_history_shows_the_findings_beside_the_readings_they_judge(store, capsys):
    assert main(ADD + ["--stage", "3", "--notes", "spall", "--store", store]) == 0
    capsys.readouterr()
    assert main(["history", PUMP, "--store", store]) == 0
    lines = capsys.readouterr().out.splitlines()
    first = next(i for i, line in enumerate(lines) if line.split()[:1] == ["1"])
    assert "found 2026-01-20: outer-race on pump_de, stage 3; spall (finding 1)" in lines[first + 1]
    assert lines[first + 2].split()[:1] == ["2"]        # reading 2 has none
    assert main(["history", PUMP, "--store", store, "--json"]) == 0
    rows = json.loads(capsys.readouterr().out)
    assert [[f["fault"] for f in r["findings"]] for r in rows] == [["outer-race"], []]


def test_listing_an_unknown_machine_or_giving_no_action_is_exit_2(store, capsys):
    assert main(["findings", "list", "RW-9", "--store", store]) == 2
    assert "no stored reading of 'RW-9'" in _one_line(capsys)
    assert main(["findings", "list", PUMP, "--store", store]) == 0
    assert "holds no finding of RW-2 raw water pump" in capsys.readouterr().out
    assert main(["findings"]) == 2
    assert "ACTION" in capsys.readouterr().err
    assert main(["findings", "delete", "first", "--store", store]) == 2
    assert "expected a finding id" in _one_line(capsys)


def test_history_words_urgency_as_every_other_output_does(tmp_path, capsys):
    """The urgency column shows the advice data's label ("plan soon"), not its id ("plan-soon");
    JSON keeps the id and adds the label."""
    path = tmp_path / "u.sqlite"
    soon = record(3)
    soon["verdict"] = dict(soon["verdict"], urgency="plan-soon", urgency_label="plan soon")
    with Store(path) as s:
        s.add(soon)
    assert main(["history", PUMP, "--store", str(path)]) == 0
    out = capsys.readouterr().out
    assert "plan soon" in out and "plan-soon" not in out
    assert main(["history", PUMP, "--store", str(path), "--json"]) == 0
    (row,) = json.loads(capsys.readouterr().out)
    assert (row["urgency"], row["urgency_label"]) == ("plan-soon", "plan soon")


def test_a_finding_added_before_the_survey_it_concerns_is_noted(store, tmp_path, capsys):
    # repaired 2026-03-20, but the March survey (2026-03-12) is not stored yet: the finding can judge only
    # February's reading, and says so, with what to do
    csv = tmp_path / "f.csv"
    csv.write_text(f"machine,date,component,fault\n{PUMP},2026-03-20,pump_de,inner-race\n")
    capsys.readouterr()
    assert main(["findings", "import", str(csv), "--store", store]) == 0
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and f"{csv}: line 2: no reading of {PUMP} after 2026-03-20 is stored yet" in err
    assert "(the last taken 2026-02-12)" in err and "between 2026-02-12 and 2026-03-20" in err
    # a finding by reading id, or one whose machine has a later reading, is no such case
    with Store(store) as s:
        s.add(dict(record(3, when="2026-04-12T08:30:00"), machine_file=MACHINE_FILE))
    for argv in (["--machine", PUMP, "--date", "2026-03-21", "--fault", "outer-race"],
                 ["--reading", "2", "--date", "2026-04-20", "--fault", "nothing-found"]):
        assert main(["findings", "add", *argv, "--component", "pump_de", "--store", store]) == 0
        assert capsys.readouterr().err == "", argv


def test_the_order_of_import_does_not_change_the_answer(tmp_path, capsys):
    # nu25 item 10: a repair's findings imported before the survey taken before the repair bound to the
    # survey before that one, and the later survey was never judged; now it takes their place
    from engine.trend import trend_document

    csv = tmp_path / "f.csv"
    csv.write_text(f"machine,date,component,fault,stage\n{PUMP},2026-03-20,pump_de,inner-race,3\n")
    surveys = [dict(record(n, when=f"2026-0{n}-12T08:30:00", velocity=1.0 + n), machine_file=MACHINE_FILE)
               for n in (1, 2, 3)]
    after = dict(record(4, when="2026-04-12T08:30:00", velocity=1.5), machine_file=MACHINE_FILE)
    answers = []
    for name, findings_before in (("readings-first", False), ("findings-first", True)):
        path = str(tmp_path / f"{name}.sqlite")
        with Store(path) as s:
            for r in surveys[:2]:
                s.add(r)
        if findings_before:
            assert main(["findings", "import", str(csv), "--store", path]) == 0
        with Store(path) as s:
            s.add(surveys[2])
        if not findings_before:
            assert main(["findings", "import", str(csv), "--store", path]) == 0
        with Store(path) as s:
            s.add(after)
            judged = [(f["taken_at"], f["component"], f["fault"]) for f in s.findings(PUMP)]
            doc = trend_document(s, PUMP, names={})
        capsys.readouterr()
        answers.append((judged, json.dumps({k: v for k, v in doc.items() if k not in ("made_at", "store")})))
    assert answers[0] == answers[1]
    assert answers[0][0] == [("2026-03-12T08:30:00", "pump_de", "inner-race")]      # the survey before the repair
    # the one after the repair (2026-04-12) is of the repaired machine: the finding stays where it is
    assert '"judged": ["2026-03-12T08:30:00"]' in answers[0][1]


def test_a_later_survey_takes_the_place_only_at_its_own_points(tmp_path):
    other = dict(record(5, when="2026-02-20T08:30:00"), machine_file=MACHINE_FILE)
    other["channels"] = [dict(other["channels"][0], channel="P2H", point="P2H")]
    other["indicators"] = [dict(i, channel="P2H") for i in other["indicators"]]
    with Store(tmp_path / "h.sqlite") as s:
        first = s.add(dict(record(1, when="2026-02-12T08:30:00"), machine_file=MACHINE_FILE))
        s.add_finding({"reading_id": first, "component": "pump_de", "fault": "inner-race", "found_on": "2026-03-20"})
        s.add(other)                                             # at P2H only: P1H's finding stays
        assert [f["reading_id"] for f in s.findings(PUMP)] == [first]
        later = s.add(dict(record(2, when="2026-03-20T07:00:00"), machine_file=MACHINE_FILE))   # the day found
        assert [(f["id"], f["reading_id"]) for f in s.findings(PUMP)] == [(1, later)]
        s.add(dict(record(3, when="2026-03-21T07:00:00"), machine_file=MACHINE_FILE))         # after the repair
        assert [f["reading_id"] for f in s.findings(PUMP)] == [later]
