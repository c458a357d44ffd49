"""``tellwave learn`` on a store made by diagnosing simulated readings (engine.simulation, seeded) with
findings recorded against them: the counts are what the stored firings and findings say, the overlay
loads and a diagnosis made with it shows the site's record in its trail, and every bad input is one
line, a non-zero exit and nothing written."""

from __future__ import annotations

import json
import shutil
from collections import defaultdict

import jsonschema
import pytest

from engine.cli import main
from engine.common.yamlfile import load_schema
from engine.history.store import Store
from engine.machine import load_machine
from engine.reasoning import load_rulebook
from engine.simulation import simulate, write_simulation

from support import CASES, HtmlChecker, one_error_line

PUMP = CASES / "machines" / "rw2-raw-water-pump.yaml"
NAME = "RW-2 raw water pump"
# (fault simulated, its component, seed, when taken); invented readings for the arithmetic only
READINGS = [("unbalance", "motor", 1, "2026-01-10T08:00"), ("outer-race", "motor_nde", 2, "2026-02-10T08:00"),
            ("unbalance", "motor", 3, "2026-03-10T08:00"), ("unbalance", "pump", 4, "2026-04-10T08:00")]
# what was found at repair against readings 1 to 4 (reading 4's unbalance was on the pump, found nothing)
FOUND = [(1, "motor", "unbalance"), (2, "motor_nde", "outer-race"), (3, "motor", "nothing-found"),
         (4, "pump", "nothing-found")]
SENTENCE = "at this site this rule was confirmed"


@pytest.fixture(scope="module")
def made(tmp_path_factory):
    """A folder with the machine, four diagnosed readings in a store, findings against each, and a site
    overlay that lowers the least evidence to one finding (so that four repairs teach something)."""
    folder = tmp_path_factory.mktemp("learn")
    machine = load_machine(PUMP)
    for i, (fault, component, seed, _) in enumerate(READINGS, start=1):
        sim = simulate(machine, fault, component, 3, fs_hz=12800.0, duration_s=1.0, seed=seed)
        write_simulation(sim, folder / f"r{i}.npz")
    for i, (*_, when) in enumerate(READINGS, start=1):
        assert main(["diagnose", str(folder / f"r{i}.npz"), "--machine", str(PUMP), "--store",
                     str(folder / "h.sqlite"), "--taken-at", when, "--format", "json",
                     "-o", str(folder / f"r{i}.json")]) == 0
    for reading, component, fault in FOUND:
        assert main(["findings", "add", "--reading", str(reading), "--date", "2026-05-01", "--component", component,
                     "--fault", fault, "--store", str(folder / "h.sqlite")]) == 0
    site = folder / "site"
    site.mkdir()
    (site / "few.yaml").write_text("rulebook: a site that learns from few repairs\n"
                                   "parameters: {learning_least_findings: 1}\n", encoding="utf-8")
    return folder


@pytest.fixture
def work(made, tmp_path):
    """A copy of the made folder, so a test may write in it."""
    folder = tmp_path / "w"
    shutil.copytree(made, folder)
    return folder


def _learn_json(capsys, *argv) -> dict:
    assert main(["learn", *map(str, argv), "--format", "json"]) == 0
    return json.loads(capsys.readouterr().out)


def _by_hand(store) -> tuple[dict, dict]:
    """n and k per rule counted straight from the stored rows: a rule counts once per judged reading and
    hypothesis it supports (certainty > 0); confirmed when a finding names that fault on that component."""
    with Store(store, create=False) as s:
        firings = s.db.execute("SELECT reading_id, rule_id, fault, component FROM firings"
                               " WHERE certainty > 0").fetchall()
        found = {(r[0], r[1], r[2]) for r in s.db.execute("SELECT reading_id, component, fault FROM findings")}
    judged = {reading for reading, _, _ in found}
    n: dict[str, int] = defaultdict(int)
    k: dict[str, int] = defaultdict(int)
    for reading, rule, fault, component in {tuple(f) for f in firings}:
        if reading in judged:
            n[rule] += 1
            k[rule] += (reading, component, fault) in found
    return dict(n), dict(k)


