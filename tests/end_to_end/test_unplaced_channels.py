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
import yaml

from engine.cli import main

from support import CASES

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
