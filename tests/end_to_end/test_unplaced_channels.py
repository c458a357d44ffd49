"""Channels that name no measurement point (nu27 item 9): the report says which, and what that limits.

The same samples are diagnosed twice: with the sidecar the simulator writes (every channel on its
point) and with the channels named as a recorder names them (ch1, ch2 ...: no point). Only the second
lists ``points-unknown`` among the reading's limits, naming every channel, and says of a damage stage
that it is a least (the stage rules that need a sensor's direction cannot fire); neither is withheld. The
samples are tellwave's own simulator's (the invented BW-1 blower, a stage-3 outer race): a demo, not
an outside value.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
import yaml

from engine.cli import main
from engine.machine import load_machine
from engine.pipeline import diagnose

from support import CASES, ROOT, TEST_MACHINES, reasoner

BLOWER = CASES / "machines/bw1-backwash-blower.yaml"


def diagnosed(path, capsys, *more) -> tuple[int, dict]:
    code = main(["diagnose", str(path), "--machine", str(BLOWER), "--format", "json", *more])
    return code, json.loads(capsys.readouterr().out)


def test_unplaced_channels_are_named_with_what_they_limit(tmp_path, capsys):
    placed = tmp_path / "placed.wav"
    assert main(["synth", str(BLOWER), "-o", str(placed), "--fault", "outer-race", "--stage", "3", "--seed", "2"]) == 0
    sidecar = yaml.safe_load((tmp_path / "placed.wav.yaml").read_text(encoding="utf-8"))
    unplaced = tmp_path / "unplaced.wav"
    unplaced.write_bytes(placed.read_bytes())
    names = [f"ch{i + 1}" for i in range(len(sidecar["channels"]))]
    bare = {k: v for k, v in sidecar.items() if k != "channels"}
    bare["channels"] = [{"name": n} for n in names]
    (tmp_path / "unplaced.wav.yaml").write_text(yaml.safe_dump(bare), encoding="utf-8")
    capsys.readouterr()

    code, doc = diagnosed(placed, capsys)
    assert code == 0 and "points-unknown" not in {p["fault"] for p in doc["reading_problems"]}
    assert not any("name no measurement point" in json.dumps(h) for h in doc["hypotheses"])

    code, doc = diagnosed(unplaced, capsys)
    assert code == 0, "unplaced channels limit the diagnosis; they do not withhold it"
    [limit] = [p for p in doc["reading_problems"] if p["fault"] == "points-unknown"]
    text = json.dumps(limit)
    assert ", ".join(names) in text and "name no measurement point" in text
    assert "direction" in text and "cannot be told apart" in text
    assert np.isclose(limit["certainty"], 0.6)
    # a damage stage read from them says it is a least: the stage rules that need a direction could not fire
    staged = [h for h in doc["hypotheses"] if "damage stage" in json.dumps(h)]
    assert staged and all("at least: the reading's channels name no measurement point" in json.dumps(h)
                          for h in staged)



def test_a_stage_read_on_a_placed_channel_is_not_called_a_least(tmp_path, capsys):
    """One channel of three names no point (a user's sidecar that left one out): the limit is said, but a
    damage stage read where a channel on its point judged the direction's signs is not "at least"."""
    reading = tmp_path / "one-unplaced.wav"
    assert main(["synth", str(BLOWER), "-o", str(reading), "--fault", "outer-race", "--stage", "3", "--seed", "2"]) == 0
    side = tmp_path / "one-unplaced.wav.yaml"
    sidecar = yaml.safe_load(side.read_text(encoding="utf-8"))
    *kept, last = sidecar["channels"]
    sidecar["channels"] = kept + [{k: v for k, v in last.items() if k not in ("point", "direction")}]
    side.write_text(yaml.safe_dump(sidecar), encoding="utf-8")
    capsys.readouterr()
    code, doc = diagnosed(reading, capsys)
    assert code == 0 and "points-unknown" in {p["fault"] for p in doc["reading_problems"]}
    top = doc["hypotheses"][0]
    assert (top["fault"], top["component"], top["stage"]) == ("outer-race", "motor_de", 3)
    assert "name no measurement point" not in json.dumps(top)


SHARED_130 = ROOT.parent / "shared" / "datasets" / "cwru" / "12k_drive_end" / "130.mat"


@pytest.mark.skipif(not SHARED_130.exists(), reason="needs ../shared/datasets (CWRU 130.mat)")
def test_a_fainter_unplaced_view_does_not_send_a_bearing_s_own_family_elsewhere():
    """CWRU 130 (outer race on the drive end, 0.007 in at 6:00; CWRU Bearing Data Center label) read as a
    user gives it: DE and FE on their points, the base-plate channel BA on none. BA's wide envelope view
    of the drive end's BPFO stands 6 dB below FE's, which is 0.1 dB over DE's own: the drive end's own
    sensor sees its family as well as any, so bearing.defect.strongest-elsewhere must not count against
    it (it did, -45 %: 'they more likely come from a bearing near fan_end', whose BPFO is another rate)."""
    import dataclasses

    from engine.readings import load_reading

    reading = load_reading(SHARED_130, sample_rate_hz=12000.0, unit="g")
    points = {"X130_DE_time": "DE", "X130_FE_time": "FE"}
    reading = dataclasses.replace(reading, channels=tuple(
        dataclasses.replace(c, point=points.get(c.name), direction="vertical" if c.name in points else None)
        for c in reading.channels))
    top = diagnose(reading, load_machine(TEST_MACHINES / "cwru-motor.yaml"), reasoner()).reasoning.top
    assert (top.fault, top.component) == ("outer-race", "drive_end")
    assert "bearing.defect.strongest-elsewhere" not in {f.rule_id for f in top.against}
    assert top.certainty >= 0.8     # 0.83 with DE and FE alone (bench.real_data)
