"""Issue 13, report defects an analyst found: one test (or a few) per defect, named by its number.

The diagnoses are of simulated readings of the invented Tallow Ridge Water
Works, made from the demo cases' recipes, so each test reads a report as an
analyst would.
"""

from __future__ import annotations

import functools
import json
import re

import jsonschema
import pytest

from engine.pipeline.cases import load_case, simulation_of
from engine.cli import main
from engine.machine import load_machine
from engine.pipeline import diagnose, document_of
from engine.reasoning import Reasoner, load_rulebook
from engine.report import render
from engine.simulation import as_reading, simulate, write_simulation
from engine.common.yamlfile import load_schema

from support import CASES, ROOT

FORMATS = ("text", "md", "html")
MADE_AT = "2026-03-04T10:15+01:00"


@functools.lru_cache(maxsize=None)
def reasoner(*site):
    return Reasoner(load_rulebook(*site))


@functools.lru_cache(maxsize=None)
def case_diagnosis(name: str, *site):
    """The diagnosis of demo case ``name`` (cases/demo/NAME.case.yaml), read from memory."""
    case = load_case(CASES / "demo" / f"{name}.case.yaml")
    machine = load_machine(case.machine)
    return diagnose(as_reading(simulation_of(case, machine), f"{name}.wav"), machine, reasoner(*site),
                    plots=True)


def doc_of(name: str, *site) -> dict:
    return document_of(case_diagnosis(name, *site), made_at=MADE_AT)


# ---------------------------------------------------------------- 1. the count in the answer


def test_1_the_answer_counts_the_hypotheses_listed_below_it():
    doc = doc_of("rw2-pump-nde-outer-race")
    listed = doc["hypotheses"]
    assert len(listed) >= 2, "the case lists more than its leading hypothesis"
    below = len(listed) - 1
    noun = "hypothesis" if below == 1 else "hypotheses"
    assert f"({below} more {noun} below)" in doc["verdict"]["summary"]
    for fmt in FORMATS:
        out = render(doc, fmt)
        assert f"{below} more {noun} below" in out, fmt


def test_1_no_count_when_nothing_else_is_listed():
    doc = doc_of("rw2-impeller-unbalance")
    if len(doc["hypotheses"]) == 1:
        assert "more" not in doc["verdict"]["summary"]
    else:
        assert f"({len(doc['hypotheses']) - 1} more" in doc["verdict"]["summary"]


# ---------------------------------------------------------------- 2. dates


def test_2_the_report_says_when_it_was_made_local_time_with_offset_to_the_minute():
    doc = document_of(case_diagnosis("rw2-pump-nde-outer-race"))       # no time given: now
    assert re.fullmatch(r"\d{4}-\d{2}-\d{2}T\d{2}:\d{2}[+-]\d{2}:\d{2}", doc["made_at"]), doc["made_at"]
    jsonschema.Draft202012Validator(load_schema("report.schema.json")).validate(json.loads(render(doc, "json")))
    fixed = doc_of("rw2-pump-nde-outer-race")
    assert fixed["made_at"] == MADE_AT
    for fmt in FORMATS:
        assert MADE_AT in render(fixed, fmt), fmt


def _stamped_wav(tmp_path, taken: str | None):
    machine = load_machine(CASES / "machines/rw2-raw-water-pump.yaml")
    case = load_case(CASES / "demo/rw2-impeller-unbalance.case.yaml")
    return write_simulation(simulation_of(case, machine), tmp_path / "rw2.wav", timestamp=taken)[0]


