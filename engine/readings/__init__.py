"""Reading files -> one ``Reading`` value with channels in SI units and quality notes.

Metadata is merged in this order, later winning: what the file states, the
sidecar ``<file>.yaml`` next to it, the caller's options. Anything the engine
needs and nobody states (sample rate, unit, WAV scale) is a ``ReadingError``
that names the file and says how to supply it. Values are checked here, at
the edge, so that the analysis can trust plain finite arrays.
"""

from __future__ import annotations

import math
import os
from dataclasses import replace
from pathlib import Path

import numpy as np

from ..common import units
from ..common.errors import ReadingError, UsageError
from ..common.infile import regular_file
from ..common.yamlfile import read_yaml, validate
from ..machine import check_speed_rpm
from .columns import apply_column_map
from .fit import check_phase, check_points
from .formats import GZIP_READERS, RawReading, check_raw, reader_of, reading_suffixes
from .length import MIN_SAMPLES, check_record_length
from .limits import MAX_FILE_BYTES, MAX_SAMPLE_RATE_HZ, MIN_SAMPLE_RATE_HZ, sample_limit
from .model import Channel, PhaseReading, QualityIssue, Reading
from .quality import SCALE_ISSUES, check_channel, check_resolution, describe_issue, scale_doubts

__all__ = ["Channel", "MIN_SAMPLES", "QualityIssue", "Reading", "SCALE_ISSUES", "check_points", "check_record_length",
           "check_resolution", "combine_readings", "describe_issue", "load_reading", "scale_doubts",
           "select_channels", "sidecar_path",
           "PhaseReading", "phase_entries", "with_phase", "check_phase"]


def sidecar_path(path) -> Path:
    """Where the sidecar of a reading lives: ``pump.wav`` -> ``pump.wav.yaml``."""
    return Path(str(Path(path)) + ".yaml")     # "/" has no name to extend; its sidecar would be "/.yaml"


def _read_sidecar(path) -> tuple[dict, tuple[PhaseReading, ...]]:
    side = sidecar_path(path)
    if not os.path.lexists(side):
        return {}, ()
    doc = read_yaml(side, ReadingError)
    if doc.data is None:
        return {}, ()
    if not isinstance(doc.data, dict):
        raise ReadingError("a sidecar is a mapping of fields (sample_rate_hz, unit, ...)", path=str(side), line=1)
    validate(doc, "sidecar.schema.json", ReadingError)
    return doc.data, phase_entries(doc.data.get("phase_1x") or [], doc.path,
                                   lambda i: doc.line_of(["phase_1x", i]))


def phase_entries(entries: list[dict], file: str, line_of) -> tuple[PhaseReading, ...]:
    """``phase_1x`` entries of a sidecar or route (already schema-checked) -> ``PhaseReading``s.

    ``line_of(i)`` is the line of entry ``i``, so a later check against the machine
    (``fit.check_phase``) can name it.
    """
    return tuple(PhaseReading(point=str(e["point"]), direction=e.get("direction"), phase_deg=float(e["phase_deg"]),
                              amplitude_mm_s_rms=(float(e["amplitude_mm_s_rms"]) if "amplitude_mm_s_rms" in e
                                                  else None),
                              file=file, line=line_of(i))
                 for i, e in enumerate(entries))


def with_phase(reading: Reading, phase: tuple[PhaseReading, ...]) -> Reading:
    """``reading`` with ``phase`` (a route's entries) in place of its own for the same point and direction."""
    if not phase:
        return reading
    given = {(p.point, p.direction) for p in phase}
    kept = tuple(p for p in reading.phase_1x if (p.point, p.direction) not in given)
    return replace(reading, phase_1x=kept + tuple(phase))


def _check_file(path: str) -> None:
    info = regular_file(path, ReadingError, "reading file")
    if info.st_size == 0:
        raise ReadingError("the file is empty", path=path)
    if info.st_size > MAX_FILE_BYTES:
        raise ReadingError(f"the file is larger than {MAX_FILE_BYTES >> 20} MiB; cut the record", path=path)


