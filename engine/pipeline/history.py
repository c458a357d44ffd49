"""``diagnose --store``: diagnose one reading with its history, then store it."""

from __future__ import annotations

import time
from pathlib import Path


def diagnose_and_store(args, reading, machine, reasoner, *, plots: bool):
    """(Diagnosis, report document with a ``trend`` section when a history exists); the reading is stored."""
    from ..advice import load_advice, zone_scale
    from ..history.record import content_hash, reading_key, record_of, rulebooks_hash
    from ..history.store import Store, default_store_path
    from ..history.times import reading_time
    from ..trend.diagnosis import HistoryLink
    from . import diagnose, document_of

    start = time.perf_counter()
    recording = content_hash(args.readings)
    how = {"unit": args.unit, "speed_rpm": args.rpm, "sample_rate_hz": args.sample_rate, "scale": args.scale,
           "point": args.point, "direction": args.direction, "channels": args.channels}
    digest = reading_key(args.readings, machine.source, how, rulebooks_hash(tuple(args.site or ())))
    when, origin = reading_time(args.taken_at, "command line", reading, args.readings[0], None,
                                what="--taken-at" if args.taken_at is not None else f"{Path(args.readings[0]).name}: time")
    advice = load_advice()
    with Store(args.store or default_store_path()) as store:
        known = store.stored_time(digest, recording, machine.name)
        if known is not None and origin == "file modified":     # stored before with a better time: keep it
            when, origin = known
        link = HistoryLink(store, machine, zone_scale(machine, advice), content_hash=digest, taken_at=when, plots=plots,
                           recording_hash=recording)
        d = diagnose(reading, machine, reasoner, advice_data=advice, plots=plots, more_facts=link, taken=(when, origin))
        doc = document_of(d)
        if link.doc is not None:
            doc["trend"] = link.doc
        record = record_of(doc, d.facts, content_hash=digest, taken_at=when, time_from=origin,
                           machine_file=machine.source, elapsed_s=time.perf_counter() - start, recording_hash=recording)
        store.add(record, replace=True)
    return d, doc
