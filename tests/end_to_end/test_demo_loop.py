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
        assert main(["route", str(folder / "route.yaml"), "--store", store, "--quiet", "--workers", "1"]) == 0
        if (folder / "findings.csv").exists():
            assert main(["findings", "import", str(folder / "findings.csv"), "--store", store]) == 0
    overlay = root / "learned" / "learned.yaml"
    assert main(["learn", "--store", store, "--overlay", str(overlay), "--format", "json",
                 "-o", str(root / "learning.json")]) == 0
    assert main(["route", str(root / "routes" / "month-05" / "route.yaml"), "--store", store, "--quiet",
                 "--workers", "1", "--site", str(overlay.parent), "--format", "json"]) == 0
    return root, store


def test_the_learning_counts_what_the_fitters_found(looped):
    root, _ = looped
    doc = json.loads((root / "learning.json").read_text())
    rules = {r["rule"]: r for r in doc["rules"]}
    # the inner-race load-zone rule fired on the three RW-2 readings of April; the bearing was found spalled
    assert (rules["bearing.inner-race.load-zone"]["n"], rules["bearing.inner-race.load-zone"]["k"]) == (3, 3)
    assert "bearing.inner-race.load-zone" in doc["proposal"]["too_little"]
    # the envelope rule fired five times on judged readings: three on April's spalled pump_de, and twice that
    # April on the motor's bearings at 8 % (not confirmed). Five judged firings are
    # the fewest a weight learns from; the shipped weight counts as 20 findings: (0.4 x 20 + 3) / 25 = 0.44
    (change,) = doc["proposal"]["changes"]
    assert (change["rule"], change["n"], change["k"]) == ("bearing.defect.envelope", 5, 3)
    assert (change["loaded_weight"], change["learned_weight"]) == pytest.approx((0.4, 0.44))


def test_the_next_route_is_made_with_the_rules_as_shipped_and_the_record_is_shown_beside_them(looped):
    root, _ = looped
    text = (root / "learned" / "learned.yaml").read_text()
    # one weight moves (the envelope rule's); every other rule keeps its weight and shows its record (kept:)
    body = yaml.safe_load(text)
    assert [(e["rule"], e["weight"]) for e in body["learned"]] == [("bearing.defect.envelope", 0.44)]
    assert "rules" not in body
    assert "#   shaft.unbalance.radial-1x: confirmed 1 of 1" in text
    kept = {e["rule"]: e for e in body["kept"]}
    assert kept["shaft.unbalance.radial-1x"]["site_record"] == {"confirmed": 1, "judged": 1}
    assert kept["shaft.unbalance.radial-1x"]["why"] == "too few judged firings to learn from"
    report = next((root / "routes" / "month-05" / "route-reports" / "reports").rglob("bw1-bdeh-*.json"))
    doc = json.loads(report.read_text())
    # the weights are the shipped ones; the site's record of each stands beside its firing and its hypothesis
    shown = [f for h in doc["hypotheses"] for f in h.get("support", []) if f.get("site_record")]
    assert shown and all(f["site_record"]["weight_kept"] == kept[f["rule"]]["why"] for f in shown if f["rule"] in kept)
    assert doc["verdict"]["site_record"].startswith("weights kept by learning from this site's findings at repair")
    assert all(h["site_record"].endswith("(weight kept)") for h in doc["hypotheses"]
               if any(f.get("site_record") for f in h["support"]))


def test_the_next_summary_names_the_repair_between_the_surveys(looped):
    root, store = looped
    out = root / "routes" / "month-05" / "route-reports"
    doc = json.loads((out / "summary.json").read_text())
    pump = next(m for m in doc["machines"] if m["machine"] == "RW-2 raw water pump")
    # the fitters replaced pump_de on 2026-04-21 (month 4's findings.csv), between April's survey and May's
    assert pump["change"]["repairs"] == [{"found_on": "2026-04-21", "component": "pump_de", "fault": "inner-race",
                                          "fault_name": "inner-race defect"}]
    words = f"since {pump['change']['since'][:10]} (repaired 2026-04-21: inner-race defect on pump_de)"
    assert pump["change"]["since"].startswith("2026-04-") and words + ":" in (out / "summary.txt").read_text()
    for fmt in ("md", "html"):
        assert words in (out / f"summary.{fmt}").read_text().replace("\\_", "_"), fmt
    # the top finding then is the chosen point's own April reading's
    from engine.history.store import Store
    with Store(store, create=False) as s:
        april = [r for r in s.history("RW-2 raw water pump", pump["change"]["point"])
                 if r["taken_at"] == pump["change"]["since"]]
        top = s.top_hypothesis(april[0]["id"])
    assert pump["change"]["top_then"].endswith(f"({round(100 * top['certainty'])} %)")
