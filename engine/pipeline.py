"""The whole job for one set of readings of one machine: reading -> evidence -> reasoning -> advice.

Each stage is a plain function of the previous stage's output; this module
only calls them in order (the CLI, the demo and the benches share it).
"""

from __future__ import annotations

from dataclasses import dataclass

from .advice import Advice, advise
from .evidence import build_contexts, run_extractors
from .machine import Machine
from .readings import Reading
from .reasoning import Reasoner, Reasoning


@dataclass(frozen=True)
class Diagnosis:
    machine: Machine
    reading: Reading
    facts: list[dict]
    reasoning: Reasoning
    advice: Advice
    figures: dict[str, str]


def diagnose(reading: Reading, machine: Machine, reasoner: Reasoner, advice_data: dict | None = None,
             plots: bool = False, more_facts=None) -> Diagnosis:
    """Diagnose ``reading`` of ``machine``; ``plots`` also draws the report's SVG figures.

    ``more_facts``, if given, is called with the evidence facts and returns
    further facts to reason over with them (``trend`` facts from the history).
    """
    rc = build_contexts(reading, machine)
    facts = run_extractors(rc)
    if more_facts is not None:
        facts = facts + list(more_facts(facts))
    reasoning = reasoner.reason(facts)
    advice = advise(machine, facts, reasoning, advice_data)
    figures = {}
    if plots:
        from .report.plots import figures_for
        figures = figures_for(rc, reasoning)
    return Diagnosis(machine, reading, facts, reasoning, advice, figures)


def document_of(d: Diagnosis) -> dict:
    from .report import report_document
    return report_document(d.machine, d.reading, d.facts, d.reasoning, d.advice, d.figures)