def test_the_counts_are_what_the_stored_firings_and_findings_say(made, capsys):
    doc = _learn_json(capsys, "--store", made / "h.sqlite")
    n, k = _by_hand(made / "h.sqlite")
    assert n, "the simulated faults fired no rule"
    assert {r["rule"]: (r["n"], r["k"]) for r in doc["rules"]} == {rule: (n[rule], k[rule]) for rule in n}
    counts = (doc["findings"], doc["judged_readings"], doc["counted_readings"], doc["stored_before_firings"])
    assert counts == (4, 4, 4, 0)
    # the envelope rule fired on the outer-race reading, where the outer race was found (bearings.yaml)
    envelope = next(r for r in doc["rules"] if r["rule"] == "bearing.defect.envelope")
    assert envelope["k"] >= 1
    # Wilson 95 % of k of n (Wilson 1927; scipy.stats.binomtest(k, n).proportion_ci(method="wilson") as reference)
    from scipy.stats import binomtest

    for r in doc["rules"]:
        ci = binomtest(r["k"], r["n"]).proportion_ci(confidence_level=0.95, method="wilson")
        assert (r["low"], r["high"]) == pytest.approx((ci.low, ci.high), abs=1e-4)
    # a rule counts once per reading and hypothesis (unbalance on the motor and on the pump are two), so n
    # may pass the four readings; below the shipped least evidence (5) a rule is too little evidence
    few = {r["rule"] for r in doc["rules"] if r["n"] < 5 and r["outcome"] != "not learned"}
    assert few and set(doc["proposal"]["too_little"]) == few
    assert all(c["n"] >= 5 for c in doc["proposal"]["changes"])
    assert doc["settings"] == {"prior_findings": 20, "move_cap": 0.3, "least_findings": 5, "lowest_weight": 0.05,
                               "bin_width": 0.2}
    jsonschema.validate(doc, load_schema("learning.schema.json"))


def test_the_reliability_table_counts_each_judged_top_hypothesis_once(made, capsys):
    doc = _learn_json(capsys, "--store", made / "h.sqlite")
    table = doc["reliability"]
    assert sum(b["count"] for b in table["bins"]) == table["judged"] == 4 - table["without_hypothesis"]
    assert 0 <= table["brier"] <= 1


def test_an_overlay_learned_at_the_site_loads_and_its_record_shows_in_every_format(work, capsys):
    site, learned = work / "site", work / "learned"
    learned.mkdir()
    assert main(["learn", "--store", str(work / "h.sqlite"), "--site", str(site), "--overlay",
                 str(learned / "learned.yaml"), "-o", str(work / "learning.md"), "--format", "md"]) == 0
    capsys.readouterr()
    assert (work / "learning.md").read_text(encoding="utf-8").startswith("# What was found at repair")
    book = load_rulebook(site, learned)
    n, k = _by_hand(work / "h.sqlite")
    recorded = {r.id: r.site_record for r in book.rules if r.site_record is not None}
    assert recorded, "least evidence 1: every learned rule carries its record"
    assert all(recorded[rule] == (k[rule], n[rule]) for rule in recorded)
    # the next reading, diagnosed with the learned overlay, says so beside the rule in its trail
    argv = ["diagnose", str(work / "r1.npz"), "--machine", str(PUMP), "--site", str(site), "--site", str(learned)]
    for fmt in ("text", "md", "html", "json"):
        assert main(argv + ["--format", fmt, "-o", str(work / f"next.{fmt}")]) == 0
        text = (work / f"next.{fmt}").read_text(encoding="utf-8")
        assert SENTENCE in text, fmt
    doc = json.loads((work / "next.json").read_text(encoding="utf-8"))
    shown = [f for h in doc["hypotheses"] for f in h["support"] + h["against"] if "site_record" in f]
    assert shown and all(f["site_record"]["confirmed"] == k[f["rule"]] and f["site_record"]["judged"] == n[f["rule"]]
                         for f in shown)
    jsonschema.validate(doc, load_schema("report.schema.json"))
    # the answer says, in one line, when a listed hypothesis rests on weights learned from the site's record
    learned_support = sorted({f["rule"] for h in doc["hypotheses"] for f in h["support"] if "site_record" in f})
    if learned_support:
        line = doc["verdict"]["site_record"]
        assert line.startswith("weights learned from this site's findings at repair were applied")
        assert all(f"{rule} confirmed {k[rule]} of {n[rule]}" in line for rule in learned_support)
        assert line in (work / "next.text").read_text(encoding="utf-8")
    else:
        assert doc["verdict"]["site_record"] is None
    # learning again over the learned overlay would count the same findings twice: refused, nothing written
    err = one_error_line(capsys, 2, ["learn", "--store", work / "h.sqlite", "--site", site, "--site", learned,
                                     "--overlay", work / "again.yaml"])
    assert "learned before" in err and "learned.yaml" in err and not (work / "again.yaml").exists()


