"""A wrong scale spoils severity, not the diagnosis: real records with a wrong gain or unit.

Source of the records and their labels: the CWRU Bearing Data Center, records 130 (outer
race, 0.007 in, drive end) and 105 (inner race, 0.007 in, drive end), 12 kHz; the 1 s
excerpts in tests/data (provenance in tests/data/README.md), both channels (DE and FE).
Each is stored again with its samples x1000, x0.001, or stated as mm/s while they are in g,
and diagnosed through the command line. The call must be the unscaled record's (the fault
its label gives, on the drive-end bearing), with no other confident call, while severity is
unknown: no ISO zone, no level in the evidence, and the report's lead says what to check.
Exit code 0: a scale-free diagnosis is a diagnosis (README, "Exit codes").

A fault told by its level alone cannot be judged without a scale: a simulated unbalance
(tellwave's own simulator, the RW-2 demo pump) with a gain of 1000 gets no confident call.
"""

from __future__ import annotations

import dataclasses
import json
import shutil

import jsonschema
import numpy as np
import pytest

from engine.cli import main
from engine.common.yamlfile import load_schema
from engine.evidence.vocabulary import level_fields
from engine.machine import load_machine
from engine.pipeline import diagnose, document_of
from engine.readings import PhaseReading
from engine.reasoning import CONFIDENT, Reasoner, load_rulebook
from engine.simulation import Simulation, as_reading, simulate

from support import CASES, TEST_DATA, TEST_MACHINES, HtmlChecker

CWRU = TEST_MACHINES / "cwru-motor.yaml"
LABELS = {"cwru-130": ("outer-race", "drive_end"), "cwru-105": ("inner-race", "drive_end")}
WRONG = {
    # name: (change of the samples, unit the file states, the gate that must find it)
    "gain x1000": (lambda x: x * 1000.0, "g", "implausible_level"),
    "gain x0.001": (lambda x: x * 0.001, "g", "implausible_level"),
    "mm/s stated for g": (lambda x: x, "mm/s", "implausible_spectrum"),
}
CHECKED = ("unit", "sensitivity", "gain", "scale")


def stored_again(tmp_path, record: str, change, unit: str):
    source = TEST_DATA / f"{record}.npz"
    with np.load(source) as archive:
        contents = {k: archive[k] for k in archive.files}
    for channel in ("DE", "FE"):
        contents[channel] = change(contents[channel].astype(np.float64))
    contents["unit"] = np.array(unit)
    path = tmp_path / source.name
    np.savez(path, **contents)
    shutil.copy(source.with_name(source.name + ".yaml"), path.with_name(path.name + ".yaml"))
    return path


def diagnosed(path, capsys, fmt="json") -> tuple[int, str]:
    code = main(["diagnose", str(path), "--machine", str(CWRU), "--format", fmt])
    return code, capsys.readouterr().out


@pytest.fixture(scope="module")
def unscaled():
    reasoner = Reasoner(load_rulebook())
    from engine.readings import load_reading
    out = {}
    for record in LABELS:
        d = diagnose(load_reading(TEST_DATA / f"{record}.npz"), load_machine(CWRU), reasoner)
        out[record] = document_of(d, made_at="2026-01-01T00:00+00:00")
    return out


