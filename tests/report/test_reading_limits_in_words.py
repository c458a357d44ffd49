"""What a reading cannot support, in words: quality issues read the same as ``tellwave reading``
says them, and a reason a fault may be missed names its rates once.

The tests named ``test_N_*`` reproduce issue 13's report defects and keep their names.
"""

from __future__ import annotations

import json
import re

from engine.cli import main
from engine.machine import load_machine
from engine.pipeline.cases import load_case, simulation_of
from engine.report import render
from engine.simulation import write_simulation

from support import CASES, doc_of
from support import REPORT_FORMATS as FORMATS


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


def test_9_a_reason_a_fault_may_be_missed_says_its_rates_once():
    doc = doc_of("bw1-clipped-recording")
    twins = [r for v in doc["reach"] for r in v["reasons"] if "lies within" in r]
    assert twins, "the blower's BPFO and 2 x BSF lie within slip of each other"
    for reason in twins:
        head = reason.split(":")[0]
        assert reason.count(head) == 1, reason
