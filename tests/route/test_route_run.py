"""A route in a process pool: bad files reported, resume by content hash, --again, the summary."""

from __future__ import annotations

import json

import pytest
from routes import make_route

from engine.cli import main
from engine.history.store import Store
from engine.report import render
from engine.route import load_route, route_summary, run_route


@pytest.fixture(scope="module")
def routed(tmp_path_factory):
    folder = tmp_path_factory.mktemp("route")
    path = make_route(folder)
    with Store(folder / "h.sqlite") as store:
        first = run_route(load_route(path), store, folder / "out", workers=2)
        second = run_route(load_route(path), store, folder / "out", workers=2)
        summary = route_summary(second, store, folder / "out")
    return folder, first, second, summary


def test_every_good_reading_is_diagnosed_and_the_bad_one_reported(routed):
    _, first, _, _ = routed
    assert len(first.diagnosed) == 4
    (failure,) = first.failed
    assert failure["file"].endswith("broken.wav") and "broken.wav" in failure["error"]
    assert "\n" not in failure["error"] and "Traceback" not in failure["error"]


def test_a_second_run_skips_what_is_stored(routed):
    _, _, second, summary = routed
    assert second.diagnosed == [] and len(second.skipped) == 4 and len(second.failed) == 1
    assert summary["counts"] == {"readings": 5, "diagnosed": 0, "skipped": 4, "failed": 1, "machines": 1}


def test_each_reading_has_its_report_and_the_summary_links_it(routed):
    folder, _, _, summary = routed
    (m,) = summary["machines"]
    assert len(m["readings"]) == 4
    for r in m["readings"]:
        assert (folder / "out" / r["report"]).is_file()
        assert r["points"] and r["taken_at"].startswith("2026-02-0")
    assert any(r["top"] for r in m["readings"])
    ranks = [(r["urgency"]["rank"], -r["certainty_pct"]) for r in m["readings"]]
    assert ranks == sorted(ranks)


def test_the_summary_renders_in_every_format(routed):
    _, _, _, summary = routed
    assert json.loads(render(summary, "json", "route"))["route"] == "test route"
    for fmt in ("text", "md", "html"):
        text = render(summary, fmt, "route")
        assert "RW-2 raw water pump" in text and "broken.wav" in text


def test_again_redoes_stored_readings(routed, tmp_path):
    folder, _, _, _ = routed
    with Store(folder / "h.sqlite") as store:
        before = {r["content_hash"]: r["route_id"] for r in store.readings()}
        again = run_route(load_route(folder / "route.yaml"), store, tmp_path / "out", workers=1, again=True)
        after = {r["content_hash"]: r["route_id"] for r in store.readings()}
    assert len(again.diagnosed) == 4 and set(before) == set(after)
    assert set(after.values()) == {again.route_id} != set(before.values())


def test_the_command_writes_four_summaries_and_exits_9_on_failures(tmp_path, capsys):
    path = make_route(tmp_path / "r", n=2)
    code = main(["route", str(path), "--store", str(tmp_path / "h.sqlite"), "--out", str(tmp_path / "out"),
                 "--workers", "1", "--format", "json"])
    assert code == 9
    for ext in ("html", "md", "txt", "json"):
        assert (tmp_path / "out" / f"summary.{ext}").is_file()
    assert "WORST FIRST" in capsys.readouterr().out
    reports = list((tmp_path / "out" / "reports").rglob("*.json"))
    assert len(reports) == 2 and json.loads(reports[0].read_text())["hypotheses"] is not None
