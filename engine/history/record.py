"""What the store keeps of one diagnosis: the one place that reads evidence facts and the
report document for the history, so a change of field names touches only this module.

A record is plain data (it crosses process boundaries in a route): the
machine, the time, overall levels and key indicators per channel, the
hypotheses with certainty and the verdict.
"""

from __future__ import annotations

import hashlib
import os
from pathlib import Path
from typing import TYPE_CHECKING

from ..common.errors import ReadingError
from ..common.jsonout import canonical
from ..readings import SCALE_ISSUES, sidecar_path

if TYPE_CHECKING:
    from ..reasoning.findings import Reasoning

# name -> (label with unit, what it is); the trend stage reads these names
INDICATORS: dict[str, tuple[str, str]] = {
    "velocity_rms_mm_s": ("velocity, mm/s RMS", "overall velocity in the ISO 20816-3 band"),
    "accel_peak_g": ("acceleration peak, g", "largest absolute acceleration in the waveform"),
    "accel_rms_g": ("acceleration RMS, g", "acceleration RMS over the whole band"),
    "crest_factor": ("crest factor", "acceleration peak over RMS"),
    "kurtosis": ("kurtosis", "kurtosis of acceleration (3 for Gaussian)"),
    "ring_band_g": ("ring band, g RMS", "acceleration RMS in the kurtogram's band, where the bearing's impacts ring "
                    "(the band is chosen anew for each reading)"),
    "ring_band_kurtosis": ("ring band spectral kurtosis", "spectral kurtosis of that band (0 for Gaussian noise)"),
    "x1_mm_s": ("1X, mm/s RMS", "1X of the shaft the point's bearing carries"),
    "x2_mm_s": ("2X, mm/s RMS", "2X of that shaft"),
}
BEARING_DEFECTS = ("BPFO", "BPFI", "BSF", "FTF")
for _d in BEARING_DEFECTS:
    INDICATORS[f"env_{_d}_db"] = (f"envelope {_d}, dB over floor",
                                  f"best {_d} line of the squared envelope spectrum, bearing at the point")
    INDICATORS[f"tone_{_d}_g"] = (f"{_d} in the spectrum, g peak", f"{_d} tone of the bearing at the point")

BAND_UNITS = {"mm_s": "mm/s RMS", "g": "g RMS"}     # a site alarm band's indicator: band[BAND]_mm_s or _g


def indicator_label(indicator: str) -> str:
    """An indicator's name as reports show it: a site alarm band's ``band[2000-6000 Hz]_g`` as
    "band 2000-6000 Hz, g RMS" (engine.machine.alarms names them), any other as INDICATORS says."""
    if indicator.startswith("band[") and "]_" in indicator:
        band, unit = indicator[len("band["):].rsplit("]_", 1)
        return f"band {band}, {BAND_UNITS.get(unit, unit)}"
    return INDICATORS.get(indicator, (indicator, ""))[0]


OVERALL = ("velocity_rms_mm_s", "accel_peak_g", "accel_rms_g", "crest_factor", "kurtosis")
RING_BAND = ("ring_band_g", "ring_band_kurtosis")


def is_level(indicator: str) -> bool:
    """Whether an indicator is an absolute level (its unit, mm/s or g, is in its name): wrong by the
    same factor as a wrong unit, sensitivity or gain. Crest factor, kurtosis and dB over a floor are not."""
    return indicator.endswith(("_mm_s", "_g"))


def content_hash(paths) -> str:
    """SHA-256 over the bytes of the reading files and their sidecars, in order: the same
    recording with the same settings hashes alike wherever it lies."""
    h = hashlib.sha256()
    for p in paths:
        for f in (Path(p), sidecar_path(p)):
            if os.path.isfile(f):       # as the reader looks: a name the system cannot hold is no sidecar
                h.update(b"reading" if f == Path(p) else b"sidecar")
                try:
                    with open(f, "rb") as fh:
                        for block in iter(lambda: fh.read(1 << 20), b""):
                            h.update(block)
                except OSError as exc:
                    raise ReadingError(f"cannot read ({exc.strerror or exc.__class__.__name__})",
                                       path=str(f)) from None
    return h.hexdigest()


def _file_digest(path) -> str:
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for block in iter(lambda: fh.read(1 << 20), b""):
            h.update(block)
    return h.hexdigest()


