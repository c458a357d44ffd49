"""Reading files -> one ``Reading`` value with channels in SI units and quality notes.

Metadata is merged in this order, later winning: what the file states, the
sidecar ``<file>.yaml`` next to it, the caller's options. Anything the engine
needs and nobody states (sample rate, unit, WAV scale) is a ``ReadingError``
that names the file and says how to supply it.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from .. import units
from ..errors import ReadingError, UsageError
from ..yamlfile import read_yaml, validate
from .columns import apply_column_map
from .formats import READERS, RawReading
from .model import Channel, QualityIssue, Reading
from .quality import check_channel, check_resolution

MIN_SAMPLES = 64

__all__ = ["Channel", "QualityIssue", "Reading", "check_resolution", "combine_readings", "load_reading",
           "sidecar_path"]


def sidecar_path(path) -> Path:
    """Where the sidecar of a reading lives: ``pump.wav`` -> ``pump.wav.yaml``."""
    p = Path(path)
    return p.with_name(p.name + ".yaml")


def _read_sidecar(path) -> dict:
    side = sidecar_path(path)
    if not side.exists():
        return {}
    doc = read_yaml(side, ReadingError)
    if doc.data is None:
        return {}
    validate(doc, "sidecar.schema.json", ReadingError)
    return doc.data


def load_reading(path, *, sample_rate_hz: float | None = None, unit: str | None = None,
                 scale: float | None = None, point: str | None = None,
                 direction: str | None = None, speed_rpm: float | None = None,
                 channels: list[str] | None = None) -> Reading:
    """Load a reading file (WAV, CSV, NPY, NPZ, MAT, UFF 58) and run the quality gates.

    ``channels`` keeps only the channels named, each matched by its whole
    name or by the end of it (``DE_time`` picks ``X130_DE_time``).
    """
    path = str(path)
    p = Path(path)
    if not p.is_file():
        raise ReadingError("no such file", path=path)
    reader = READERS.get(p.suffix.lower())
    if reader is None:
        raise ReadingError(f"unknown reading format {p.suffix!r}; expected one of "
                           f"{', '.join(sorted(READERS))}", path=path)
    if p.stat().st_size == 0:
        raise ReadingError("the file is empty", path=path)
    try:
        raw = reader(path)
    except ReadingError:
        raise
    except Exception as exc:  # a foreign parser failing on corrupt bytes is bad input, not a bug
        raise ReadingError(f"cannot be read as {p.suffix.lstrip('.').upper()} "
                           f"({exc.__class__.__name__})", path=path) from None
    side = _read_sidecar(path)
    if side.get("columns"):
        raw = apply_column_map(raw, side["columns"], path, str(sidecar_path(path)))
    if channels:
        raw = _select(path, raw, channels)
    return _assemble(path, raw, side, dict(
        sample_rate_hz=sample_rate_hz, unit=unit, scale=scale, point=point,
        direction=direction, speed_rpm=speed_rpm))


def _select(path: str, raw: RawReading, wanted: list[str]) -> RawReading:
    keep = []
    for w in wanted:
        hits = [i for i, n in enumerate(raw.names) if n == w or n.endswith(w)]
        if len(hits) != 1:
            known = ", ".join(raw.names)
            problem = "no channel" if not hits else "more than one channel"
            raise ReadingError(f"{problem} matches {w!r}; channels are {known}", path=path)
        keep.append(hits[0])

    def pick(values):
        return [values[i] for i in keep] if values else values
    return RawReading(pick(raw.names), pick(raw.arrays), raw.fs_hz, pick(raw.units), raw.full_scale,
                      pick(raw.points), raw.meta)


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
    speeds = [r.speed_rpm for r in readings if r.speed_rpm]
    return Reading(source=", ".join(r.source for r in readings), fs_hz=first.fs_hz,
                   channels=tuple(channels), speed_rpm=speeds[0] if speeds else None,
                   timestamp=first.timestamp, quality=tuple(quality))


def _pick(options: dict, side: dict, raw_meta: dict, key: str):
    for source in (options, side, raw_meta):
        if source.get(key) is not None:
            return source[key]
    return None


def _assemble(path: str, raw: RawReading, side: dict, options: dict) -> Reading:
    fs = _pick(options, side, {"sample_rate_hz": raw.fs_hz}, "sample_rate_hz")
    if fs is None:
        raise ReadingError("the sample rate is not stated; give --sample-rate or "
                           f"'sample_rate_hz' in {sidecar_path(path).name}", path=path)
    try:
        fs = float(fs)
    except ValueError:
        raise ReadingError(f"sample rate must be a number, got {fs!r}", path=path) from None
    if not np.isfinite(fs) or fs <= 0:
        raise ReadingError(f"sample rate must be a positive number, got {fs}", path=path)
    n = len(raw.arrays[0])
    if n < MIN_SAMPLES:
        raise ReadingError(f"holds only {n} samples; at least {MIN_SAMPLES} are needed", path=path)

    side_channels = side.get("channels", [])
    if side_channels and len(side_channels) != len(raw.arrays):
        raise ReadingError(f"sidecar lists {len(side_channels)} channels, the file has {len(raw.arrays)}",
                           path=str(sidecar_path(path)))
    scale = _pick(options, side, {}, "scale")
    if raw.full_scale is not None and scale is None:
        raise ReadingError("a WAV file holds no engineering scale; give --scale (units at full scale) "
                           f"or 'scale' in {sidecar_path(path).name}", path=path)
    scale = 1.0 if scale is None else float(scale)

    channels = []
    for i, (name, x) in enumerate(zip(raw.names, raw.arrays)):
        per = side_channels[i] if side_channels else {}
        file_unit = raw.units[i] if i < len(raw.units) else None
        unit_name = options["unit"] or per.get("unit") or side.get("unit") or file_unit
        if unit_name is None:
            raise ReadingError("the unit is not stated; give --unit (" + ", ".join(units.known_units())
                               + f") or 'unit' in {sidecar_path(path).name}", path=path)
        try:
            u = units.unit(unit_name)
        except UsageError as exc:
            raise ReadingError(str(exc), path=path) from None
        file_point = raw.points[i] if i < len(raw.points) else None
        full_scale = None if raw.full_scale is None else raw.full_scale * scale * u.to_si
        channels.append(Channel(
            name=per.get("name", name),
            samples=np.asarray(x, dtype=float) * scale * u.to_si,
            quantity=u.quantity, unit=u.name,
            point=options["point"] or per.get("point") or side.get("point") or file_point,
            direction=options["direction"] or per.get("direction") or side.get("direction"),
            full_scale_si=full_scale,
        ))
    names = [c.name for c in channels]
    if len(set(names)) != len(names):
        raise ReadingError(f"channel names repeat: {names}", path=path)
    quality = tuple(q for ch in channels for q in check_channel(ch, fs))
    speed = _pick(options, side, raw.meta, "speed_rpm")
    if speed is not None:
        try:
            speed = float(speed)
        except ValueError:
            raise ReadingError(f"speed_rpm must be a number, got {speed!r}", path=path) from None
        if not (np.isfinite(speed) and speed > 0):
            raise ReadingError(f"speed_rpm must be positive, got {speed}", path=path)
    stamp = _pick(options, side, raw.meta, "timestamp")
    return Reading(source=path, fs_hz=fs, channels=tuple(channels), speed_rpm=speed,
                   timestamp=str(stamp) if stamp is not None else None, quality=quality)
