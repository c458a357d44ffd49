"""The findings loop on the demo plant, as the README runs it: four monthly routes with the fitters' findings
imported after each, the learned overlay, and the fifth route diagnosed with it."""

from __future__ import annotations

import json

import pytest
import yaml

from engine.cli import main

pytestmark = pytest.mark.slow         # four simulated months of the demo plant are diagnosed first: about 20 s


@pytest.fixture(scope="module")
def looped(tmp_path_factory):
    root = tmp_path_factory.mktemp("loop")
    store = str(root / "demo.sqlite")
    assert main(["demo-route", "--out", str(root / "routes"), "--months", "5"]) == 0
    for month in (1, 2, 3, 4):
        folder = root / "routes" / f"month-0{month}"
        assert main(["route", str(folder / "route.yaml"), "--store", store, "--quiet", "--workers", "2"]) == 0
        if (folder / "findings.csv").exists():
            assert main(["findings", "import", str(folder / "findings.csv"), "--store", store]) == 0
    overlay = root / "learned" / "learned.yaml"
    assert main(["learn", "--store", store, "--overlay", str(overlay), "--format", "json",
                 "-o", str(root / "learning.json")]) == 0
    assert main(["route", str(root / "routes" / "month-05" / "route.yaml"), "--store", store, "--quiet",
                 "--workers", "2", "--site", str(overlay.parent), "--format", "json"]) == 0
    return root, store


def test_the_learning_counts_what_the_fitters_found(looped):
    root, _ = looped
    doc = json.loads((root / "learning.json").read_text())
    rules = {r["rule"]: r for r in doc["rules"]}
    # the inner-race load-zone rule fired on the three RW-2 readings of April; the bearing was found spalled
    assert (rules["bearing.inner-race.load-zone"]["n"], rules["bearing.inner-race.load-zone"]["k"]) == (3, 3)
    # seven findings are far below the evidence a weight needs: nothing moves
    assert doc["proposal"]["changes"] == [] and "bearing.inner-race.load-zone" in doc["proposal"]["too_little"]


def test_the_next_route_says_what_the_site_found(looped):
    root, _ = looped
    overlay = yaml.safe_load((root / "learned" / "learned.yaml").read_text())
    records = {r["id"]: r["site_record"] for r in overlay["rules"]}
    assert records["shaft.unbalance.radial-1x"] == {"confirmed": 1, "judged": 1}
    report = next((root / "routes" / "month-05" / "route-reports" / "reports").rglob("bw1-bdeh-*.json"))
    firings = [f for h in json.loads(report.read_text())["hypotheses"] for f in h.get("support", [])
               if f.get("site_record")]
    assert any(f["rule"] == "shaft.unbalance.radial-1x" and f["site_record"]["words"]
               == "at this site this rule was confirmed 1 of 1 times" for f in firings)
