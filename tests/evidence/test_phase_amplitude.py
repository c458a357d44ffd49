"""A 1X amplitude given with a phase reading beside the 1X the reading itself measures there.

The 1X read with a phase and the 1X of the same point and direction in the spectrum are one
quantity: a factor of more than 2 either way means another sensor, unit or point (common practice;
the threshold is rulebooks/phase.yaml's phase_amplitude_factor). The simulator makes the spectrum
(invented demo data, seeded); the amplitudes are given as a sidecar gives them.
"""

from __future__ import annotations

import json
from dataclasses import replace

import numpy as np
import pytest

from engine.cli import main
from engine.common.errors import ReadingError
from engine.evidence import extract_evidence
from engine.machine import load_machine
from engine.readings import PhaseReading, load_reading
from engine.reasoning import Reasoner, load_rulebook
from engine.simulation import as_reading, simulate

from support import CASES

RW2_FILE = CASES / "machines" / "rw2-raw-water-pump.yaml"
RW2 = load_machine(RW2_FILE)
RULE = "phase.amplitude.differs-from-measured"


@pytest.fixture(scope="module")
def reasoner():
    return Reasoner(load_rulebook())


@pytest.fixture(scope="module")
def unbalance_reading():
    return as_reading(simulate(RW2, "unbalance", "pump", 2, None, 25600.0, 4.0, 3))


@pytest.fixture(scope="module")
def measured_1x(unbalance_reading) -> dict[str, float]:
    """1X of the pump on each pump channel, mm/s RMS, from the reading's own tone facts."""
    facts = extract_evidence(unbalance_reading, RW2)
    return {f["channel"]: f["amplitude_mm_s"] for f in facts
            if f["kind"] == "tone" and f["name"] == "1X" and f["component"] == "pump"}


def _given(reading, *entries):
    phases = tuple(PhaseReading(point, None, deg, amp, "test.yaml", i + 1)
                   for i, (point, deg, amp) in enumerate(entries))
    return replace(reading, phase_1x=phases)


def _phase_facts(reading) -> dict[str, dict]:
    return {f["point"]: f for f in extract_evidence(reading, RW2) if f["kind"] == "phase_1x"}


def test_the_measured_1x_is_the_tone_of_the_same_channel(unbalance_reading, measured_1x):
    facts = _phase_facts(_given(unbalance_reading, ("P1H", 40, 2 * measured_1x["P1H"]), ("P1A", 10, None)))
    p1h = facts["P1H"]
    assert p1h["measured_channel"] == "P1H"
    assert p1h["measured_1x_mm_s"] == pytest.approx(measured_1x["P1H"], rel=1e-3)
    assert p1h["amplitude_factor"] == pytest.approx(2.0, rel=1e-3)
    assert facts["P1A"]["amplitude_factor"] is None          # nothing stated, nothing to compare


def test_a_place_the_reading_has_no_channel_at_is_not_judged(unbalance_reading):
    only_p1h = replace(unbalance_reading, channels=tuple(c for c in unbalance_reading.channels if c.name == "P1H"))
    fact = _phase_facts(_given(only_p1h, ("M2H", 40, 9.0)))["M2H"]
    assert fact["measured_channel"] == "" and fact["measured_1x_mm_s"] is None and fact["amplitude_factor"] is None


def _limits(reasoner, reading) -> list[str]:
    result = reasoner.reason(extract_evidence(reading, RW2))
    return [f.because for h in result.reading_problems for f in h.support if f.rule_id == RULE]


@pytest.mark.parametrize("factor, flagged", [(1.0, False), (1.8, False), (1 / 1.8, False), (2.3, True),
                                             (1 / 2.3, True), (25.4, True)])
def test_a_factor_beyond_2_either_way_is_a_limitation(reasoner, unbalance_reading, measured_1x, factor, flagged):
    # 25.4: an amplitude in in/s written as mm/s (1 in = 25.4 mm, exact)
    reading = _given(unbalance_reading, ("P1H", 40, factor * measured_1x["P1H"]))
    texts = _limits(reasoner, reading)
    assert bool(texts) is flagged
    if flagged:
        assert "P1H" in texts[0] and "another sensor, unit or point" in texts[0]


def test_no_amplitude_given_no_limitation(reasoner, unbalance_reading):
    assert _limits(reasoner, _given(unbalance_reading, ("P1H", 40, None), ("M2H", 130, None))) == []


def test_an_amplitude_without_its_unit_is_refused(tmp_path):
    # the unit is part of the field's name: a bare amplitude, or one in a unit the file cannot take, stops
    x = np.random.default_rng(4).normal(0.0, 0.01, 4096)
    np.savez(tmp_path / "r.npz", P1H=x, sample_rate_hz=np.array(4096.0), unit=np.array("g"))
    for key in ("amplitude", "amplitude_in_s"):
        (tmp_path / "r.npz.yaml").write_text("channels: [{name: P1H, point: P1H, direction: horizontal}]\n"
                                             f"phase_1x:\n  - {{point: P1H, phase_deg: 40, {key}: 4.1}}\n")
        with pytest.raises(ReadingError) as err:
            load_reading(tmp_path / "r.npz")
        text = str(err.value)
        assert "r.npz.yaml:3" in text and key in text and "amplitude_mm_s_rms" in text and "\n" not in text


def test_the_report_says_it_and_shows_both(tmp_path, capsys):
    reading = tmp_path / "rw2.npz"
    assert main(["synth", str(RW2_FILE), "--fault", "unbalance", "--component", "pump", "--seed", "3",
                 "-o", str(reading)]) == 0
    sidecar = tmp_path / "rw2.npz.yaml"
    sidecar.write_text(sidecar.read_text() + "phase_1x:\n  - {point: P1H, phase_deg: 40, amplitude_mm_s_rms: 40}\n")
    capsys.readouterr()
    assert main(["diagnose", "--machine", str(RW2_FILE), str(reading), "--format", "json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    (row,) = doc["phase"]["readings"]
    assert row["measured_channel"] == "P1H" and 0 < row["measured_1x_mm_s"] < 20
    assert any("differ by a factor of" in x and "P1H" in x for x in doc["limitations"])
    assert main(["diagnose", "--machine", str(RW2_FILE), str(reading)]) == 0
    text = capsys.readouterr().out
    assert "1X 40.00 mm/s RMS (measured on P1H:" in text


def test_the_phase_check_reads_the_1x_the_tones_found(unbalance_reading, monkeypatch):
    # closing-stop29: the phase check found each channel's 1X line again; now the 1X of a channel is
    # searched once and every extractor (tones, harmonic series, unexplained peaks, phase) reads that one
    import engine.evidence.tones as tones

    searched = []
    real = tones._search_one_x
    monkeypatch.setattr(tones, "_search_one_x", lambda c, rc: searched.append(c.name) or real(c, rc))
    reading = _given(unbalance_reading, ("P1H", 30.0, 1.0), ("P2H", 40.0, None))
    facts = extract_evidence(reading, RW2)
    assert sorted(searched) == sorted(c.name for c in reading.channels)       # once per channel
    measured = {f["point"]: f["measured_1x_mm_s"] for f in facts if f["kind"] == "phase_1x"}
    tone = {f["point"]: f["amplitude_mm_s"] for f in facts if f["kind"] == "tone" and f["name"] == "1X"
            and f["component"] == "pump"}
    assert measured["P1H"] == pytest.approx(tone["P1H"], abs=1e-3)
