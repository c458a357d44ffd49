"""Evidence: a reading plus a machine -> plain, typed facts (measured values, never verdicts).

``EXTRACTORS`` is the one registry: each entry names the fact kinds it
produces, and ``vocabulary.FACTS`` gives every field with its type and unit.
Extractors read the analysis result (``engine.analysis.analyse``) and never
transform a signal themselves; ``run_extractors`` runs them all and gives
each fact a stable ``id``.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from ..analysis import Analysis, analyse
from ..machine import Machine
from ..readings import Reading, check_points, check_record_length, scale_doubts
from . import acquisition, envelope, impacts, levels, phase, sidebands, tones, unlisted
from .summary import Evidence, PointLevel, QualityNote, summarise
from .vocabulary import FACTS, fields_of, level_fields


@dataclass(frozen=True)
class Extractor:
    """One evidence extractor: its name, the function that reads an Analysis, the fact kinds it
    makes, and why it reports whatever the signal holds ("" when it reports only findings)."""
    name: str
    run: Callable[[Analysis], list[dict]]
    kinds: tuple[str, ...]
    always: str = ""      # why it reports whatever the signal holds (levels, settings); "" if it reports findings


EXTRACTORS = (
    Extractor("overall", levels.overall, ("overall",), always="every channel has overall levels"),
    Extractor("tones", tones.tones, ("tone",)),
    Extractor("harmonic_series", tones.harmonic_series, ("harmonic_series",)),
    Extractor("subharmonics", tones.subharmonics, ("subharmonics",)),
    Extractor("nonsynchronous", tones.nonsynchronous, ("nonsynchronous",)),
    Extractor("sideband_family", sidebands.sideband_family, ("sideband_family",)),
    Extractor("envelope", envelope.envelope_evidence, ("envelope_tone", "load_zone_modulation")),
    Extractor("impact_train", impacts.impact_train, ("impact_train",)),
    Extractor("envelope_family", unlisted.envelope_family, ("envelope_family",)),
    Extractor("once_per_rev_event", impacts.once_per_rev_event, ("once_per_rev_event",)),
    Extractor("direction_ratio", levels.direction_ratio, ("direction_ratio",),
              always="every location with several directions has its ratios"),
    Extractor("phase", phase.phase_facts, ("phase_1x", "phase_difference"),
              always="every 1X phase the reading gives is reported as given, with its differences"),
    Extractor("acquisition", acquisition.acquisition, ("acquisition",), always="every reading has its settings"),
    Extractor("speed_check", acquisition.speed_check, ("speed_check",), always="every reading has a speed"),
    Extractor("data_quality", acquisition.data_quality, ("data_quality",)),
    Extractor("machine", acquisition.machine_class, ("machine",), always="every diagnosis has its machine"),
    Extractor("drive_link", acquisition.drive_links, ("drive_link",),
              always="every coupling and belt drive of the machine file, whatever the signal"),
    Extractor("overhung_rotor", acquisition.overhung_rotors, ("overhung_rotor",),
              always="every rotor the machine file marks overhung, whatever the signal"),
)


_ALREADY_PLAIN = frozenset({str, float, int, bool, type(None), tuple, list})   # exactly these types, not subclasses


def _plain(value):
    """numpy scalars -> Python scalars, so facts serialise and compare plainly."""
    if type(value) in _ALREADY_PLAIN:        # most fields: no isinstance chain (numpy's float64 is not ``float``)
        return value
    if isinstance(value, (np.bool_, bool)):
        return bool(value)
    if isinstance(value, np.integer):
        return int(value)
    if isinstance(value, np.floating):
        return float(value)
    return value


def run_extractors(rc: Analysis, extractors=EXTRACTORS) -> list[dict]:
    """Run ``extractors`` over an analysed reading; number the facts kind by kind.

    A channel whose scale the quality gates doubt keeps its facts, but every
    field holding an absolute level (``vocabulary.level_fields``) is None in
    them: that value is not a measurement, so no rule can compare it (the
    reasoning engine drops None fields) and no later stage shows it as one.
    """
    doubted = scale_doubts(rc.quality)
    facts = []
    counts: dict[str, int] = {}
    for ex in extractors:
        for fact in ex.run(rc):
            kind = fact["kind"]
            counts[kind] = counts.get(kind, 0) + 1
            plain = {k: _plain(v) for k, v in fact.items()} | {"id": f"{kind}-{counts[kind]}"}
            if plain.get("channel") in doubted:
                plain |= {name: None for name in level_fields(kind) if name in plain}
            facts.append(plain)
    return facts


def extract_evidence(reading: Reading, machine: Machine) -> list[dict]:
    """Every evidence fact for ``reading`` of ``machine``."""
    check_points(reading, machine)
    check_record_length(reading, machine)
    return run_extractors(analyse(reading, machine))


__all__ = ["EXTRACTORS", "FACTS", "Evidence", "Extractor", "PointLevel", "QualityNote", "extract_evidence",
           "fields_of", "run_extractors", "summarise"]
