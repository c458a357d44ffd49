"""`tellwave diagnose` end to end: the four report formats, the demo, bad input (severity and urgency: tests/advice)."""

from __future__ import annotations

import json
import shutil
import subprocess

import jsonschema
import numpy as np
import pytest

from engine.cli import main
from engine.common.yamlfile import load_schema
from engine.machine import load_machine
from engine.pipeline import diagnose, document_of
from engine.reasoning import Reasoner, load_rulebook
from engine.report import render
from engine.simulation import as_reading, simulate, write_simulation

from support import ROOT, HtmlChecker

RW2 = ROOT / "cases/machines/rw2-raw-water-pump.yaml"
CT1 = ROOT / "cases/machines/ct1-cooling-tower-fan.yaml"


@pytest.fixture(scope="module")
def reasoner():
    return Reasoner(load_rulebook())


@pytest.fixture(scope="module")
def bearing_doc(reasoner):
    m = load_machine(RW2)
    sim = simulate(m, "inner-race", "pump_de", 3, None, 12800.0, 3.0, 4)
    return document_of(diagnose(as_reading(sim, "rw2-test.wav"), m, reasoner, plots=True))


# ---------------------------------------------------------------- report content


def test_report_leads_with_the_answer_in_every_format(bearing_doc):
    top = bearing_doc["hypotheses"][0]
    assert top["fault"] == "inner-race" and top["component"] == "pump_de"
    assert top["stage"] is not None and top["actions"] and top["confirm"]
    for fmt in ("text", "md", "html", "json"):
        out = render(bearing_doc, fmt)
        assert "inner-race defect" in out, fmt
        assert f"{top['certainty_pct']} %" in out or f'"certainty_pct": {top["certainty_pct"]}' in out, fmt
        assert "Replace the bearing" in out, fmt
        assert "lock it out" in out, fmt                 # the isolation caution
        assert "not a guarantee" in out, fmt             # advice, not a guarantee
        if fmt == "html":
            assert "Randall &amp; Antoni (2011)" in out              # HTML stays escaped
        else:
            assert "Randall & Antoni (2011)" in out and "&amp;" not in out, fmt   # Markdown is read as text too
        answer = out.find("inner-race defect")
        assert answer < out.find("lock it out"), f"{fmt}: the answer comes before the cautions"


def test_json_report_validates_against_its_schema(bearing_doc):
    doc = json.loads(render(bearing_doc, "json"))
    jsonschema.Draft202012Validator(load_schema("report.schema.json")).validate(doc)
    assert doc["figures"] and all(f["svg"].startswith("<svg") for f in doc["figures"])


def test_html_report_is_well_formed_and_self_contained(bearing_doc):
    html = render(bearing_doc, "html")
    checker = HtmlChecker()
    checker.feed(html)
    assert not checker.errors and not checker.stack
    assert not checker.links, "a self-contained report links to nothing outside itself"
    assert html.count("<svg") == 4    # waveform, revolutions, spectrum, squared envelope


def test_html_escapes_what_the_data_says(bearing_doc):
    doc = json.loads(json.dumps(bearing_doc))
    doc["machine"]["name"] = "<script>alert(1)</script>"
    html = render(doc, "html")
    assert "<script>alert" not in html and "&lt;script&gt;" in html


@pytest.mark.browser
def test_headless_chromium_renders_the_report(bearing_doc, tmp_path):
    browser = shutil.which("chromium") or shutil.which("chromium-browser")
    if browser is None:
        pytest.skip("no chromium on this machine (.ci/run installs the Debian package)")
    page = tmp_path / "report.html"
    page.write_text(render(bearing_doc, "html"))
    shot = tmp_path / "shot.png"
    subprocess.run([browser, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                    "--disable-background-networking", "--disable-component-update", "--disable-sync",
                    f"--user-data-dir={tmp_path / 'profile'}", "--window-size=1100,1600",
                    f"--screenshot={shot}", page.as_uri()], check=True, capture_output=True, timeout=120)
    data = shot.read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n" and len(data) > 20_000   # a page was drawn, not a blank


# ---------------------------------------------------------------- the command


def _wav(tmp_path, machine=RW2, fault="unbalance", component="pump", stage=3, **kw):
    m = load_machine(machine)
    sim = simulate(m, fault, component, stage, None, 12800.0, 3.0, 7, **kw)
    return write_simulation(sim, tmp_path / f"{fault}.wav")[0]


def test_diagnose_prints_text_and_writes_html(tmp_path, capsys):
    wav = _wav(tmp_path)
    assert main(["diagnose", str(wav), "--machine", str(RW2)]) == 0
    out = capsys.readouterr().out
    assert out.startswith("tellwave diagnosis: RW-2") and "unbalance" in out
    target = tmp_path / "out" / "r.html"
    assert main(["diagnose", str(wav), "--machine", str(RW2), "--format", "html", "-o", str(target)]) == 0
    assert target.read_text().startswith("<!DOCTYPE html>")
    assert not list(target.parent.glob("*.part"))


