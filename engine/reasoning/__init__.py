"""Reasoning: YAML rulebooks compiled to durable-rules, certainty factors and the trail.

    rulebook = load_rulebook(site_folder)        # shipped rulebooks plus overlays, checked
    reasoner = Reasoner(rulebook)                # compile once
    result = reasoner.reason(evidence_facts)     # one isolated diagnosis -> Reasoning
"""

from ..common.errors import ReasoningError
from .certainty import CONFIDENT, LIKELY, POSSIBLE, combine, combine_all, ramp, word_for
from .engine import Reasoner
from .findings import Firing, Hypothesis, Reasoning
from .rulebook import SHIPPED, Rule, Rulebook, load_rulebook

__all__ = ["CONFIDENT", "LIKELY", "POSSIBLE", "combine", "combine_all", "ramp", "word_for", "Reasoner",
           "ReasoningError", "Firing", "Hypothesis", "Reasoning", "SHIPPED", "Rule", "Rulebook", "load_rulebook"]
