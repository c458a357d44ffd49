"""Cut the short real-data excerpts in tests/data from ../shared/datasets
(run once; provenance in tests/data/README.md).

    python -m bench.make_excerpts
"""

from __future__ import annotations

import csv
import hashlib
from pathlib import Path

import numpy as np
import yaml

from engine.readings import load_reading

ROOT = Path(__file__).resolve().parent.parent

DATASETS = ROOT.parent / "shared" / "datasets"
OUT = ROOT / "tests" / "data"
# (record, channels kept, seconds from the start)
EXCERPTS = [
    ("cwru/12k_drive_end/130.mat", ["DE_time", "FE_time"], 1.0),
    ("cwru/12k_drive_end/105.mat", ["DE_time", "FE_time"], 1.0),
    ("cwru/normal_48k/97.mat", ["DE_time"], 0.75),
    ("mfpt/outer_race_vload/OuterRaceFault_vload_1.mat", ["gs"], 1.0),
]
POINTS = {"DE_time": "DE", "FE_time": "FE", "gs": "TB"}


def main() -> int:
    index = {r["path"]: r for r in csv.DictReader(open(DATASETS / "index.csv", encoding="utf-8"))}
    for rel, wanted, seconds in EXCERPTS:
        row = index[rel]
        rpm = float(row["file_rpm"] or row["nominal_rpm"])
        reading = load_reading(DATASETS / rel, sample_rate_hz=float(row["fs_hz"]), unit="g", channels=wanted)
        n = int(seconds * reading.fs_hz)
        arrays, side_channels = {}, []
        for ch in reading.channels:
            key = next(v for k, v in POINTS.items() if ch.name.endswith(k))
            arrays[key] = (ch.samples[:n] / 9.80665).astype(np.float32)     # back to g
            side_channels.append({"name": key, "point": key, "direction": "vertical"})
        stem = Path(rel).stem
        target = OUT / f"{row['dataset'].lower()}-{stem}.npz"
        np.savez_compressed(target, sample_rate_hz=reading.fs_hz, unit="g", speed_rpm=rpm, **arrays)
        (target.parent / (target.name + ".yaml")).write_text(yaml.safe_dump({
            "about": (f"Excerpt of {rel} in ../shared/datasets ({row['source']}, sha256 {row['sha256']}): "
                      f"the first {seconds} s, float32, in g."),
            "channels": side_channels}, sort_keys=False, allow_unicode=True, width=200))
        digest = hashlib.sha256(target.read_bytes()).hexdigest()[:12]
        print(f"wrote {target} ({target.stat().st_size} bytes, sha256 {digest})")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
