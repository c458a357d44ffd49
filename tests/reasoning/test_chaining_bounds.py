"""Forward chaining always ends: a rulebook whose rules feed each other in a ring is refused when it
is loaded (``rulebook check`` and ``diagnose`` alike), and the engine stops any reading that passes
its bounds on firings or time with a ReasoningError naming the rules that fired most."""

from __future__ import annotations

import json
import textwrap

import pytest

from engine.cli import main
from engine.common.errors import ReasoningError, RulebookError
from engine.reasoning import Reasoner, load_rulebook
from engine.reasoning import engine as reasoning_engine
from engine.reasoning import rulebook as rulebook_module

from support import ROOT

# The reproducer of the report: site.seed derives loopf from the machine; site.loop needs loopf and
# derives loopf, so each of its firings feeds the next (certainty 1 never fades to nothing).
RING = """
    rulebook: a rule that feeds itself
    faults:
      loop-fault: {name: loop fault, family: shaft}
    derived:
      loopf:
        about: a fact that feeds itself
        fields:
          name: {type: string, about: machine name}
          step: {type: string, about: which rule made it}
    rules:
      - id: site.seed
        title: seed
        source: test
        needs:
          - fact: machine
            as: m1
        derives:
          fact: loopf
          fields: {name: m1.name, step: seed}
        certainty: 1.0
        because: seed
      - id: site.loop
        title: loop
        source: test
        needs:
          - fact: loopf
            as: l
            where: {step: {one_of: [seed, LOOP_STEP]}}
        derives:
          fact: loopf
          fields: {name: l.name, step: LOOP_STEP}
        certainty: 1.0
        because: loop
    """

MACHINE = {"kind": "machine", "id": "machine-1", "name": "RW-2", "iso_group": 2, "support": "rigid",
           "driver_rpm": 1485.0, "gears": 0, "belts": 0, "motors": 1}


def _site(tmp_path, text: str):
    folder = tmp_path / "site"
    folder.mkdir(exist_ok=True)
    (folder / "site.yaml").write_text(textwrap.dedent(text), encoding="utf-8")
    return folder


def test_rulebook_check_refuses_a_rule_that_feeds_itself(tmp_path, capsys):
    folder = _site(tmp_path, RING.replace("LOOP_STEP", "loop"))
    assert main(["rulebook", "check", "--site", str(folder)]) == 5
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and "Traceback" not in err
    assert "site.yaml:" in err and "rule site.loop" in err and "started by site.seed" in err
    assert "never end" in err


def test_diagnose_refuses_the_ring_when_it_loads_the_rulebook(tmp_path):
    folder = _site(tmp_path, RING.replace("LOOP_STEP", "loop"))
    with pytest.raises(RulebookError, match="derivation ring"):
        load_rulebook(folder)


def test_a_ring_of_two_rules_is_named_rule_by_rule(tmp_path):
    text = """
        rulebook: two rules that feed each other
        derived:
          ping: {about: one side, fields: {name: {type: string, about: machine name}}}
          pong: {about: other side, fields: {name: {type: string, about: machine name}}}
        rules:
          - id: site.ping
            title: ping
            source: test
            needs: [{fact: pong, as: p}]
            derives: {fact: ping, fields: {name: p.name}}
            certainty: 1.0
            because: ping
          - id: site.pong
            title: pong
            source: test
            needs: [{fact: ping, as: p}]
            derives: {fact: pong, fields: {name: p.name}}
            certainty: 1.0
            because: pong
        """
    with pytest.raises(RulebookError, match=r"derivation ring site\.ping -> site\.pong -> site\.ping: "
                                            r"each derives a fact \(ping, pong\)"):
        load_rulebook(_site(tmp_path, text))


def test_a_chain_whose_derived_value_cannot_match_again_is_not_a_ring(tmp_path):
    # site.loop derives step "done", which its own condition (step one of seed, again) refuses
    book = load_rulebook(_site(tmp_path, RING.replace("LOOP_STEP", "done").replace("[seed, done]", "[seed, again]")))
    assert {"site.seed", "site.loop"} <= {r.id for r in book.rules}
    fired = [f.rule_id for f in Reasoner(book).reason([MACHINE]).chain]
    assert fired == ["site.seed", "site.loop"]


def _unchecked_ring(tmp_path, monkeypatch) -> Reasoner:
    """The ring, loaded past the check (as a rulebook built by other means could be)."""
    monkeypatch.setattr(rulebook_module, "_check_no_derivation_cycle", lambda rules: None)
    return Reasoner(load_rulebook(_site(tmp_path, RING.replace("LOOP_STEP", "loop"))))


def test_the_engine_stops_a_ring_at_its_firing_bound_and_names_the_rule(tmp_path, monkeypatch):
    reasoner = _unchecked_ring(tmp_path, monkeypatch)
    monkeypatch.setattr(reasoning_engine, "MAX_FIRINGS", 300)
    with pytest.raises(ReasoningError) as caught:
        reasoner.reason([MACHINE])
    message = str(caught.value)
    assert "after 300 rule firings" in message
    assert message.index("most fired: site.loop 299 times, site.seed 1 time") > 0
    # the reasoner is still usable, and the bound holds again on the next reading
    with pytest.raises(ReasoningError, match="after 300 rule firings"):
        reasoner.reason([MACHINE])


def test_the_engine_stops_a_ring_at_its_time_bound(tmp_path, monkeypatch):
    reasoner = _unchecked_ring(tmp_path, monkeypatch)
    monkeypatch.setattr(reasoning_engine, "MAX_FIRINGS", 10**9)
    monkeypatch.setattr(reasoning_engine, "MAX_SECONDS", 0.3)
    with pytest.raises(ReasoningError, match=r"after 0\.3 s \(\d[\d,]* rule firings\); most fired: site\.loop"):
        reasoner.reason([MACHINE])


def test_the_firing_bound_is_far_above_what_the_shipped_rulebooks_need(monkeypatch):
    """The golden evidence of two demo cases, shipped rulebooks and site overlay: the most firings
    one reading takes stays below a twentieth of the bound. Measured when the bound was set: 258
    and 29 here, at most 261 on every demo case, 369 over bench.confusion --quick."""
    counts = []
    admit = reasoning_engine._Session.admit

    def counting(session, rule):
        counts.append(rule.id)
        return admit(session, rule)

    monkeypatch.setattr(reasoning_engine._Session, "admit", counting)
    reasoner = Reasoner(load_rulebook(ROOT / "cases/site"))
    most = 0
    for name in ("rw2-pump-nde-outer-race", "ct1-bevel-tooth"):
        counts.clear()
        facts = json.loads((ROOT / "tests/end_to_end/golden" / f"{name}.facts.json").read_text())
        reasoner.reason(facts)
        most = max(most, len(counts))
    assert 50 < most <= reasoning_engine.MAX_FIRINGS / 20