def load_reading(path, *, sample_rate_hz: float | None = None, unit: str | None = None,
                 scale: float | None = None, point: str | None = None,
                 direction: str | None = None, speed_rpm: float | None = None,
                 channels: list[str] | None = None, max_samples: int | None = None) -> Reading:
    """Load a reading file (WAV, CSV, NPY, NPZ, MAT, UFF 58; CSV gzipped too, ``.csv.gz``) and run the quality gates.

    ``max_samples`` raises (or lowers) the samples a channel may hold
    (``engine.readings.limits``); a file that declares more is refused
    before its samples are unpacked.

    ``channels`` keeps only the channels named (see ``select_channels``):
    each by its name (as the sidecar gives it, or as the file does), by its
    measurement point, or by the end of its name (``DE_time`` picks
    ``X130_DE_time``).
    """
    path = str(path)
    reader, label = reader_of(path)
    _check_file(path)
    if reader is None:
        gz = (f" (gzip is read for {', '.join(sorted(s + '.gz' for s in GZIP_READERS))}; unpack other formats "
              "first)") if label.endswith(".gz") else ""
        raise ReadingError(f"unknown reading format {label!r}; expected one of "
                           f"{', '.join(sorted(reading_suffixes()))}{gz}", path=path)
    try:
        with np.errstate(all="ignore"):
            limit = sample_limit(max_samples)
            raw = check_raw(path, reader(path, limit), limit)
    except ReadingError:
        raise
    except Exception as exc:  # a foreign parser failing on corrupt bytes is bad input, not a bug
        raise ReadingError(f"cannot be read as {label} ({exc.__class__.__name__})", path=path) from None
    side, phase = _read_sidecar(path)
    if side.get("columns"):
        raw = apply_column_map(raw, side["columns"], path, str(sidecar_path(path)))
    reading = _assemble(path, raw, side, dict(
        sample_rate_hz=sample_rate_hz, unit=unit, scale=scale, point=point,
        direction=direction, speed_rpm=speed_rpm), channels)
    return replace(reading, phase_1x=phase) if phase else reading


def select_channels(source: str, channels: list[Channel], wanted: list[str],
                    file_names: list[str] | None = None) -> list[Channel]:
    """The channels ``wanted`` names, in the order asked, each once.

    A wanted name matches, in this order of preference: a channel's name
    (or the name the file itself gives it, ``file_names``), every channel at
    a measurement point of that id, or the one channel whose name ends with
    it. Anything else is a ``ReadingError`` listing the channels.
    """
    file_names = file_names or [c.name for c in channels]
    keep: list[int] = []
    for w in wanted:
        hits = [i for i, c in enumerate(channels) if w in (c.name, file_names[i])]
        if not hits:
            hits = [i for i, c in enumerate(channels) if c.point == w]
        if not hits:
            hits = [i for i, c in enumerate(channels) if c.name.endswith(w) or file_names[i].endswith(w)]
            if len(hits) > 1:
                names = ", ".join(channels[i].name for i in hits)
                raise ReadingError(f"more than one channel name ends with {w!r} ({names}); give the whole name",
                                   path=source)
        if not hits:
            known = ", ".join(c.name + (f" (point {c.point})" if c.point and c.point != c.name else "")
                              for c in channels)
            raise ReadingError(f"no channel matches {w!r}; channels are {known}", path=source)
        keep += [i for i in hits if i not in keep]
    return [channels[i] for i in keep]


