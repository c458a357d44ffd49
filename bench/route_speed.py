"""Time a whole route: N readings of 1 channel x 65,536 samples, diagnosed in a process pool.

    python -m bench.route_speed [--readings 500] [--workers 2] [--out bench-out/route-speed] [--format html]

The readings are simulated once (the demo pump, faults and seeds varied so
every file differs) and kept under --out; later runs reuse them. Each run
starts from an empty store, so every reading is diagnosed. Prints wall time,
readings per second, and the memory (resident set of this process and of
its workers) sampled through the route, to show it stays flat.
"""

from __future__ import annotations

import argparse
import os
import shutil
import threading
import time
from pathlib import Path

import yaml

from engine.common.paths import CASES
from engine.history.store import Store
from engine.machine import load_machine
from engine.route import load_route, run_route
from engine.simulation import simulate, write_simulation

N_SAMPLES = 65536
FS_HZ = 25600.0
FAULTS = (("healthy", None), ("unbalance", "pump"), ("inner-race", "pump_de"), ("outer-race", "pump_nde"),
          ("misalignment-angular", "pump"), ("looseness-rotating", "pump"))
POINTS = ("P1H", "P2H", "M2H", "M1H")


def make_readings(folder: Path, n: int) -> Path:
    route_file = folder / f"route-{n}.yaml"
    if route_file.is_file():
        return route_file
    folder.mkdir(parents=True, exist_ok=True)
    machine_file = CASES / "machines" / "rw2-raw-water-pump.yaml"
    machine = load_machine(machine_file)
    readings = []
    for i in range(n):
        name = folder / f"r{i:04d}.wav"
        point = POINTS[i % len(POINTS)]
        fault, component = FAULTS[i % len(FAULTS)]
        if not name.is_file():
            sim = simulate(machine, fault, component, 1 + i % 3, fs_hz=FS_HZ, duration_s=N_SAMPLES / FS_HZ,
                           seed=i, points=[point])
            write_simulation(sim, name)
        readings.append({"file": name.name, "machine": "rw2", "time": f"2026-03-{1 + i % 28:02d}T08:00:00"})
    route = {"route": f"speed bench, {n} readings", "machines": {"rw2": str(machine_file)}, "readings": readings}
    route_file.write_text(yaml.safe_dump(route, sort_keys=False))
    return route_file


def _rss_mb(pid: int) -> float:
    try:
        with open(f"/proc/{pid}/statm") as f:
            return int(f.read().split()[1]) * os.sysconf("SC_PAGE_SIZE") / 2**20
    except OSError:
        return 0.0


def _family() -> list[int]:
    """This process and all its descendants (the fork server and the pool's workers)."""
    parent_of = {}
    for d in os.listdir("/proc"):
        if d.isdigit():
            try:
                with open(f"/proc/{d}/stat") as f:
                    parent_of[int(d)] = int(f.read().rsplit(")", 1)[1].split()[1])
            except (OSError, ValueError, IndexError):
                pass
    family = [os.getpid()]
    for pid in family:
        family += [p for p, pp in parent_of.items() if pp == pid]
    return family


class MemorySampler(threading.Thread):
    def __init__(self, every_s: float = 1.0):
        super().__init__(daemon=True)
        self.every_s, self.samples, self.stop = every_s, [], threading.Event()
        self.t0 = time.perf_counter()

    def run(self):
        while not self.stop.is_set():
            pids = _family()
            self.samples.append((time.perf_counter() - self.t0, _rss_mb(pids[0]), sum(_rss_mb(p) for p in pids[1:])))
            self.stop.wait(self.every_s)


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--readings", type=int, default=500)
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--out", default="bench-out/route-speed")
    ap.add_argument("--format", default="html", choices=["html", "md", "text", "json"])
    args = ap.parse_args()
    out = Path(args.out)
    t = time.perf_counter()
    route_file = make_readings(out / "readings", args.readings)
    print(f"readings ready in {time.perf_counter() - t:.1f} s ({args.readings} x 1 channel x {N_SAMPLES} samples)")
    shutil.rmtree(out / "run", ignore_errors=True)
    route = load_route(route_file)
    sampler = MemorySampler()
    sampler.start()
    with Store(out / "run" / "history.sqlite") as store:
        outcome = run_route(route, store, out / "run", workers=args.workers, fmt=args.format)
    sampler.stop.set()
    sampler.join()
    n = len(outcome.diagnosed)
    print(f"{n} diagnosed, {len(outcome.failed)} failed, {args.workers} workers (os.cpu_count() = {os.cpu_count()})")
    print(f"wall time {outcome.wall_s:.1f} s, {n / outcome.wall_s:.2f} readings/s, "
          f"{1000 * outcome.wall_s * args.workers / max(n, 1):.0f} ms per reading per worker")
    s = sampler.samples
    if s:
        print("memory over the route (MB resident: this process, fork server and workers together):")
        for frac in (0.1, 0.25, 0.5, 0.75, 1.0):
            t_s, parent, workers = s[min(len(s) - 1, int(frac * (len(s) - 1)))]
            print(f"  {t_s:6.1f} s  parent {parent:6.0f}  workers {workers:6.0f}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