def test_diagnose_several_files_of_one_machine_together(tmp_path, capsys):
    m = load_machine(RW2)
    sim = simulate(m, "misalignment-angular", "pump", 3, None, 12800.0, 3.0, 3, points=["P1H"])
    one = write_simulation(sim, tmp_path / "p1h.wav")[0]
    sim = simulate(m, "misalignment-angular", "pump", 3, None, 12800.0, 3.0, 3, points=["P1A"])
    two = write_simulation(sim, tmp_path / "p1a.wav")[0]
    assert main(["diagnose", str(one), str(two), "--machine", str(RW2), "--format", "json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert {c["name"] for c in doc["reading"]["channels"]} >= {"P1H", "P1A"}
    assert doc["hypotheses"][0]["fault"].startswith("misalignment")


def test_withheld_diagnosis_has_its_own_exit_code(tmp_path, capsys):
    m = load_machine(RW2)
    from engine.simulation import clip_channel
    sim = simulate(m, "unbalance", "pump", 3, None, 12800.0, 3.0, 2, ["P1H"])   # its one channel clipped
    wav = write_simulation(clip_channel(sim, "P1H", 0.3), tmp_path / "clipped.wav")[0]
    assert main(["diagnose", str(wav), "--machine", str(RW2)]) == 7
    out = capsys.readouterr().out
    assert "cannot support a fault conclusion" in out and "measure again" in out
    # one clipped channel among clean ones: left out, the rest diagnosed (exit 0), and named
    sim = simulate(m, "unbalance", "pump", 3, None, 12800.0, 3.0, 2, ["P1H", "P2H"])
    wav = write_simulation(clip_channel(sim, "P1H", 0.3), tmp_path / "one-clipped.wav")[0]
    assert main(["diagnose", str(wav), "--machine", str(RW2)]) == 0
    out = capsys.readouterr().out
    assert "Channel P1H fails the clipping check and is left out" in out and "Unbalance on pump" in out, out


BAD_INPUT = [
    ("missing reading", lambda p: ["diagnose", str(p / "nope.wav"), "--machine", str(RW2)], 4, "no such file"),
    ("random bytes", lambda p: ["diagnose", str(_bytes(p)), "--machine", str(RW2)], 4, "junk.wav"),
    ("bad machine", lambda p: ["diagnose", str(_wav(p)), "--machine", str(_bad_machine(p))], 3, "bad-machine.yaml"),
    ("NaN samples", lambda p: ["diagnose", str(_nan_csv(p)), "--machine", str(RW2)], 4, "nan.csv"),
    ("unknown unit", lambda p: ["diagnose", str(_wav(p)), "--machine", str(RW2), "--unit", "furlongs"], 4, "furlongs"),
    ("bad format", lambda p: ["diagnose", "x.wav", "--machine", str(RW2), "--format", "pdf"], 2, "pdf"),
]


def _bytes(p):
    f = p / "junk.wav"
    f.write_bytes(np.random.default_rng(0).bytes(3000))
    return f


def _bad_machine(p):
    f = p / "bad-machine.yaml"
    f.write_text(RW2.read_text().replace("rolling_elements: 8", "rolling_elements: eight", 1))
    return f


def _nan_csv(p):
    f = p / "nan.csv"
    x = np.sin(np.arange(4096) / 10.0)
    x[100:200] = np.nan
    f.write_text("# sample_rate_hz: 12800\n# unit: g\nP1H\n" + "\n".join(f"{v}" for v in x) + "\n")
    return f


@pytest.mark.parametrize("name, argv, code, word", BAD_INPUT, ids=[b[0] for b in BAD_INPUT])
def test_bad_input_gives_one_line_and_its_exit_code(tmp_path, capsys, name, argv, code, word):
    assert main(argv(tmp_path)) == code
    err = capsys.readouterr().err
    assert err.startswith("tellwave: error:") and err.count("\n") == 1 and word in err
    assert "Traceback" not in err


def test_demo_writes_reports_and_an_index(tmp_path, reasoner):
    from engine.demo import run_demo

    cases = tmp_path / "cases"
    cases.mkdir()
    for name in ("rw2-pump-nde-outer-race", "bw1-clipped-recording"):
        text = (ROOT / "cases/demo" / f"{name}.case.yaml").read_text()
        text = text.replace("../machines/", str(ROOT / "cases/machines") + "/")
        (cases / f"{name}.case.yaml").write_text(text)
    results = run_demo(tmp_path / "out", reasoner, cases_dir=cases, progress=lambda *_: None)
    assert all(r.passed for r in results)
    index = (tmp_path / "out/index.html").read_text()
    assert "rw2-pump-nde-outer-race.html" in index
    assert (tmp_path / "out/readings/rw2-pump-nde-outer-race.wav").exists()
    assert "withheld" in (tmp_path / "out/bw1-clipped-recording.html").read_text() or \
        "cannot support" in (tmp_path / "out/bw1-clipped-recording.html").read_text()