def rulebooks_hash(site=()) -> str:
    """SHA-256 over every shipped rulebook and advice file and each site overlay, in load order:
    a changed rule or threshold makes every stored diagnosis one to do again."""
    from ..common.paths import RULEBOOKS
    from ..reasoning.rulebook import rulebook_files

    files = sorted(f for f in RULEBOOKS.rglob("*") if f.suffix in (".yaml", ".yml") and f.is_file())
    files += rulebook_files(*site) if site else []
    h = hashlib.sha256()
    for f in files:
        h.update(Path(f).name.encode("utf-8", "backslashreplace") + b"\0" + _file_digest(f).encode())
    return h.hexdigest()


def reading_key(paths, machine_file, how: dict, rulebooks: str) -> str:
    """The key a diagnosis is stored and resumed by: what was read (``content_hash``), of which machine
    (its file's content), how (``how``: point mapping, unit, speed, sample rate, scale... as the route or
    command line states them; None values left out) and by which rules (``rulebooks_hash``). The same
    file read for another machine, with another unit or under other rules is another diagnosis."""
    stated = {k: v for k, v in sorted(how.items()) if v not in (None, {}, [], ())}
    parts = {"recording": content_hash(paths), "machine": _file_digest(machine_file), "how": stated,
             "rulebooks": rulebooks}
    return hashlib.sha256(canonical(parts).encode("utf-8", "backslashreplace")).hexdigest()


def indicators_of(facts: list[dict]) -> tuple[list[dict], list[dict]]:
    """The channels of a reading and the key indicators of each, from its evidence facts.

    A level the evidence left out (None: the channel's scale is not trusted) is not an
    indicator: it is not stored, so no trend or route summary reads it as a measurement;
    the channel says ``scale_trusted: False``.
    """
    channels, values = [], []
    overall = {f["channel"]: f for f in facts if f["kind"] == "overall"}
    doubted = {f["channel"] for f in facts if f["kind"] == "data_quality" and f["issue"] in SCALE_ISSUES}
    for name, o in overall.items():
        channels.append({"channel": name, "point": o.get("point") or "", "direction": o.get("direction") or "",
                         "location": o.get("location") or "", "scale_trusted": name not in doubted})
        values += [{"channel": name, "name": k, "value": o[k]} for k in OVERALL if o.get(k) is not None]
        if o.get("ring_band_hi_hz"):       # 0: no bearing rate, no band chosen
            values += [{"channel": name, "name": k, "value": o.get(k)} for k in RING_BAND]
        shaft, bearing = o.get("location_shaft"), o.get("location")
        for f in facts:
            if f.get("channel") != name:
                continue
            if f["kind"] == "tone" and f["name"] == "1X" and f["component"] == shaft:
                values.append({"channel": name, "name": "x1_mm_s", "value": f["amplitude_mm_s"]})
            elif f["kind"] == "harmonic_series" and f["source"] == "1X" and f["component"] == shaft:
                values.append({"channel": name, "name": "x2_mm_s",
                               "value": None if f["first_mm_s"] is None else f["first_mm_s"] * f["second_to_first"]})
            elif f["kind"] == "tone" and f["name"] in BEARING_DEFECTS and f["component"] == bearing:
                values.append({"channel": name, "name": f"tone_{f['name']}_g", "value": f["amplitude_g"]})
        best: dict[str, float] = {}
        for f in facts:
            if f["kind"] == "envelope_tone" and f.get("channel") == name and f["component"] == bearing:
                best[f["defect"]] = max(best.get(f["defect"], -1e9), f["max_snr_db"])
        values += [{"channel": name, "name": f"env_{d}_db", "value": v} for d, v in best.items()]
    seen, unique = set(), []
    for v in values:           # one value per channel and name (the first wins); None or NaN is no value
        key = (v["channel"], v["name"])
        if key not in seen and v["value"] is not None and v["value"] == v["value"]:
            seen.add(key)
            unique.append({**v, "value": float(v["value"])})
    return channels, unique


