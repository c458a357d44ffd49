"""Small routes for the route tests: a few short simulated readings of the demo pump, one bad file."""

from __future__ import annotations

import os
from pathlib import Path

import yaml

from engine.machine import load_machine
from engine.simulation import simulate, write_simulation

from support import CASES

PUMP = CASES / "machines" / "rw2-raw-water-pump.yaml"


def make_route(folder: Path, n: int = 4, bad: bool = True, seed: int = 0) -> Path:
    """``n`` one-second readings (one point each) plus, if ``bad``, a file that is not a WAV."""
    machine = load_machine(PUMP)
    folder.mkdir(parents=True, exist_ok=True)
    readings = []
    for i in range(n):
        point = ("P1H", "P2H", "M2H", "M1H")[i % 4]
        sim = simulate(machine, "inner-race" if i % 2 else "unbalance", "pump_de" if i % 2 else "pump", 2,
                       fs_hz=12800.0, duration_s=1.0, seed=seed + i, points=[point])
        write_simulation(sim, folder / f"r{i}.wav")
        readings.append({"file": f"r{i}.wav", "machine": "rw2", "points": {point: point},
                         "time": f"2026-02-0{1 + i % 9}T08:00:00"})
    if bad:
        (folder / "broken.wav").write_bytes(b"RIFF-not-really" * 10)
        (folder / "broken.wav.yaml").write_text("unit: g\nscale: 1\n")
        readings.insert(1, {"file": "broken.wav", "machine": "rw2", "time": "2026-02-01T09:00:00"})
    route = {"route": "test route", "machines": {"rw2": str(PUMP)}, "readings": readings}
    path = folder / "route.yaml"
    path.write_text(yaml.safe_dump(route, sort_keys=False))
    return path


def processes_in_groups(pgids: set[int]) -> dict[int, bytes]:
    """Every live process of the process groups ``pgids`` and its command line (Linux /proc): what a route
    left running, and which of them is the fork server."""
    found = {}
    for entry in os.listdir("/proc"):
        if not entry.isdigit():
            continue
        try:
            with open(f"/proc/{entry}/stat") as f:
                fields = f.read().rsplit(")", 1)[1].split()
            with open(f"/proc/{entry}/cmdline", "rb") as f:
                cmdline = f.read()
        except OSError:
            continue
        if fields[0] != "Z" and int(fields[2]) in pgids:
            found[int(entry)] = cmdline
    return found


def monthly_pump_route(folder: Path, month: int, seed: int) -> Path:
    """Month ``month``'s one-point route (P1H of the demo pump, unbalance at stage 3, one second), written into
    ``folder`` as ``m<month>.wav`` and ``m<month>.yaml``: a history a reading at a time."""
    sim = simulate(load_machine(PUMP), "unbalance", "pump", 3, fs_hz=12800.0, duration_s=1.0, seed=seed,
                   points=["P1H"])
    write_simulation(sim, folder / f"m{month}.wav")
    route = folder / f"m{month}.yaml"
    route.write_text(yaml.safe_dump({
        "route": f"month {month}", "machines": {"m": str(PUMP)},
        "readings": [{"file": f"m{month}.wav", "machine": "m", "time": f"2026-0{month}-01T08:00:00"}]}))
    return route
