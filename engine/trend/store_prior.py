"""The remaining-life prior learned from the store's own histories.

A history is the run of one indicator at one point up to its end: a finding with a fault found at a
component the point sees (a recorded failure: the component was repaired that day, ``repairs``), or
the first reading at or past the limit the trend projects to (it ran to the limit). Each such
history gives, after its first predicting time, the line of log(y - healthy level) against days,
as the learning runs give it to ``degradation.learn_prior``. With at least ``min_histories``
(rulebooks/trend/onset.yaml) the prior is learned from them; else the shipped prior (or the vague
one) stays, and the trend says how many the store holds. The store is only read.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cache

import numpy as np

from .degradation import MIN_RUN_READINGS, Prior, learn_prior
from .health import ONSET_FILE, shipped_settings, smooth_log
from .onset import first_predicting_time
from .repairs import Repair
from .series import Series


@cache
def min_histories() -> int:
    """How many ended histories a store needs before its own prior is used (the shipped onset.yaml)."""
    return read_min_histories(ONSET_FILE)


def read_min_histories(path) -> int:
    """``store_prior.min_histories`` of an onset file; a RulebookError naming the file, line and field otherwise."""
    from ..common.errors import RulebookError
    from ..common.yamlfile import read_yaml

    doc = read_yaml(path, RulebookError)
    section = doc.data.get("store_prior") if isinstance(doc.data, dict) else None
    v = section.get("min_histories") if isinstance(section, dict) else None
    if isinstance(v, bool) or not isinstance(v, int) or not 2 <= v <= 1000:
        raise RulebookError(f"store_prior.min_histories: expected a whole number from 2 to 1000, got {v!r}",
                            path=doc.path, line=doc.line_of(["store_prior", "min_histories"]) or 1)
    return v


def _part(s: Series, keep: list[int]) -> Series:
    return Series(s.machine, s.point, s.indicator, tuple(s.times[i] for i in keep), s.values[keep],
                  tuple(s.reading_ids[i] for i in keep))


def ended_histories(s: Series, repairs: list[Repair], limit: float | None) -> list[Series]:
    """The parts of ``s`` that ended in a recorded failure (readings up to the day of a finding with a
    fault found at a component its point sees) or ran to ``limit`` (up to the first reading at or past it)."""
    out: list[Series] = []
    start: Repair | None = None        # the repair the current part starts after (``Repair.is_after``)
    for r in sorted((r for r in repairs if r.resets and r.sees(s.point)), key=lambda r: r.after):
        keep = [i for i, t in enumerate(s.times) if (start is None or start.is_after(t)) and not r.is_after(t)]
        if keep:
            out.append(_part(s, keep))
        start = r
    rest = [i for i, t in enumerate(s.times) if start is None or start.is_after(t)]
    if limit is not None:
        past = [j for j, i in enumerate(rest) if s.values[i] >= limit]
        if past:
            out.append(_part(s, rest[:past[0] + 1]))
    return out


def degradation_of(s: Series) -> tuple[np.ndarray, np.ndarray] | None:
    """(days since the first predicting time, log(y - healthy level)) of one history, or None when its
    health indicator never left the healthy band or too few readings follow."""
    settings = shipped_settings()
    v = s.values
    on = first_predicting_time(smooth_log(v, settings.smooth_readings), settings, single=smooth_log(v, 1),
                               days=s.days)
    if on.index is None or len(v) - on.index < MIN_RUN_READINGS:
        return None
    phi = float(np.median(v[:on.early]))
    floor = 0.1 * phi if phi > 0 else max(1e-12, 0.1 * float(np.max(np.abs(v))))
    days = s.days
    return days[on.index:] - days[on.index], np.log(np.maximum(v[on.index:] - phi, floor))


@dataclass(frozen=True)
class StorePrior:
    """What the store's histories gave for one indicator: the prior (None: too few) and a note for the trend."""
    indicator: str
    histories: int
    prior: Prior | None
    note: str


def store_prior(indicator: str, series: list[Series], repairs_by_machine: dict[str, list[Repair]],
                limit: float | None) -> StorePrior:
    """The prior of ``indicator`` from every stored series of it (``series``, of any machine), each cut into
    the histories that ended (``ended_histories``; ``repairs_by_machine``: machine -> its repairs)."""
    pairs, spacings = [], []
    for s in series:
        for h in ended_histories(s, repairs_by_machine.get(s.machine, []), limit):
            d = degradation_of(h)
            if d is not None:
                pairs.append(d)
                spacings.append(float(np.median(np.diff(h.days))))
    need = min_histories()
    if len(pairs) < need:
        return StorePrior(indicator, len(pairs), None,
                          f"{len(pairs)} histories of this store ended in a recorded failure or past the limit "
                          f"with a start of degradation; {need} are needed for a prior of its own")
    prior = learn_prior(pairs, f"prior learned from {len(pairs)} histories of this store",
                        float(np.median(spacings)))
    return StorePrior(indicator, len(pairs), prior, prior.source)


def learned_from_store(store, limits: dict[str, float], growth_of, repairs_of_machine) -> dict[str, StorePrior]:
    """For each limit of an indicator projected with the exponential model (``growth_of(name)``), what every
    stored history of it, on any machine of ``store``, gives (``store_prior``); ``repairs_of_machine``:
    machine -> its Repairs. The store is only read."""
    from .series import series_by_point

    wanted = [n for n in limits if growth_of(n) == "exponential"]
    if not wanted:
        return {}
    series: dict[str, list[Series]] = {n: [] for n in wanted}
    repairs: dict[str, list[Repair]] = {}
    for m in store.machines():
        for by_name in series_by_point(store.history(m), m).values():
            for n in wanted:
                if n in by_name:
                    series[n].append(by_name[n])
        repairs[m] = repairs_of_machine(m)
    return {n: store_prior(n, series[n], repairs, limits[n]) for n in wanted}