@pytest.mark.parametrize("record", sorted(LABELS))
@pytest.mark.parametrize("wrong", sorted(WRONG))
def test_a_wrong_scale_keeps_the_call_and_loses_the_severity(tmp_path, capsys, unscaled, record, wrong):
    change, unit, gate = WRONG[wrong]
    code, out = diagnosed(stored_again(tmp_path, record, change, unit), capsys)
    doc = json.loads(out)
    jsonschema.validate(doc, load_schema("report.schema.json"))
    assert code == 0, f"exit {code}: a scale-free diagnosis is a diagnosis"
    assert {q["channel"] for q in doc["data_quality"] if q["issue"] == gate} == {"DE", "FE"}

    # the same call as the unscaled record, which is the label's
    before = unscaled[record]["hypotheses"][0]
    top = doc["hypotheses"][0]
    assert (top["fault"], top["component"]) == (before["fault"], before["component"]) == LABELS[record]
    assert top["certainty"] >= CONFIDENT
    was_confident = {(h["fault"], h["component"]) for h in unscaled[record]["hypotheses"]
                     if h["certainty"] >= CONFIDENT}
    assert {(h["fault"], h["component"]) for h in doc["hypotheses"] if h["certainty"] >= CONFIDENT} <= was_confident

    # severity unknown, said at the top, with what to check; no zone and no level anywhere
    assert doc["verdict"]["withheld"] is False and doc["verdict"]["severity_known"] is False
    assert "unknown until the scale is checked" in doc["verdict"]["scale_note"]
    assert all(any(word in c for c in doc["scale"]["check"]) for word in CHECKED)
    assert {c["channel"] for c in doc["scale"]["channels"]} == {"DE", "FE"}
    assert doc["zones"]["worst"] is None
    assert all(p["zone"] is None and p["velocity_rms_mm_s"] is None and not p["scale_trusted"]
               for p in doc["zones"]["points"])
    for h in doc["hypotheses"]:
        for firing in h["support"] + h["against"]:
            for fact in firing["facts"]:
                levels = {k: fact["values"].get(k) for k in level_fields(fact["kind"])}
                assert not any(v is not None for v in levels.values()), (firing["rule"], levels)
    # the damage stage comes from patterns (envelope, spectrum lines over their floor, kurtosis)
    assert top["stage"] == before["stage"]
    assert not top["severity"].startswith("machine in ISO")


@pytest.mark.parametrize("fmt, lead", [("text", "SEVERITY UNKNOWN."), ("md", "**Severity unknown.**"),
                                       ("html", "<strong>Severity unknown.</strong>")])
def test_every_format_says_so_before_the_hypotheses(tmp_path, capsys, fmt, lead):
    path = stored_again(tmp_path, "cwru-105", WRONG["gain x1000"][0], "g")
    if fmt == "text":
        code, out = diagnosed(path, capsys, fmt)
    else:
        target = tmp_path / f"report.{fmt}"
        code = main(["diagnose", str(path), "--machine", str(CWRU), "--format", fmt, "-o", str(target)])
        out = target.read_text(encoding="utf-8")
    assert code == 0
    hypotheses = {"text": "HYPOTHESES", "md": "| # | hypothesis", "html": 'id="hypotheses"'}[fmt]
    assert lead in out and out.index(lead) < out.index(hypotheses)
    after = out[out.index(lead):out.index(hypotheses)]
    assert all(word in after for word in CHECKED)
    assert "unknown (scale not trusted)" in out          # beside each channel in the levels table
    if fmt == "html":
        checker = HtmlChecker()
        checker.feed(out)
        assert not checker.errors and not checker.stack
        assert "as stated (scale not trusted)" in out    # the figures' level axes


def test_a_level_only_fault_with_a_gain_of_1000_is_not_called():
    machine = load_machine(CASES / "machines/rw2-raw-water-pump.yaml")
    reasoner = Reasoner(load_rulebook())
    sim = simulate(machine, "unbalance", "pump", 3, None, 12800.0, 3.0, 2)
    # the pump is measured horizontally only: 1X phase horizontal and vertical at its drive end (about 90 degrees
    # apart) makes the unbalance a call (shaft.unbalance.one-radial-direction holds it at 45 % without)
    phase = (PhaseReading("P1H", None, 40.0, None, "phase", 1),
             PhaseReading("pump_de", "vertical", 128.0, None, "phase", 2))
    plain = diagnose(dataclasses.replace(as_reading(sim), phase_1x=phase), machine, reasoner)
    assert (plain.reasoning.top.fault, plain.reasoning.top.component) == ("unbalance", "pump")
    assert plain.reasoning.top.confident                 # the simulated fault is clear when the scale is right

    gained = Simulation(sim.fs_hz, {k: x * 1000.0 for k, x in sim.channels.items()}, sim.points, sim.truth,
                        sim.speed_rpm)
    d = diagnose(dataclasses.replace(as_reading(gained), phase_1x=phase), machine, reasoner)
    assert not d.reasoning.withheld and not d.reasoning.confident()
    doc = document_of(d, made_at="2026-01-01T00:00+00:00")
    summary = doc["verdict"]["summary"]
    assert "cannot be judged" in summary and "unbalance" in summary and "until the scale is checked" in summary
    assert doc["verdict"]["severity_known"] is False and doc["zones"]["worst"] is None
    assert doc["verdict"]["urgency"]["id"] == "check-scale"