def spectra_of(spectra, channels: set[str]) -> list[dict]:
    """The compact spectra of the stored ``channels`` as plain data: amplitudes as little-endian float32
    bytes (a record crosses process boundaries). A channel whose scale is not trusted keeps no spectrum:
    its amplitudes are wrong by the same factor as its levels."""
    import numpy as np

    return [{"channel": sp.channel, "quantity": sp.quantity, "unit": sp.unit, "step_hz": float(sp.step_hz),
             "resolution_hz": float(sp.resolution_hz), "shaft": sp.shaft, "at": sp.at,
             "amplitudes": np.asarray(sp.amplitude, dtype="<f4").tobytes()}
            for sp in spectra if sp.channel in channels]


def record_of(doc: dict, facts: list[dict], *, content_hash: str, taken_at: str, time_from: str,
              machine_file: str | None, elapsed_s: float, recording_hash: str | None = None,
              reasoning: Reasoning | None = None, spectra=None, forcing=()) -> dict:
    """The stored record of one diagnosis (``doc`` from ``pipeline.document_of``); with its ``reasoning``,
    the rule firings the learning counts (``learning.firings_of``), stored beside the reading; with its
    ``spectra`` (``Diagnosis.spectra``: ``analysis.compact.CompactSpectrum``), each stored channel's compact
    spectrum as float32 bytes, and the reading's ``forcing`` frequencies."""
    from ..reasoning.learning import firings_of

    channels, values = indicators_of(facts)
    known = {(v["channel"], v["name"]) for v in values}
    for a in (doc.get("alarms") or {}).get("results", []):    # a site alarm's band value, so limits can be derived
        if a["value"] is not None and (a["channel"], a["indicator"]) not in known:
            known.add((a["channel"], a["indicator"]))
            values.append({"channel": a["channel"], "name": a["indicator"], "value": float(a["value"])})
    zones = {z["channel"]: z["zone"] for z in doc["zones"]["points"]}
    for c in channels:
        c["zone"] = zones.get(c["channel"])
    top = doc["hypotheses"][0] if doc["hypotheses"] else None
    refined = next((f.get("speed_rpm") for f in facts if f["kind"] == "acquisition"), None)
    return {
        "content_hash": content_hash,       # the diagnosis's key (``reading_key``)
        "recording_hash": recording_hash or content_hash,    # the files read (``content_hash``)
        "machine": doc["machine"]["name"],
        "machine_file": machine_file,
        "source": doc["reading"]["source"],
        "taken_at": taken_at,
        "time_from": time_from,
        "speed_rpm": refined if refined else doc["reading"]["speed_rpm"],   # as refined from 1X, else as stated
        "fs_hz": doc["reading"]["fs_hz"],
        "duration_s": doc["reading"]["duration_s"],
        "elapsed_s": round(elapsed_s, 4),
        "verdict": {"urgency": doc["verdict"]["urgency"]["id"], "urgency_label": doc["verdict"]["urgency"]["label"],
                    "worst_zone": doc["zones"]["worst"], "withheld": doc["verdict"]["withheld"],
                    "summary": doc["verdict"]["summary"]},
        "top": None if top is None else {"fault": top["fault"], "fault_name": top["fault_name"],
                                         "component": top["component"], "certainty": top["certainty"]},
        "channels": channels,
        "indicators": values,
        "hypotheses": [{"rank": h["rank"], "fault": h["fault"], "fault_name": h["fault_name"],
                        "component": h["component"], "certainty": h["certainty"], "urgency": h["urgency"]["id"]}
                       for h in doc["hypotheses"]],
        "spectra": None if spectra is None else spectra_of(
            spectra, {c["channel"] for c in channels if c["scale_trusted"]}),
        "forcing": [{"name": f.name, "component": f.component, "family": f.family, "shaft": f.shaft,
                     "frequency_hz": float(f.frequency_hz)} for f in forcing],
        # the site alarms the reading was judged by, as applied (machine file and --alarms files), one row each
        "alarms": sorted({(a["point"], a["band"], a["quantity"]): {
            k: a[k] for k in ("point", "band", "quantity", "unit", "indicator", "alert", "danger", "source", "set_at")}
            for a in (doc.get("alarms") or {}).get("results", [])}.values(),
            key=lambda a: (a["point"], a["band"], a["quantity"])),
        "firings": None if reasoning is None else [
            {"rule_id": f.rule_id, "fault": f.fault, "component": f.component, "certainty": f.certainty,
             "hypothesis_certainty": f.hypothesis_certainty} for f in firings_of(reasoning)],
    }