def test_every_format_renders_and_html_draws_the_diagram(made, tmp_path, capsys):
    for fmt in ("text", "md"):
        assert main(["learn", "--store", str(made / "h.sqlite"), "--format", fmt]) == 0
        out = capsys.readouterr().out
        assert "Brier score" in out and "bearing.defect.envelope" in out
    assert main(["learn", NAME, "--store", str(made / "h.sqlite"), "--format", "html",
                 "-o", str(tmp_path / "l.html")]) == 0
    html = (tmp_path / "l.html").read_text(encoding="utf-8")
    assert "<svg" in html and "Certainty against what was found at repair" in html
    checker = HtmlChecker()
    checker.feed(html)
    assert checker.errors == [] and checker.stack == [] and checker.links == []


def test_readings_stored_before_firings_were_kept_are_counted_and_named(work, capsys):
    with Store(work / "h.sqlite") as s:
        s.db.execute("UPDATE readings SET firings_kept = NULL WHERE id = 3")
        s.db.execute("DELETE FROM firings WHERE reading_id = 3")
    doc = _learn_json(capsys, "--store", work / "h.sqlite")
    assert (doc["judged_readings"], doc["counted_readings"], doc["stored_before_firings"]) == (4, 3, 1)
    assert main(["learn", "--store", str(work / "h.sqlite")]) == 0
    assert ("1 judged readings were stored before firings were kept: diagnose them again to count them"
            in capsys.readouterr().out)


def test_a_store_without_findings_says_how_to_record_them(work, capsys):
    with Store(work / "h.sqlite") as s:
        s.db.execute("DELETE FROM findings")
    assert main(["learn", "--store", str(work / "h.sqlite"), "--overlay", str(work / "o.yaml")]) == 0
    out = capsys.readouterr().out
    assert out.count("\n") == 1 and "holds no finding" in out and "tellwave findings add" in out
    assert not (work / "o.yaml").exists()


def test_findings_list_json_follows_its_schema(made, capsys):
    assert main(["findings", "list", "--store", str(made / "h.sqlite"), "--json"]) == 0
    rows = json.loads(capsys.readouterr().out)
    assert len(rows) == 4
    jsonschema.validate(rows, load_schema("findings-list.schema.json"))


# ---------------------------------------------------------------- bad input: one line, non-zero, nothing written

def _unchanged(folder):
    return {p.relative_to(folder): p.read_bytes() for p in folder.rglob("*") if p.is_file()}


def test_an_unknown_machine_is_one_line(work, capsys):
    before = _unchanged(work)
    err = one_error_line(capsys, 2, ["learn", "no such pump", "--store", work / "h.sqlite",
                                     "--overlay", work / "o.yaml"])
    assert "no stored reading of 'no such pump'" in err and NAME in err
    assert _unchanged(work) == before


