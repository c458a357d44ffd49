"""``diagnose --store``: diagnose one reading with its history, then store it."""

from __future__ import annotations

import time
from pathlib import Path


def diagnose_and_store(reading, machine, reasoner, *, files, store_path, how: dict, site=(), taken_at=None,
                       plots: bool = False, plot_channels: tuple[str, ...] | None = None, units=None):
    """Diagnose ``reading`` beside the machine's stored history, then store it.

    ``files`` are the reading's files, ``how`` the options it was read with (unit, speed, sample rate,
    scale, point, direction, channels): with the files, the machine and the rulebooks (``site``) they make
    the key that tells a reading already stored. ``taken_at`` is a stated time, else the file's own.
    ``plot_channels``: the channels the report plots (``document_of``).
    Returns (Diagnosis, report document with a ``trend`` section when a history exists, what was stored:
    id, store, taken_at, time_from, moved_from), the document in ``units`` (``ShownUnits``; the store keeps
    the one in Hz and mm/s RMS).

    The same reading stored before at another time is moved to the stated time (``moved_from`` says from
    where): stating a time again is how a wrong one is corrected, and the key of a reading holds no time.
    A move past the day of a finding that judges the reading is refused (a UsageError): the finding would
    judge a reading taken after the machine was opened.
    """
    from ..advice import load_advice, zone_scale
    from ..history.record import content_hash, reading_key, record_of, rulebooks_hash
    from ..history.store import Store, default_store_path
    from ..history.times import reading_time
    from ..trend.acting import raises_of
    from ..trend.diagnosis import HistoryLink
    from . import diagnose, document_of

    start = time.perf_counter()
    recording = content_hash(files)
    digest = reading_key(files, machine.source, how, rulebooks_hash(tuple(site or ())))
    when, origin = reading_time(taken_at, "command line", reading, files[0], None,
                                what="--taken-at" if taken_at is not None else f"{Path(files[0]).name}: time")
    advice = load_advice()
    with Store(store_path or default_store_path()) as store:
        known = store.stored_time(digest, recording, machine.name)
        if known is not None and origin == "file modified":     # stored before with a better time: keep it
            when, origin = known
        moved_from = known[0] if known is not None and known[0] != when else None
        if moved_from is not None:
            _check_move(store, digest, recording, machine.name, when)
        link = HistoryLink(store, machine, zone_scale(machine, advice), content_hash=digest, taken_at=when, plots=plots,
                           recording_hash=recording, units=units)
        d = diagnose(reading, machine, reasoner, advice_data=advice, plots=plots, more_facts=link, taken=(when, origin))
        doc = document_of(d, plot_channels=plot_channels)
        if link.doc is not None:
            link.govern(doc["verdict"]["urgency"], raises_of(d.reasoning, advice))
            doc["trend"] = link.doc
        record = record_of(doc, d.facts, content_hash=digest, taken_at=when, time_from=origin,
                           machine_file=machine.source, elapsed_s=time.perf_counter() - start, recording_hash=recording,
                           reasoning=d.reasoning, spectra=d.spectra,
                           forcing=d.forcing)
        rid = store.add(record, replace=True)
        stored = {"id": rid, "store": str(store.path), "taken_at": when, "time_from": origin, "moved_from": moved_from}
    if units is not None and not units.default:
        trend = {"trend": link.shown_in(units)} if "trend" in doc else {}
        doc = document_of(d, made_at=doc["made_at"], plot_channels=plot_channels, units=units) | trend
    return d, doc, stored


def _check_move(store, digest: str, recording: str, machine: str, when: str) -> None:
    """Refuse to move a stored reading (of this key, or these files of ``machine``) past the day of a finding
    that judges it."""
    from ..common.errors import UsageError

    for f in store.findings(machine):
        row = store.reading(f["reading_id"])
        mine = row is not None and (row["content_hash"] == digest or row["recording_hash"] == recording)
        if mine and f["found_on"][:10] < when[:10]:
            raise UsageError(f"--taken-at {when}: reading {f['reading_id']} is stored at {f['taken_at']} and judged "
                             f"by finding {f['id']} (found {f['found_on']}); a reading cannot move after the day "
                             f"its machine was opened: forget the finding first (`tellwave findings delete "
                             f"{f['id']}`), or leave out --taken-at")
