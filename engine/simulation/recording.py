"""A simulation as a recorder would keep it: clipped by too small an input range, as an in-memory
Reading, or written as a reading file with its sidecar and its truth."""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np
import yaml

from ..common.errors import UsageError
from ..common.outfile import check_target, staged, write_whole
from .result import Simulation
from .signal import G

if TYPE_CHECKING:
    from ..readings import Reading


def clip_channel(sim: Simulation, channel: str, fraction: float) -> Simulation:
    """The simulation as a recorder with too small an input range would store it: ``channel``
    cut off at ``fraction`` of its peak (for demos and tests of the quality gates)."""
    if channel not in sim.channels:
        raise UsageError(f"no channel {channel!r} to clip; channels are {', '.join(sim.channels)}")
    x = sim.channels[channel]
    limit = fraction * float(np.max(np.abs(x)))
    channels = dict(sim.channels) | {channel: np.clip(x, -limit, limit)}
    return Simulation(sim.fs_hz, channels, sim.points, sim.truth, sim.speed_rpm, sim.extra)


def as_reading(sim: Simulation, source: str = "simulated") -> Reading:
    """The simulation as an in-memory Reading (acceleration channels, quality gates run)."""
    from ..readings import Channel, Reading
    from ..readings.quality import check_channel

    channels = tuple(Channel(name, x, "acceleration", "g", sim.points[name].id, sim.points[name].direction)
                     for name, x in sim.channels.items())
    quality = tuple(q for ch in channels for q in check_channel(ch, sim.fs_hz))
    return Reading(source, sim.fs_hz, channels, speed_rpm=sim.speed_rpm, quality=quality)


def write_simulation(sim: Simulation, path, inputs=(), timestamp: str | None = None,
                     phase_1x: list[dict] | None = None) -> list[Path]:
    """Save a simulation as a reading (.wav float32 in g, .npz or .csv) with sidecar and truth;
    ``timestamp`` (ISO 8601), if given, goes into the sidecar as a logger would stamp it, and
    ``phase_1x`` (a sidecar's 1X phase entries) as an analyst would write them.

    Returns the files written. Each goes through ``engine.common.outfile.staged``
    (written to a temporary name, synced, renamed; never over one of
    ``inputs``), so an interrupted write leaves no half-written reading.
    """
    path = Path(path)
    suffix = path.suffix.lower()
    if suffix not in (".wav", ".npz", ".csv"):
        raise UsageError(f"cannot write {suffix!r}; use .wav, .npz or .csv")
    sidecar_file, truth_file = path.with_name(path.name + ".yaml"), path.with_name(path.name + ".truth.yaml")
    for target in (path, sidecar_file, truth_file):
        check_target(target, inputs)
    names = list(sim.channels)
    data_g = np.stack([sim.channels[c] / G for c in names], axis=1)
    sidecar = {"unit": "g", "speed_rpm": round(sim.speed_rpm, 3),
               "channels": [{"name": c, "point": sim.points[c].id, "direction": sim.points[c].direction}
                            for c in names]}
    if timestamp is not None:
        sidecar["timestamp"] = str(timestamp)
    if phase_1x:
        sidecar["phase_1x"] = [dict(e) for e in phase_1x]
    with staged(path, inputs) as tmp:
        if suffix == ".wav":
            from scipy.io import wavfile
            wavfile.write(tmp, int(round(sim.fs_hz)), data_g.astype(np.float32))
            sidecar["sample_rate_hz"] = sim.fs_hz
        elif suffix == ".npz":
            with open(tmp, "wb") as fh:     # allow_pickle, numpy's default, named: no channel's array binds it
                np.savez(fh, allow_pickle=True, **{c: data_g[:, i] for i, c in enumerate(names)},
                         sample_rate_hz=sim.fs_hz, unit="g", speed_rpm=sim.speed_rpm)
        else:
            header = f"# sample_rate_hz: {sim.fs_hz}\n# unit: g\n" + ",".join(names) + "\n"
            body = "\n".join(",".join(f"{v:.7g}" for v in row) for row in data_g)
            tmp.write_text(header + body + "\n")
            sidecar["sample_rate_hz"] = sim.fs_hz
    written = [path]
    for target, content in ((sidecar_file, sidecar), (truth_file, sim.truth.as_dict())):
        written.append(write_whole(target, yaml.safe_dump(content, sort_keys=False), inputs))
    return written