def test_a_missing_store_is_one_line_and_none_is_made(tmp_path, capsys):
    err = one_error_line(capsys, 8, ["learn", "--store", tmp_path / "none.sqlite"])
    assert "no history store there" in err and not (tmp_path / "none.sqlite").exists()


def test_a_site_folder_with_no_rulebook_is_not_an_overlay(work, capsys):
    (work / "empty").mkdir()
    err = one_error_line(capsys, 2, ["learn", "--store", work / "h.sqlite", "--site", work / "empty"])
    assert "not a site overlay" in err


def test_a_site_folder_of_other_yaml_is_not_an_overlay(work, capsys):
    machines = work / "machines"
    machines.mkdir()
    shutil.copy(PUMP, machines / "pump.yaml")
    before = _unchanged(work)
    err = one_error_line(capsys, 5, ["learn", "--store", work / "h.sqlite", "--site", machines,
                                     "--overlay", work / "o.yaml"])
    assert "pump.yaml" in err
    assert _unchanged(work) == before


@pytest.mark.parametrize("target", ["h.sqlite", "h.sqlite-wal", "site/few.yaml"])
def test_the_overlay_never_goes_over_an_input(work, target, capsys):
    before = _unchanged(work)
    err = one_error_line(capsys, 2, ["learn", "--store", work / "h.sqlite", "--site", work / "site",
                                     "--overlay", work / target])
    assert "input of this run" in err
    assert _unchanged(work) == before


def test_the_overlay_never_goes_into_the_shipped_rulebooks(work, capsys):
    from engine.common.paths import RULEBOOKS

    err = one_error_line(capsys, 2, ["learn", "--store", work / "h.sqlite", "--overlay", RULEBOOKS / "learned.yaml"])
    assert "shipped rulebooks folder" in err and not (RULEBOOKS / "learned.yaml").exists()


def test_the_overlay_and_the_report_are_two_files(work, capsys):
    err = one_error_line(capsys, 2, ["learn", "--store", work / "h.sqlite", "-o", work / "x.txt",
                                     "--overlay", work / "x.txt"])
    assert "report's file" in err and not (work / "x.txt").exists()


def test_a_site_setting_that_makes_no_sense_names_the_parameter(work, capsys):
    (work / "site" / "few.yaml").write_text("rulebook: odd\nparameters: {learning_move_cap: 2}\n", encoding="utf-8")
    err = one_error_line(capsys, 5, ["learn", "--store", work / "h.sqlite", "--site", work / "site"])
    assert "learning_move_cap" in err and "few.yaml" in err


def test_learning_without_the_site_overlay_the_diagnoses_used_says_so(work, capsys):
    with Store(work / "h.sqlite") as s:
        s.db.execute("UPDATE firings SET rule_id = 'site.pump.own-rule' WHERE rule_id = 'bearing.defect.envelope'")
    assert main(["learn", "--store", str(work / "h.sqlite")]) == 0
    out = capsys.readouterr().out
    assert "rule(s) the diagnoses used are not in the rulebooks loaded (site.pump.own-rule)" in out
    assert "learning ran on the shipped rulebooks alone; pass --site" in out


def test_json_without_findings_is_still_json(work, capsys):
    """A program reading --format json gets the empty document (it follows the schema), the sentence on
    stderr, and no overlay (bench.fuzz found the sentence alone on stdout)."""
    with Store(work / "h.sqlite") as s:
        s.db.execute("DELETE FROM findings")
    assert main(["learn", "--store", str(work / "h.sqlite"), "--format", "json", "--overlay",
                 str(work / "o.yaml")]) == 0
    out, err = capsys.readouterr()
    doc = json.loads(out)
    jsonschema.validate(doc, load_schema("learning.schema.json"))
    assert doc["findings"] == 0 and "holds no finding" in err
    assert not (work / "o.yaml").exists()
