"""durable-rules 2.0.28 behaviours the compiler works round, each measured on the engine itself and then
through the Reasoner (the list is in engine/reasoning/engine.py's docstring)."""

from __future__ import annotations

import textwrap

import pytest

from engine.reasoning import Reasoner, load_rulebook
from engine.reasoning.engine import QuietHost
from support import tone_fact

EITHER = {"$or": [{"direction": "horizontal"}, {"direction": "vertical"}]}
TWICE = {"$gt": {"amp": {"$mul": {"$l": {"a": "amp"}, "$r": 2.0}}}}


def _fires(tests) -> bool:
    host, fired = QuietHost(), []
    host.set_rulesets({"t": {"r": {"all": [{"a": {"$and": [{"kind": "tone"}, {"ch": "A"}]}},
                                           {"b": {"$and": [{"kind": "tone"}, *tests]}}],
                                   "run": lambda c: fired.append(c.b["amp"])}}})
    for fact in ({"kind": "tone", "id": "1", "ch": "A", "amp": 5.0, "direction": "horizontal", "sid": "s"},
                 {"kind": "tone", "id": "2", "ch": "B", "amp": 0.9, "direction": "horizontal", "sid": "s"}):
        try:
            host.assert_fact("t", fact)
        except Exception:  # noqa: BLE001 - a fact no rule takes
            pass
    return bool(fired)


def test_the_engine_skips_a_join_after_an_or_and_keeps_it_before_one():
    assert _fires([EITHER, TWICE]), "the engine's behaviour changed: the compiler's ordering may be dropped"
    assert not _fires([TWICE, EITHER])


def test_a_rule_with_one_of_before_a_join_is_judged_by_the_join(tmp_path):
    rules = textwrap.dedent("""
        rulebook: join after one_of
        faults:
          wobble: {name: wobble, family: shaft}
        rules:
          - id: t.twice
            title: a radial 1X twice another channel's
            source: test
            needs:
              - fact: tone
                as: a
                where: {name: 1X}
              - fact: tone
                as: b
                where:
                  direction: {one_of: [horizontal, vertical]}
                  channel: {differs_from: a.channel}
                  amplitude_mm_s: {above: 2 * a.amplitude_mm_s}
            concludes: {fault: wobble, component: a.channel}
            certainty: 0.5
            because: "{b.channel} over {a.channel}"
        """)
    (tmp_path / "rb").mkdir()
    (tmp_path / "rb" / "rules.yaml").write_text(rules)
    reasoner = Reasoner(load_rulebook(tmp_path / "rb", shipped=False))

    facts = [tone_fact("tone-1", "P1H", 5.0), tone_fact("tone-2", "P2H", 0.9)]
    fired = {h.component for h in reasoner.reason(facts).hypotheses}
    assert fired == {"P2H"}        # only 5.0 > 2 x 0.9; 0.9 > 2 x 5.0 must not match
