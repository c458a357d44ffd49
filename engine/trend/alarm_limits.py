"""Alarm limits from a point's own history: mean + k standard deviations of its healthy readings.

A healthy reading is one whose diagnosis was not withheld and whose top
hypothesis is below the conclusion threshold (``reasoning.CONFIDENT``). Each
stored level of a point (overall velocity and acceleration, and every band a
site alarm measured, stored as ``band[...]`` indicators) gets an alert level of
mean + k sd and a danger level of mean + danger_k sd (common practice for
statistical alarm limits), with the counts and the dates as its source. A level
with fewer than ``least`` healthy readings, or none that vary, gets no limit and
is named with the reason. The spread is floored at ``MIN_SPREAD_FRACTION`` of the mean: readings that
happen to repeat closely (or a simulator's) would otherwise give limits a hair above the mean, crossed
by the next ordinary reading.
"""

from __future__ import annotations

import re
from datetime import UTC, datetime

import numpy as np

from ..history.store import Store
from ..reasoning import CONFIDENT
from .changepoint import MIN_LOG_SCATTER

DEFAULT_K = 3.0
DEFAULT_LEAST = 6          # a standard deviation of fewer readings is mostly noise (common practice)
# the least spread a limit is set by, as a fraction of the mean: the repeatability of route readings, 10 %
# (the same assumption as the change-point test, engine/trend/changepoint.py: readings taken on another day,
# at another load and with the sensor mounted again rarely repeat better; common practice), so alert and
# danger stand at least 30 % and 60 % above the mean at the usual 3 and 6 sd
MIN_SPREAD_FRACTION = float(np.exp(MIN_LOG_SCATTER) - 1.0)
OVERALL = {"velocity_rms_mm_s": "velocity_mm_s_rms", "accel_rms_g": "acceleration_g_rms",
           "accel_peak_g": "acceleration_g_peak"}
_BAND = re.compile(r"^band\[(.+)\]_(mm_s|g)$")


def band_of(indicator: str) -> tuple[str, str] | None:
    """(band, quantity) of a stored level indicator an alarm can watch; None for any other."""
    if indicator in OVERALL:
        return "overall", OVERALL[indicator]
    m = _BAND.match(indicator)
    if m is None:
        return None
    return m.group(1), "velocity_mm_s_rms" if m.group(2) == "mm_s" else "acceleration_g_rms"


def _significant(x: float) -> float:
    return float(f"{x:.4g}")


def derive_limits(store: Store, machine: str, *, k: float = DEFAULT_K, danger_k: float | None = None,
                  least: int = DEFAULT_LEAST, point: str | None = None) -> dict:
    """The limits of every level of ``machine`` (at ``point``) from its healthy stored readings:
    ``{"alarms": [...], "too_few": [...], "healthy": n, "readings": n}``."""
    danger_k = 2 * k if danger_k is None else danger_k
    rows = store.history(machine, point)
    tops: dict[int, bool] = {}
    for r in rows:
        if r["id"] not in tops:
            reading = store.reading(r["id"]) or {}
            top = store.top_hypothesis(r["id"])
            tops[r["id"]] = not reading.get("withheld") and (top is None or top["certainty"] is None
                                                             or top["certainty"] < CONFIDENT)
    series: dict[tuple[str, str], list[tuple[str, float]]] = {}
    for r in rows:
        if not tops[r["id"]]:
            continue
        for name, value in r["indicators"].items():
            if band_of(name) is not None:
                series.setdefault((r["point"] or r["channel"], name), []).append((r["taken_at"], float(value)))
    alarms, too_few = [], []
    for (at, name), items in sorted(series.items()):
        band, quantity = band_of(name)  # type: ignore[misc]  # only named bands were collected
        values = np.array([v for _, v in items])
        if len(values) < least:
            too_few.append({"point": at, "band": band, "quantity": quantity, "healthy": len(values),
                            "why": f"{len(values)} healthy reading(s), {least} needed"})
            continue
        mean, measured = float(values.mean()), float(values.std(ddof=1))
        sd = max(measured, MIN_SPREAD_FRACTION * abs(mean))
        if not sd > 0:
            too_few.append({"point": at, "band": band, "quantity": quantity, "healthy": len(values),
                            "why": "the healthy readings do not vary: no spread to set a limit by"})
            continue
        first, last = min(t for t, _ in items)[:10], max(t for t, _ in items)[:10]
        floored = "" if sd == measured else (f"; measured {measured:.3g}, raised to "
                                             f"{MIN_SPREAD_FRACTION * 100:.0f} % of the mean, the repeatability "
                                             f"of route readings")
        alarms.append({"point": at, "band": band, "quantity": quantity,
                       "alert": _significant(mean + k * sd), "danger": _significant(mean + danger_k * sd),
                       "source": f"mean {mean:.4g} + {k:g} / {danger_k:g} sd ({sd:.3g}{floored}) of {len(values)} "
                                 f"healthy readings, {first} to {last}, store {store.path.name} (common practice)"})
    return {"alarms": alarms, "too_few": too_few, "healthy": sum(tops.values()), "readings": len(tops),
            "k": k, "danger_k": danger_k, "least": least}


def alarm_file_text(machine: str, derived: dict, store_name: str) -> str:
    """A site alarm file (``alarms.schema.json``) of the derived limits, the levels left out as comments."""
    import yaml

    when = datetime.now(UTC).isoformat(timespec="minutes")
    head = [f"# Alarm limits of {machine} derived from its own history ({when}): alert at mean + "
            f"{derived['k']:g} sd, danger at mean + {derived['danger_k']:g} sd of its healthy readings",
            f"# (sd at least {MIN_SPREAD_FRACTION * 100:.0f} % of the mean: route readings rarely repeat better)",
            f"# ({derived['healthy']} healthy of {derived['readings']} stored; healthy: no hypothesis at "
            f"{CONFIDENT:.0%} or more, not withheld). Check them before use."]
    head += [f"# no limit for {x['point']} {x['band']} {x['quantity']}: {x['why']}" for x in derived["too_few"]]
    body = {"about": f"Derived by tellwave alarms derive from store {store_name}",
            "machines": {machine: [{k: a[k] for k in ("point", "band", "quantity", "alert", "danger", "source")}
                                   for a in derived["alarms"]]}}
    return "\n".join(head) + "\n" + yaml.safe_dump(body, sort_keys=False, allow_unicode=True, width=120)
