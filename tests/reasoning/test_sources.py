"""Every source a report or ``rulebook explain`` shows names a publication (an author and year, a
standard's number) or says "common practice"; no shipped source says "from memory".

The tests named ``test_N_*`` reproduce issue 13's report defects and keep their names.
"""

from __future__ import annotations

import re

import pytest

from engine.reasoning import load_rulebook

from support import ROOT


def _sources(data, parent=None):
    """(where, text) of every provenance ``source`` (and ``sources`` entry); a ``source`` inside a
    rule's ``where`` is a fact's field, not a provenance."""
    if isinstance(data, dict):
        for key, value in data.items():
            if key == "source" and parent != "where" and isinstance(value, str):
                yield key, value
            elif key == "sources" and isinstance(value, dict):
                yield from ((f"sources.{k}", v) for k, v in value.items())
            else:
                yield from _sources(value, key)
    elif isinstance(data, list):
        for value in data:
            yield from _sources(value, parent)


SHIPPED_YAML = sorted((ROOT / "rulebooks").rglob("*.yaml"))


# a publication: an author and year, a standard's number; else the trade's common practice
PUBLISHED = re.compile(r"common practice|\b(?:1[89]|20)\d\d\b|\b(?:ISO|IEC|ASTM|IEEE) ?[A-Z]?\d")


@pytest.mark.parametrize("path", SHIPPED_YAML, ids=lambda p: p.relative_to(ROOT / "rulebooks").as_posix())
def test_6_no_shipped_source_says_from_memory(path):
    import yaml

    found = list(_sources(yaml.safe_load(path.read_text())))
    assert all("memory" not in text.lower() for _, text in found), \
        [where for where, text in found if "memory" in text.lower()]


def test_6_every_source_a_report_or_rulebook_explain_shows_names_a_publication_or_common_practice():
    from engine.advice import load_advice
    from engine.planner.policy import load_policy

    book = load_rulebook()
    shown = [(r.id, r.source) for r in book.rules] + [(f"param.{p.name}", p.source) for p in book.parameters.values()]
    advice = load_advice()
    shown += [(f"oil test {k}", t["source"]) for k, t in advice["oil_tests"].items()]
    shown += [("ISO 20816-3 table", advice["iso_20816_3"]["source"])]
    policy = load_policy()      # the keys whose source the plan's reasons quote (engine/planner/propose.py)
    shown += [(f"policy {k}", policy.source_of(k)) for k in ("sample_rate_per_fmax", "window", "averages")]
    bad = [(what, " ".join(text.split())) for what, text in shown if not PUBLISHED.search(" ".join(text.split()))]
    assert not bad, bad
