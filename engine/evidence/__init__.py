"""Evidence: a reading plus a machine -> plain, typed facts (measured values, never verdicts).

``EXTRACTORS`` is the one registry: each entry names the fact kinds it
produces, and ``vocabulary.FACTS`` gives every field with its type and unit.
``extract_evidence`` runs the analysis once (``context.build_contexts``) and
every extractor over it, then gives each fact a stable ``id``.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

import numpy as np

from ..machine import Machine
from ..readings import Reading, check_record_length
from . import acquisition, envelope, impacts, levels, sidebands, tones
from .context import ReadingContext, build_contexts
from .vocabulary import FACTS, fields_of


@dataclass(frozen=True)
class Extractor:
    name: str
    run: Callable[[ReadingContext], list[dict]]
    kinds: tuple[str, ...]


EXTRACTORS = (
    Extractor("overall", levels.overall, ("overall",)),
    Extractor("tones", tones.tones, ("tone",)),
    Extractor("harmonic_series", tones.harmonic_series, ("harmonic_series",)),
    Extractor("subharmonics", tones.subharmonics, ("subharmonics",)),
    Extractor("nonsynchronous", tones.nonsynchronous, ("nonsynchronous",)),
    Extractor("sideband_family", sidebands.sideband_family, ("sideband_family",)),
    Extractor("envelope_tone", envelope.envelope_tone, ("envelope_tone",)),
    Extractor("load_zone_modulation", envelope.load_zone_modulation, ("load_zone_modulation",)),
    Extractor("impact_train", impacts.impact_train, ("impact_train",)),
    Extractor("once_per_rev_event", impacts.once_per_rev_event, ("once_per_rev_event",)),
    Extractor("direction_ratio", levels.direction_ratio, ("direction_ratio",)),
    Extractor("acquisition", acquisition.acquisition, ("acquisition",)),
    Extractor("data_quality", acquisition.data_quality, ("data_quality",)),
    Extractor("machine", acquisition.machine_class, ("machine",)),
)


def _plain(value):
    """numpy scalars -> Python scalars, so facts serialise and compare plainly."""
    if isinstance(value, (np.bool_, bool)):
        return bool(value)
    if isinstance(value, np.integer):
        return int(value)
    if isinstance(value, np.floating):
        return float(value)
    return value


def run_extractors(rc: ReadingContext, extractors=EXTRACTORS) -> list[dict]:
    """Run ``extractors`` over an analysed reading; number the facts kind by kind."""
    facts = []
    counts: dict[str, int] = {}
    for ex in extractors:
        for fact in ex.run(rc):
            kind = fact["kind"]
            counts[kind] = counts.get(kind, 0) + 1
            facts.append({k: _plain(v) for k, v in fact.items()} | {"id": f"{kind}-{counts[kind]}"})
    return facts


def extract_evidence(reading: Reading, machine: Machine) -> list[dict]:
    """Every evidence fact for ``reading`` of ``machine``."""
    check_record_length(reading, machine)
    return run_extractors(build_contexts(reading, machine))


__all__ = ["EXTRACTORS", "FACTS", "Extractor", "ReadingContext", "build_contexts",
           "extract_evidence", "fields_of", "run_extractors"]
