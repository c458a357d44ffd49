"""A demo plant's monthly routes with faults that grow, for trying route, history and trend.

Tallow Ridge Water Works is invented. Month by month the RW-2 pump's drive-
end bearing goes from an incipient inner-race defect to an advanced one until
it is replaced after the fourth survey; the BW-1 blower's unbalance grows,
the blower is cleaned and balanced after the third survey, and the build-up
comes back; the CT-1 fan stays healthy. Each month is a folder with its
readings (simulated, written as WAV files with sidecars) and a route file
that dates them a month apart; a month after which a machine was opened
also holds ``findings.csv``, the fitters' log of what they found (the form
``tellwave findings import`` reads). Only the constants are imported with
the module (the command line reads ``MONTHS`` for its help).
"""

from __future__ import annotations

from datetime import datetime, timedelta
from pathlib import Path

from ..common.paths import CASES

FIRST_SURVEY = datetime(2026, 1, 12, 8, 30)
SURVEY_INTERVAL = timedelta(days=30)
FS_HZ = 25600.0
DURATION_S = 2.0

# machine file, points on the route, fault, component, stage in each month (None: healthy), speed rpm
PLAN = (
    ("rw2-raw-water-pump.yaml", ("P1H", "P2H", "M2H"), "inner-race", "pump_de", (1, 2, 3, 3, None, None), 1486),
    ("bw1-backwash-blower.yaml", ("BDEH", "MDEH"), "unbalance", "blower", (1, 1, 2, 1, 1, 2), 2955),
    ("ct1-cooling-tower-fan.yaml", ("MDEH", "GINH"), "healthy", None, (None,) * 6, None),
)
MONTHS = 6

# What the fitters found when they opened a machine, by the survey it follows (invented): the month,
# then one row of the findings CSV (machine name, date found, component, fault, stage, work order, notes).
FINDINGS_COLUMNS = ("machine", "date", "component", "fault", "stage", "work_order", "notes")
REPAIRS = (
    (2, ("CT-1 cooling tower fan", "2026-02-16", "bevel_stage", "nothing-found", "", "TR-WO-2611",
         "Annual outage: bevel gears inspected through the cover, contact pattern even, oil clean.")),
    (3, ("BW-1 backwash blower", "2026-03-19", "blower", "unbalance", "", "TR-WO-2684",
         "Scale build-up on the impeller blades; cleaned and trim-balanced in place.")),
    (4, ("RW-2 raw water pump", "2026-04-21", "pump_de", "inner-race", "3", "TR-WO-2730",
         "Spall over about a third of the inner-race track; bearing replaced, housing fits checked.")),
)


def write_month(out_dir, month: int) -> Path:
    """Write month ``month`` (1-based) of the demo routes; returns its route file."""
    import yaml

    from ..common.errors import UsageError
    from ..machine import load_machine
    from ..report import write_atomically
    from ..simulation import simulate, write_simulation

    if not 1 <= month <= MONTHS:
        raise UsageError(f"the demo has months 1 to {MONTHS}, got {month}")
    folder = Path(out_dir) / f"month-{month:02d}"
    folder.mkdir(parents=True, exist_ok=True)
    when = FIRST_SURVEY + (month - 1) * SURVEY_INTERVAL
    readings, machines = [], {}
    for m, (file, points, fault, component, stages, rpm) in enumerate(PLAN):
        machine_file = CASES / "machines" / file
        machine = load_machine(machine_file)
        key = file.split("-")[0]
        machines[key] = str(machine_file)
        stage = stages[month - 1]
        for p, point in enumerate(points):
            sim = simulate(machine, fault if stage else "healthy", component if stage else None, stage or 2,
                           speed_rpm=rpm, fs_hz=FS_HZ, duration_s=DURATION_S,
                           seed=1000 * month + 10 * m + p, points=[point])
            name = f"{key}-{point.lower()}-{when:%Y%m}.wav"
            taken = (when + timedelta(minutes=6 * m + 2 * p)).isoformat()
            write_simulation(sim, folder / name)
            with open(folder / f"{name}.yaml", "a", encoding="utf-8") as side:   # as a logger would stamp it
                side.write(f"timestamp: '{taken}'\n")
            readings.append({"file": name, "machine": key, "points": {point: point}, "time": taken})
    write_findings(folder, month)
    route = {"route": f"Tallow Ridge monthly survey {when:%Y-%m}",
             "about": "Simulated readings of the invented Tallow Ridge Water Works (tellwave demo-route).",
             "machines": machines, "readings": readings}
    return write_atomically(folder / "route.yaml", yaml.safe_dump(route, sort_keys=False))


def write_findings(folder, month: int) -> Path | None:
    """Write ``findings.csv`` of the repairs that followed survey ``month``; None when there were none."""
    import csv
    import io

    from ..report import write_atomically

    rows = [row for after, row in REPAIRS if after == month]
    if not rows:
        return None
    text = io.StringIO(newline="")
    writer = csv.writer(text, lineterminator="\n")
    writer.writerow(FINDINGS_COLUMNS)
    writer.writerows(rows)
    return write_atomically(Path(folder) / "findings.csv", text.getvalue())
