"""A route reading whose sidecar states a scale 1000 times too large: the summary and the history
flag its point (severity unknown there) and keep no level of it."""

from __future__ import annotations

import yaml
from routes import make_route

from engine.history.store import Store
from engine.report import render
from engine.route import load_route, route_summary, run_route


def test_a_wrong_scale_is_flagged_in_the_summary_and_stores_no_level(tmp_path):
    path = make_route(tmp_path, n=2, bad=False)
    sidecar = tmp_path / "r0.wav.yaml"                   # r0: unbalance at P1H
    side = yaml.safe_load(sidecar.read_text())
    sidecar.write_text(yaml.safe_dump(side | {"scale": 1000.0}, sort_keys=False))
    with Store(tmp_path / "h.sqlite") as store:
        outcome = run_route(load_route(path), store, tmp_path / "out", workers=1)
        summary = route_summary(outcome, store, tmp_path / "out")
        rows = {r["point"]: r for r in store.history("RW-2 raw water pump")}
    (m,) = summary["machines"]
    assert m["scale_not_trusted"] == ["P1H"]
    flagged = {r["file"]: r["scale_not_trusted"] for r in m["readings"]}
    assert flagged == {"r0.wav": ["P1H"], "r1.wav": []}
    assert next(r for r in m["readings"] if r["file"] == "r0.wav")["zone"] is None
    assert rows["P1H"]["scale_trusted"] == 0 and "velocity_rms_mm_s" not in rows["P1H"]["indicators"]
    assert "kurtosis" in rows["P1H"]["indicators"]
    assert rows["P2H"]["scale_trusted"] == 1 and rows["P2H"]["indicators"]["velocity_rms_mm_s"] > 0
    for fmt in ("text", "md", "html"):
        assert "scale not trusted at P1H" in render(summary, fmt, "route")