def combine_readings(readings: list[Reading]) -> Reading:
    """Several files of one acquisition (one per point) -> one Reading with all channels.

    They must share the sample rate and length; channel names that repeat get
    the file's stem in front.
    """
    if len(readings) == 1:
        return readings[0]
    first = readings[0]
    for r in readings[1:]:
        if r.fs_hz != first.fs_hz or r.n_samples != first.n_samples:
            raise ReadingError(f"sample rate or length differs from {first.source} "
                               f"({r.fs_hz:g} Hz x {r.n_samples} against {first.fs_hz:g} Hz x "
                               f"{first.n_samples}); diagnose it on its own", path=r.source)
    names = [c.name for r in readings for c in r.channels]
    clash = {n for n in names if names.count(n) > 1}
    channels, quality = [], []
    for r in readings:
        prefix = Path(r.source).stem + ":"
        rename = {c.name: (prefix + c.name if c.name in clash else c.name) for c in r.channels}
        channels += [Channel(rename[c.name], c.samples, c.quantity, c.unit, c.point, c.direction,
                             c.full_scale_si) for c in r.channels]
        quality += [QualityIssue(q.kind, rename.get(q.channel, q.channel), q.message, q.value, q.blocking)
                    for q in r.quality]
    final = [c.name for c in channels]
    if len(set(final)) != len(final):
        raise ReadingError(f"channel names repeat across the files even with their file names in front: "
                           f"{sorted({n for n in final if final.count(n) > 1})}; rename them in the sidecars",
                           path=readings[-1].source)
    speeds = [r.speed_rpm for r in readings if r.speed_rpm]
    stamps = [r.timestamp for r in readings if r.timestamp is not None]   # the first file that states one
    return Reading(source=", ".join(r.source for r in readings), fs_hz=first.fs_hz,
                   channels=tuple(channels), speed_rpm=speeds[0] if speeds else None,
                   timestamp=stamps[0] if stamps else None, quality=tuple(quality),
                   phase_1x=tuple(p for r in readings for p in r.phase_1x))


def channel_entries(raw: RawReading, entries: list[dict], sidecar: str) -> list[dict]:
    """The sidecar's ``channels:`` entry of each of the file's channels, in the file's order ({} if none).

    An entry with a ``name`` describes the file's channel of that name; a
    name the file does not have is an error listing the names it has, so a
    sidecar written for another file (or in another order) cannot relabel
    one sensor's samples as another's. Entries without a name are taken by
    position (the first entry describes the file's first channel). Formats
    that name no channels (WAV, NPY, a CSV without a header row: ``ch1``,
    ``ch2``...) take every entry by position, and its ``name`` names the
    channel. A sidecar may describe only some channels: the others keep what
    the file and the sidecar's top-level fields say.
    """
    files = [str(n) for n in raw.names]
    if len(entries) > len(files):
        raise ReadingError(f"the sidecar lists {len(entries)} channels, the file has {len(files)} "
                           f"({', '.join(files)})", path=sidecar)
    per: list[dict | None] = [None] * len(files)
    for i, entry in enumerate(entries):
        name = entry.get("name")
        if name is not None and (raw.named or name in files):
            if name not in files:
                raise ReadingError(f"the sidecar describes channel {name!r}, which the file does not hold; "
                                   f"its channels are {', '.join(files)}", path=sidecar)
            j = files.index(name)
        else:
            j = i
        if per[j] is not None:
            raise ReadingError(f"two of the sidecar's channels entries describe the file's channel {files[j]!r} "
                               "(an entry with a name is matched by it, one without by its place)", path=sidecar)
        per[j] = entry
    return [e or {} for e in per]


def _pick(options: dict, side: dict, raw_meta: dict, key: str):
    for source in (options, side, raw_meta):
        if source.get(key) is not None:
            return source[key]
    return None


def _number(path: str, what: str, value) -> float:
    if isinstance(value, bool):
        raise ReadingError(f"{what} must be a number, got {value!r}", path=path)
    try:
        number = float(value)
    except (TypeError, ValueError, OverflowError):
        raise ReadingError(f"{what} must be a number, got {value!r}", path=path) from None
    if not math.isfinite(number):
        raise ReadingError(f"{what} must be a finite number, got {value!r}", path=path)
    return number