def test_2_the_header_shows_when_the_reading_was_taken_from_its_sidecar(tmp_path, capsys):
    wav = _stamped_wav(tmp_path, "2026-03-02T08:34:00")
    assert "timestamp: '2026-03-02T08:34:00'" in (tmp_path / "rw2.wav.yaml").read_text()
    rw2 = CASES / "machines/rw2-raw-water-pump.yaml"
    assert main(["diagnose", str(wav), "--machine", str(rw2), "--format", "json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["reading"]["timestamp"] == "2026-03-02T08:34:00" and doc["reading"]["time_from"] == "file"
    for fmt in FORMATS:
        out = render(doc, fmt)
        header = out[:out.find("Answer") if fmt != "text" else out.find("ANSWER")]
        assert "2026-03-02T08:34" in header and doc["made_at"] in header, fmt


def test_2_taken_at_on_the_command_line_reaches_the_report(tmp_path, capsys):
    wav = _stamped_wav(tmp_path, None)
    rw2 = CASES / "machines/rw2-raw-water-pump.yaml"
    assert main(["diagnose", str(wav), "--machine", str(rw2), "--format", "json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["reading"]["timestamp"] is None and "not stated" in doc["reading"]["taken"]
    assert main(["diagnose", str(wav), "--machine", str(rw2), "--format", "json",
                 "--taken-at", "2026-03-02T08:34"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["reading"]["timestamp"] == "2026-03-02T08:34:00" and doc["reading"]["time_from"] == "command line"
    assert main(["diagnose", str(wav), "--machine", str(rw2), "--taken-at", "yesterday"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("tellwave: error:") and err.count("\n") == 1 and "--taken-at" in err


def test_2_a_combined_reading_keeps_the_time_of_whichever_file_states_one(tmp_path):
    from engine.readings import combine_readings, load_reading
    from engine.simulation import simulate

    machine = load_machine(CASES / "machines/rw2-raw-water-pump.yaml")
    one = write_simulation(simulate(machine, "healthy", None, 2, None, 12800.0, 2.0, 1, points=["P1H"]),
                           tmp_path / "p1h.wav")[0]
    two = write_simulation(simulate(machine, "healthy", None, 2, None, 12800.0, 2.0, 1, points=["P1A"]),
                           tmp_path / "p1a.wav", timestamp="2026-03-02T08:40:00")[0]
    assert combine_readings([load_reading(one), load_reading(two)]).timestamp == "2026-03-02T08:40:00"


def test_2_a_route_time_reaches_the_report_and_every_report_of_a_run_shares_its_time(tmp_path):
    from engine.history.store import Store
    from engine.route import load_route, run_route

    wav = _stamped_wav(tmp_path, None)
    route = tmp_path / "route.yaml"
    route.write_text(f"route: March survey\nmachines: {{rw2: {CASES / 'machines/rw2-raw-water-pump.yaml'}}}\n"
                     f"readings:\n  - {{file: {wav.name}, machine: rw2, time: '2026-03-02T08:50:00'}}\n")
    with Store(tmp_path / "h.sqlite") as store:
        run_route(load_route(route), store, tmp_path / "out", workers=1, fmt="json", made_at=MADE_AT)
    doc = json.loads(next((tmp_path / "out").rglob("*.json")).read_text())
    assert doc["reading"]["timestamp"] == "2026-03-02T08:50:00" and doc["reading"]["time_from"] == "route"
    assert doc["made_at"] == MADE_AT


# ---------------------------------------------------------------- 3. no sentence about a missing trend


NO_TREND = re.compile(r"no trend|earlier readings|no earlier", re.IGNORECASE)


def test_3_a_report_without_history_says_nothing_about_a_trend():
    doc = doc_of("rw2-impeller-unbalance")
    assert "trend" not in doc
    for fmt in FORMATS:
        assert not NO_TREND.search(render(doc, fmt)), fmt
    for template in (ROOT / "templates" / "diagnosis").glob("report.*.j2"):
        assert not NO_TREND.search(template.read_text()), template.name


def test_3_a_report_with_history_keeps_its_trend_section():
    doc = dict(doc_of("rw2-impeller-unbalance"))
    doc["trend"] = {"machine": "RW-2", "points": [
        {"point": "P1H", "readings": 3, "first": "2026-01-12T08:30:00", "plots": [],
         "iso_change": {"baseline_mm_s": 1.1, "latest_mm_s": 2.3, "significant": True, "criterion_mm_s": 0.7},
         "projections": []}]}
    for fmt in FORMATS:
        out = render(doc, fmt)
        assert "3 readings since 2026-01-12" in out and "criterion II" in out, fmt


# ---------------------------------------------------------------- 4. rulebook files named relative to their folder


ORIGIN = re.compile(r"^(site\d*/)?[\w.-]+\.ya?ml(:\d+)?$")


def _origins(doc: dict) -> list[str]:
    firings = [f for h in doc["hypotheses"] for f in h["support"] + h["against"]] + doc["chain"]
    firings += [f for p in doc["reading_problems"] for f in p["support"]]
    return [f["origin"] for f in firings] + [o for f in firings for o in f["overrides"]] + doc["rulebooks"]


def test_4_shipped_rules_are_named_by_file_and_line_in_their_folder_never_by_install_path():
    doc = doc_of("rw2-pump-nde-outer-race")
    origins = _origins(doc)
    assert origins and all(ORIGIN.match(o) for o in origins), [o for o in origins if not ORIGIN.match(o)]
    assert "bearings.yaml" in doc["rulebooks"]
    envelope = next(f for f in doc["hypotheses"][0]["support"] if f["rule"] == "bearing.defect.envelope")
    line = envelope["origin"].split(":")[1]
    text = (ROOT / "rulebooks/bearings.yaml").read_text().splitlines()[int(line) - 1]
    assert "bearing.defect.envelope" in text, "the line is the rule's own"
    install = str(ROOT)
    for fmt in ("text", "md", "html", "json"):       # the user's own files may be named as given
        out = render(doc, fmt).replace(doc["reading"]["source"], "").replace(str(doc["machine"]["file"]), "")
        assert install not in out, fmt


def test_4_site_overlay_rules_are_named_site_slash_file(tmp_path):
    site = CASES / "site"
    doc = doc_of("ct1-bevel-tooth", str(site))
    assert "site/tallow-ridge.yaml" in doc["rulebooks"]
    assert all(ORIGIN.match(o) for o in _origins(doc))
    book = load_rulebook(site)
    rule = book.rule("shaft.unbalance.radial-1x")
    assert re.fullmatch(r"site/tallow-ridge\.yaml:\d+", rule.origin) and rule.replaced == ("shaft.yaml",)
    assert book.disabled["electrical.stator.at-motor"][1] == "site/tallow-ridge.yaml"
    # a file given directly, and a second overlay of the same name
    other = tmp_path / "more"
    other.mkdir()
    (other / "tallow-ridge.yaml").write_text("rulebook: more\nrules: []\n")
    book = load_rulebook(site / "tallow-ridge.yaml", other)
    assert book.files[-2:] == ("site/tallow-ridge.yaml", "site2/tallow-ridge.yaml")


def test_4_rulebook_explain_names_the_file_and_where_an_overlay_lies(capsys):
    assert main(["rulebook", "explain", "shaft.unbalance.radial-1x", "--site", str(CASES / "site")]) == 0
    out = capsys.readouterr().out
    assert re.search(r"from site/tallow-ridge\.yaml:\d+ \(site overlay .*cases/site/tallow-ridge\.yaml; "
                     r"overrides the rule in shaft\.yaml\)", out), out


# ---------------------------------------------------------------- 5. quality issues in words


def test_5_quality_issues_read_in_words_the_same_as_tellwave_reading_says_them(tmp_path, capsys):
    case = load_case(CASES / "demo/bw1-clipped-recording.case.yaml")
    machine = load_machine(case.machine)
    wav = write_simulation(simulation_of(case, machine), tmp_path / "bw1.wav")[0]
    assert main(["reading", str(wav)]) == 0
    said = [line.strip().removeprefix("quality: ") for line in capsys.readouterr().out.splitlines()
            if line.strip().startswith("quality:")]
    assert any(s.startswith("clipping: ") for s in said), said
    assert main(["diagnose", str(wav), "--machine", str(case.machine), "--format", "json"]) == 7
    doc = json.loads(capsys.readouterr().out)
    assert doc["data_quality"] and sorted(q["words"] for q in doc["data_quality"]) == sorted(said)
    raw = re.compile(r"\b(clipping|dc_offset|drift|dropout|implausible_\w+) \([-\d.e]+\)")
    for fmt in FORMATS:
        out = render(doc, fmt)
        assert not raw.search(out), (fmt, raw.search(out).group())
        for q in doc["data_quality"]:
            words = q["words"] if fmt != "html" else q["words"].replace("'", "&#39;")
            assert words in out.replace("\\", ""), (fmt, words)


# ---------------------------------------------------------------- 6. sources name a publication or say "common practice"


def _sources(data, parent=None):
    """(where, text) of every provenance ``source`` (and ``sources`` entry); a ``source`` inside a
    rule's ``where`` is a fact's field, not a provenance."""
    if isinstance(data, dict):
        for key, value in data.items():
            if key == "source" and parent != "where" and isinstance(value, str):
                yield key, value
            elif key == "sources" and isinstance(value, dict):
                yield from ((f"sources.{k}", v) for k, v in value.items())
            else:
                yield from _sources(value, key)
    elif isinstance(data, list):
        for value in data:
            yield from _sources(value, parent)


SHIPPED_YAML = sorted((ROOT / "rulebooks").rglob("*.yaml"))
# a publication: an author and year, a standard's number; else the trade's common practice
PUBLISHED = re.compile(r"common practice|\b(?:1[89]|20)\d\d\b|\b(?:ISO|IEC|ASTM|IEEE) ?[A-Z]?\d")


@pytest.mark.parametrize("path", SHIPPED_YAML, ids=lambda p: p.relative_to(ROOT / "rulebooks").as_posix())
def test_6_no_shipped_source_says_from_memory(path):
    import yaml

    found = list(_sources(yaml.safe_load(path.read_text())))
    assert all("memory" not in text.lower() for _, text in found), \
        [where for where, text in found if "memory" in text.lower()]


def test_6_every_source_a_report_or_rulebook_explain_shows_names_a_publication_or_common_practice():
    from engine.advice import load_advice
    from engine.planner.policy import load_policy

    book = load_rulebook()
    shown = [(r.id, r.source) for r in book.rules] + [(f"param.{p.name}", p.source) for p in book.parameters.values()]
    advice = load_advice()
    shown += [(f"oil test {k}", t["source"]) for k, t in advice["oil_tests"].items()]
    shown += [("ISO 20816-3 table", advice["iso_20816_3"]["source"])]
    policy = load_policy()      # the keys whose source the plan's reasons quote (engine/planner/propose.py)
    shown += [(f"policy {k}", policy.source_of(k)) for k in ("sample_rate_per_fmax", "window", "averages")]
    bad = [(what, " ".join(text.split())) for what, text in shown if not PUBLISHED.search(" ".join(text.split()))]
    assert not bad, bad


# ---------------------------------------------------------------- 7. printing, and the oil analysis once per machine


def test_7_the_oil_analysis_is_one_table_per_machine_in_the_document():
    # an oil-lubricated gearbox with two faults at once: a chipped pinion tooth and a spalled output bearing
    case = load_case(CASES / "demo" / "ct1-bevel-tooth.case.yaml")
    machine = load_machine(case.machine)
    sim = simulate(machine, "gear-tooth", "bevel_stage", 3, seed=15, also=(("outer-race", "output_lower", 3),))
    doc = document_of(diagnose(as_reading(sim, "ct1-two-faults.wav"), machine, reasoner()), made_at=MADE_AT)
    assert {h["family"] for h in doc["hypotheses"] if h["certainty"] >= 0.5} == {"gear", "bearing"}
    assert all("oil_tests" not in h for h in doc["hypotheses"])
    tests = [t["test"] for t in doc["oil_analysis"]]
    assert tests and len(tests) == len(set(tests)), "each test once"
    debris = next(t for t in doc["oil_analysis"] if t["test"].startswith("ferrous wear debris"))
    served = [name for r in debris["reads"] for name in r["for"]]
    assert len(debris["reads"]) == 2 and len(served) == len(set(served)) >= 2   # gear and bearing, each once
    for fmt in FORMATS:
        out = render(doc, fmt)
        assert len(re.findall("oil analysis to request", out, re.IGNORECASE)) == 1, fmt
        assert out.count(debris["test"]) == 1, fmt
    jsonschema.Draft202012Validator(load_schema("report.schema.json")).validate(json.loads(render(doc, "json")))


# ---------------------------------------------------------------- 8. notation


def test_8_certainty_is_a_percentage_in_every_report_and_in_the_demo_index(tmp_path):
    from engine.demo import run_demo

    doc = doc_of("rw2-pump-nde-outer-race")
    for fmt in FORMATS:
        out = render(doc, fmt)
        assert re.search(r"[+-]\d+ %", out), f"{fmt}: the trail's contributions in percent"
        assert not re.search(r"(?<![\w.])[+-][01]\.\d\d\b(?! ?%)", out), f"{fmt}: a certainty factor as a fraction"
    cases = tmp_path / "cases"
    cases.mkdir()
    text = (CASES / "demo/rw2-pump-nde-outer-race.case.yaml").read_text()
    (cases / "one.case.yaml").write_text(text.replace("../machines/", str(CASES / "machines") + "/"))
    run_demo(tmp_path / "out", reasoner(), cases_dir=cases, progress=lambda *_: None)
    index = (tmp_path / "out/index.html").read_text()
    assert re.search(r"outer-race on pump_nde \(\d+ %\)", index) and not re.search(r"\(0\.\d+\)", index)


def test_8_resolution_and_snr_carry_their_words_and_units(tmp_path, capsys):
    doc = doc_of("rw2-pump-nde-outer-race")
    for fmt in FORMATS:
        out = render(doc, fmt)
        assert re.search(r"\d+ lines, resolution 0\.25 Hz", out) and "lines of" not in out, fmt
    wav = write_simulation(simulation_of(load_case(CASES / "demo/rw2-impeller-unbalance.case.yaml"),
                                         load_machine(CASES / "machines/rw2-raw-water-pump.yaml")),
                           tmp_path / "rw2.wav")[0]
    assert main(["reading", str(wav), "--peaks", "3"]) == 0
    out = capsys.readouterr().out
    assert "(Hann window, resolution 0.25 Hz)" in out and "Hz lines" not in out
    snr = re.findall(r"\(SNR ([^)]*)\)", out)
    assert snr and all(re.fullmatch(r"\d+ dB", s) for s in snr), snr


OLD_NOTATION = re.compile(r"DL\^2|DL²|\bum\(c\)|\b40 C\b|Hz per line|Hz lines\b|lines of \{\{|\(SNR \{p\.snr")


def test_8_no_old_notation_is_left_in_what_users_read():
    files = [*(ROOT / "templates").rglob("*.j2"), *(ROOT / "rulebooks").rglob("*.yaml"),
             *(ROOT / "engine").rglob("*.py")]
    found = [f"{f.relative_to(ROOT)}: {m.group()}" for f in files for m in OLD_NOTATION.finditer(f.read_text())]
    assert not found, found


def _style(html: str) -> str:
    return html[html.index("<style>"):html.index("</style>")]


def _rule(style: str, selector_part: str) -> str:
    """The declarations of the first rule whose selector list holds ``selector_part``."""
    m = re.search(r"([^{}]*" + re.escape(selector_part) + r"[^{}]*)\{([^{}]*)\}", style)
    assert m, selector_part
    return m.group(2)


def test_7_print_style_keeps_headings_with_their_text_and_the_safety_box_whole():
    doc = doc_of("ct1-bevel-tooth")
    html = render(doc, "html")
    style = _style(html)
    page = style[style.index("@page"):]
    assert re.search(r"size:\s*letter", page)
    assert "@top-left" in page and '"CT-1 cooling tower fan' in page       # the machine on every page
    assert "counter(page)" in page and "counter(pages)" in page
    assert "reading taken 2026" in page or "reading taken at a time not stated" in page
    printing = style[style.index("@media print"):]
    assert "break-after: avoid" in _rule(printing, "h2")
    assert "break-inside: avoid" in _rule(printing, ".cautions")
    assert 'id="safety" class="cautions"' in html
    assert "print-color-adjust: exact" in _rule(style, ".cautions")


def test_7_a_machine_name_cannot_break_out_of_the_print_style():
    doc = json.loads(json.dumps(doc_of("rw2-impeller-unbalance")))
    doc["machine"]["name"] = 'P-1"; } body { display: none } </style><script>alert(1)</script>'
    html = render(doc, "html")
    style = _style(html)
    assert "<script>" not in html and "</style><" not in html
    header = re.search(r"@top-left \{ content: (\"[^\"]*\");", style)      # one CSS string, quotes escaped
    assert header and "\\22 " in header.group(1) and "\\3c /style\\3e " in header.group(1)
    plain = _style(render(doc_of("rw2-impeller-unbalance"), "html"))
    plain_header = re.search(r"@top-left \{ content: (\"[^\"]*\");", plain).group(1)
    assert style.replace(header.group(1), "").count("{") == plain.replace(plain_header, "").count("{"), \
        "the name adds no rule to the style sheet"


def test_7_headless_chromium_prints_the_report_on_letter_pages(tmp_path):
    import shutil
    import subprocess

    browser = shutil.which("chromium") or shutil.which("chromium-browser")
    if browser is None:
        pytest.skip("no chromium on this machine (.ci/run installs the Debian package)")
    page = tmp_path / "report.html"
    page.write_text(render(doc_of("ct1-bevel-tooth"), "html"))
    pdf = tmp_path / "report.pdf"
    subprocess.run([browser, "--headless", "--no-sandbox", "--disable-gpu", "--no-first-run",
                    "--disable-background-networking", "--disable-component-update", "--disable-sync",
                    f"--user-data-dir={tmp_path / 'profile'}", "--no-pdf-header-footer",
                    f"--print-to-pdf={pdf}", page.as_uri()], check=True, capture_output=True, timeout=120)
    data = pdf.read_bytes()
    assert data.startswith(b"%PDF")
    pages = re.findall(rb"/Type\s*/Page\b", data)
    boxes = set(re.findall(rb"/MediaBox\s*\[\s*0 0 (\d+(?:\.\d+)?) (\d+(?:\.\d+)?)\s*\]", data))
    assert len(pages) >= 3, "the gearbox report runs over several pages"
    assert boxes == {(b"612", b"792")}, boxes                     # US Letter, 8.5 x 11 in at 72 pt/in


# ---------------------------------------------------------------- 9. what the browser check found


def test_9_the_envelope_plot_marks_solid_only_families_whose_fundamental_was_found():
    from engine.report.plots import _matched_harmonics, shown

    d = case_diagnosis("rw2-pump-nde-outer-race")
    labels = [m.label for m in _matched_harmonics(d.evidence, shown(d.plots, d.reasoning, d.evidence, d.machine))]
    assert labels == ["BPFO", "2xBPFO", "3xBPFO", "4xBPFO", "5xBPFO"], labels   # no BPFI or 2xBSF without a line
    gear = case_diagnosis("ct1-bevel-tooth")         # a gear's plot shows several bearings: each names its own
    labels = [m.label for m in _matched_harmonics(gear.evidence, shown(gear.plots, gear.reasoning, gear.evidence,
                                                                        gear.machine))]
    fundamentals = [x for x in labels if not x[0].isdigit() or x.startswith("2xBSF")]
    assert fundamentals and all(" " in x for x in fundamentals), labels
    assert not any("x2xBSF" in x for x in labels), labels


def test_9_a_reason_a_fault_may_be_missed_says_its_rates_once():
    doc = doc_of("bw1-clipped-recording")
    twins = [r for v in doc["reach"] for r in v["reasons"] if "lies within" in r]
    assert twins, "the blower's BPFO and 2 x BSF lie within slip of each other"
    for reason in twins:
        head = reason.split(":")[0]
        assert reason.count(head) == 1, reason
