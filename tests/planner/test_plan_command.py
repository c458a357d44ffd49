"""`tellwave plan` end to end: every shipped machine and test rig, the four formats, a reading, bad input."""

import json
import subprocess
import sys

import pytest

from engine.cli import main
from engine.machine import load_machine
from engine.planner import build_plan, load_policy, render_plan
from engine.simulation import simulate, write_simulation

from support import CASES, ROOT, TEST_MACHINES, HtmlChecker

MACHINES = sorted((CASES / "machines").glob("*.yaml")) + sorted(TEST_MACHINES.glob("*.yaml"))
RW2 = CASES / "machines" / "rw2-raw-water-pump.yaml"
CT1 = CASES / "machines" / "ct1-cooling-tower-fan.yaml"


@pytest.mark.parametrize("path", MACHINES, ids=[p.stem for p in MACHINES])
def test_plan_works_on_every_machine(path, capsys):
    assert main(["plan", str(path), "--no-proof"]) == 0
    out = capsys.readouterr().out
    assert out.startswith("tellwave acquisition plan:")
    for point in load_machine(path).points:
        assert point.id in out
    assert main(["plan", str(path), "--no-proof", "--fmax", "1000", "--lines", "400", "--format", "json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["check"]["verdicts"] and all(v["state"] in ("can show", "may miss", "cannot show")
                                            for v in doc["check"]["verdicts"])


@pytest.mark.parametrize("path, point", [(RW2, "P1H"), (CT1, "GINH"), (CASES / "machines" / "bw1-backwash-blower.yaml",
                                                                        "BDEH")])
def test_proof_runs_for_a_point_of_each_plant_machine(path, point, capsys):
    assert main(["plan", str(path), "--point", point, "--fmax", "500", "--lines", "200", "--format", "json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    proof = doc["proof"]
    assert proof["items"] and proof["disagreements"] == 0
    assert all(i["trials"]["proposed"]["found"] for i in proof["items"] if i["expected"]["proposed"] == "can show")
    assert any(not i["trials"]["given"]["found"] for i in proof["items"])


@pytest.fixture(scope="module")
def ct1_plan():
    policy = load_policy()
    from engine.planner import given_settings
    return build_plan(load_machine(CT1), policy, points=["GINH", "MDEH"],
                      given=given_settings(policy, fmax_hz=1000.0, lines=400), with_figures=True)


def test_html_plan_draws_a_tooth_and_a_bearing_impact_and_escapes_text(ct1_plan):
    html = render_plan(ct1_plan, "html")
    checker = HtmlChecker()
    checker.feed(html)
    assert not checker.errors and not checker.stack
    assert html.count("<svg") == 2 and "tooth impact" in html and "bearing impact" in html
    doc = json.loads(json.dumps(ct1_plan))
    doc["machine"]["name"] = "<script>alert(1)</script>"
    html = render_plan(doc, "html")
    assert "<script>alert" not in html and "&lt;script&gt;" in html


def test_every_format_leads_with_what_the_given_settings_cannot_show(ct1_plan):
    text = render_plan(ct1_plan, "text")
    assert text.index("cannot show") < text.index("PROPOSED SETTINGS") < text.index("PROOF BY SIMULATION")
    assert "gear-tooth on bevel_stage (fan gear)" in text
    md = render_plan(ct1_plan, "md")
    assert md.index("What the given settings can show") < md.index("Proposed settings")
    assert json.loads(render_plan(ct1_plan, "json"))["kind"] == "acquisition plan"


def test_the_check_states_what_the_given_settings_hold(ct1_plan):
    counts = {c["what"]: c["value"] for c in ct1_plan["check"]["counts"]}
    gmf = 23 * 985 / 60
    # samples on one tooth impact = sample rate x one mesh period (1 / GMF) [derived]
    assert f"{2560 / gmf:.1f} samples on one tooth impact" in counts["mesh bevel_stage"]
    # turns in the waveform = its length x shaft speed: 400 lines / 1000 Hz = 0.4 s [derived]
    assert counts["turns of fan"].startswith(f"{0.4 * 985 / 60 * 23 / 67:.1f} in the waveform")
    assert "above half the sample rate" in counts["envelope band 2000-10000 Hz"]


def test_plan_of_a_reading_uses_its_settings(tmp_path, capsys):
    m = load_machine(RW2)
    sim = simulate(m, "healthy", None, 2, None, 2560.0, 1.0, 3, ["P1H"])
    reading = write_simulation(sim, tmp_path / "route-p1h.npz")[0]
    out = tmp_path / "plan.md"
    assert main(["plan", str(RW2), "--reading", str(reading), "--point", "P1H", "--no-proof",
                 "--format", "md", "-o", str(out)]) == 0
    text = out.read_text()
    # Markdown source: the underscore is escaped (engine.common.escape.markdown), the page reads pump_de
    assert "route-p1h.npz: Fmax 1000 Hz" in text and r"| outer-race on pump\_de | cannot show |" in text
    assert not list(tmp_path.glob("*.part"))


def test_html_and_markdown_go_to_a_file_named_for_the_machine(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    assert main(["plan", str(RW2), "--point", "P2H", "--no-proof", "--format", "html"]) == 0
    assert (tmp_path / "rw2-raw-water-pump.plan.html").read_text().startswith("<!DOCTYPE html>")
    assert "wrote" in capsys.readouterr().out


def _reading(p):
    m = load_machine(RW2)
    return write_simulation(simulate(m, "healthy", None, 2, None, 2560.0, 0.5, 1, ["P1H"]), p / "r.npz")[0]


BAD_INPUT = [
    ("missing machine", lambda p: ["plan", str(p / "nope.yaml")], 3, "nope.yaml"),
    ("missing reading", lambda p: ["plan", str(RW2), "--reading", str(p / "gone.wav")], 4, "gone.wav"),
    ("reading and settings", lambda p: ["plan", str(RW2), "--reading", str(_reading(p)), "--fmax", "500"], 2,
     "either --reading"),
    ("negative Fmax", lambda p: ["plan", str(RW2), "--fmax", "-5", "--lines", "400"], 2,
     "--fmax: Fmax in Hz must be above 0"),
    ("lines without Fmax", lambda p: ["plan", str(RW2), "--lines", "400"], 2, "--fmax"),
    ("unknown point", lambda p: ["plan", str(RW2), "--point", "X9"], 3, "X9"),
    ("bad format", lambda p: ["plan", str(RW2), "--format", "pdf"], 2, "pdf"),
    # a command-line value is the command line's fault (exit 2, naming the option), not the machine file's
    ("bad speed", lambda p: ["plan", str(RW2), "--rpm", "-3", "--no-proof"], 2,
     "--rpm: the speed in rpm must be at least"),
]


@pytest.mark.parametrize("name, argv, code, word", BAD_INPUT, ids=[b[0] for b in BAD_INPUT])
def test_bad_input_gives_one_line_and_its_exit_code(tmp_path, capsys, name, argv, code, word):
    assert main(argv(tmp_path)) == code
    err = capsys.readouterr().err
    assert err.startswith("tellwave: error:") and err.count("\n") == 1 and word in err
    assert "Traceback" not in err


def test_help_does_not_import_the_planner():
    code = ("import sys, engine.cli; engine.cli.build_parser(); "
            "print(any(m in sys.modules for m in ('scipy', 'engine.planner')))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, check=True)
    assert out.stdout.strip() == "False"


def test_a_bearing_point_gets_raw_and_envelope_settings_each_with_its_own_lines(tmp_path, capsys):
    # issue 24: one line count for both spectra asked 6,400 to 51,200 lines at a bearing point
    from engine.machine.kinematics import rates_at
    from engine.planner import propose

    machine, policy = load_machine(RW2), load_policy()
    p = propose(machine, machine.point("M1H"), "bearing", policy)
    shaft_hz = machine.shaft_speeds_hz["motor"]
    # the raw spectrum splits the 1X harmonics by the policy's lines, with the fewest standard lines
    assert p.raw_resolution_hz <= shaft_hz / policy.lines_between_harmonics
    smaller = [n for n in policy.standard_lines if n < p.raw_lines]
    assert not smaller or p.fmax_hz / smaller[-1] > shaft_hz / policy.lines_between_harmonics
    assert p.raw_lines <= 3200 < 6400
    # the envelope spectrum holds the policy's harmonics of the fastest defect rate at the point
    fastest = max(rates_at(machine, machine.shaft_speeds_hz).bearing("motor_nde").impact_rate_hz(d)
                  for d in ("BPFO", "BPFI", "BSF"))
    assert policy.harmonics["envelope"] * fastest <= p.envelope_fmax_hz < p.envelope_band_hz[1] - p.envelope_band_hz[0]
    # and splits the tightest spacing the bearing needs (BPFO of motor_nde beside 3X) by its lines
    tight = min((n for n in p.requirements.needs if n.setting == "resolution"), key=lambda n: n.value / n.lines)
    assert p.envelope_resolution_hz <= tight.value / tight.lines
    assert p.envelope_lines <= 3200
    # every format shows both
    for fmt in ("text", "md", "html"):
        target = tmp_path / f"plan.{fmt}"
        assert main(["plan", str(RW2), "--point", "M1H", "--no-proof", "--format", fmt, "-o", str(target)]) == 0
        out = target.read_text(encoding="utf-8")
        assert "raw lines" in out and "envelope lines" in out and "envelope Fmax" in out, fmt
        assert f"{p.raw_lines}, resolution" in out and f"{p.envelope_lines}, resolution" in out, fmt
    capsys.readouterr()
    assert main(["plan", str(RW2), "--point", "M1H", "--no-proof", "--format", "json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    bearing = next(g for g in doc["proposals"] if g["purpose"] == "bearing")
    assert (bearing["raw_lines"], bearing["envelope_lines"], bearing["envelope_fmax_hz"]) == (
        p.raw_lines, p.envelope_lines, p.envelope_fmax_hz)
    other = next(g for g in doc["proposals"] if g["purpose"] != "bearing")
    assert other["raw_lines"] is None and other["envelope_lines"] is None


def test_the_plan_names_the_policy_file_never_its_installed_path(tmp_path, capsys, monkeypatch):
    # issue 24: the plan printed the site-packages path of the shipped policy (from outside the project:
    # inside it the path relative to the working folder happened to read well)
    monkeypatch.chdir(tmp_path)
    assert main(["plan", str(RW2), "--point", "M1H", "--no-proof"]) == 0
    out = capsys.readouterr().out
    line = next(x for x in out.splitlines() if x.startswith("policy:"))
    assert line.startswith("policy: rulebooks/planner/acquisition.yaml (")
    assert str(ROOT) not in line and "site-packages" not in line
    # a user's own file: the name the user gave, from wherever the command runs
    own = tmp_path / "site" / "our-policy.yaml"
    own.parent.mkdir()
    own.write_text((ROOT / "rulebooks" / "planner" / "acquisition.yaml").read_text(encoding="utf-8"), encoding="utf-8")
    assert main(["plan", str(RW2), "--point", "M1H", "--no-proof", "--policy", "site/our-policy.yaml"]) == 0
    assert "policy: site/our-policy.yaml " in capsys.readouterr().out