def _sample_rate(path: str, raw: RawReading, side: dict, options: dict) -> float:
    fs = _pick(options, side, {"sample_rate_hz": raw.fs_hz}, "sample_rate_hz")
    if fs is None:
        raise ReadingError("the sample rate is not stated; give --sample-rate or "
                           f"'sample_rate_hz' in {sidecar_path(path).name}", path=path)
    fs = _number(path, "sample rate", fs)
    if not MIN_SAMPLE_RATE_HZ <= fs <= MAX_SAMPLE_RATE_HZ:
        raise ReadingError(f"sample rate of {fs:g} Hz is outside {MIN_SAMPLE_RATE_HZ:g} Hz to "
                           f"{MAX_SAMPLE_RATE_HZ:g} Hz: check its unit (Hz, not kHz)", path=path)
    return fs


def _assemble(path: str, raw: RawReading, side: dict, options: dict,
              wanted: list[str] | None = None) -> Reading:
    fs = _sample_rate(path, raw, side, options)
    n = len(raw.arrays[0])
    if n < MIN_SAMPLES:
        raise ReadingError(f"holds only {n} samples; the analysis needs at least {MIN_SAMPLES}", path=path)

    entries = channel_entries(raw, side.get("channels") or [], str(sidecar_path(path)))
    scale = _pick(options, side, {}, "scale")
    if raw.full_scale is not None and scale is None:
        raise ReadingError("a WAV file holds no engineering scale; give --scale (units at full scale) "
                           f"or 'scale' in {sidecar_path(path).name}", path=path)
    scale = 1.0 if scale is None else _number(path, "scale", scale)
    if scale <= 0:
        raise ReadingError(f"scale must be positive, got {scale:g}", path=path)

    described = []
    for i, name in enumerate(raw.names):
        per = entries[i]
        file_unit = raw.units[i] if i < len(raw.units) else None
        unit_name = options["unit"] or per.get("unit") or side.get("unit") or file_unit
        if unit_name is None:
            raise ReadingError("the unit is not stated; give --unit (" + ", ".join(units.known_units())
                               + f") or 'unit' in {sidecar_path(path).name}", path=path)
        try:
            u = units.unit(unit_name)
        except UsageError as exc:
            raise ReadingError(exc.problem, path=path) from None
        file_point = raw.points[i] if i < len(raw.points) else None
        described.append(Channel(
            name=per.get("label") or per.get("name") or name, samples=raw.arrays[i], quantity=u.quantity, unit=u.name,
            point=options["point"] or per.get("point") or side.get("point") or file_point,
            direction=options["direction"] or per.get("direction") or side.get("direction"),
        ))
    names = [c.name for c in described]
    if len(set(names)) != len(names):
        raise ReadingError(f"channel names repeat: {names}", path=path)
    if wanted:
        described = select_channels(path, described, wanted, file_names=list(raw.names))

    channels = []
    for c in described:
        factor = scale * units.unit(c.unit).to_si
        samples = c.samples                    # float64 of this reading alone (check_raw): scaled in place
        if factor != 1.0:
            with np.errstate(over="ignore", under="ignore", invalid="ignore"):
                np.multiply(samples, factor, out=samples)   # an overflow becomes inf: the nonfinite gate reports it
        full_scale = None if raw.full_scale is None else raw.full_scale * factor
        channels.append(Channel(c.name, samples, c.quantity, c.unit, c.point, c.direction, full_scale))
    quality = tuple(q for ch in channels for q in check_channel(ch, fs))
    speed = _pick(options, side, raw.meta, "speed_rpm")
    if speed is not None:
        speed = check_speed_rpm(_number(path, "speed_rpm", speed), path, ReadingError)
    stamp = _pick(options, side, raw.meta, "timestamp")
    return Reading(source=path, fs_hz=fs, channels=tuple(channels), speed_rpm=speed,
                   timestamp=str(stamp) if stamp is not None else None, quality=quality)
