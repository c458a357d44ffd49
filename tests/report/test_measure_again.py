"""'Measure again with' lists only what the user can change when measuring again.

A withheld diagnosis lists, under its reasons, the settings to change: each settings rule's
``measure_again`` sentence. Before, the list repeated the rules' ``because`` sentences, limits
included that no setting changes ("The impacts in X ring near 3500 Hz ... The envelope analysis is
not affected.", CWRU 197 with its unplaced channel; the reading problems shown just above already
said it). The same list in every format.
"""

from __future__ import annotations

import functools

from engine.machine import load_machine
from engine.pipeline import diagnose, document_of
from engine.readings import load_reading
from engine.report import render
from engine.simulation import as_reading, simulate

from support import CASES, MADE_AT, ROOT, TEST_MACHINES, reasoner

BW1 = CASES / "machines" / "bw1-backwash-blower.yaml"
RING = "reading.settings.samples-per-cycle"


@functools.cache
def _low_fmax():
    # BW-1 sampled at 160 Hz (Fmax 62.5 Hz): the settings cannot show the blower's faults (withheld)
    machine = load_machine(BW1)
    return diagnose(as_reading(simulate(machine, "outer-race", None, 2, None, 160.0, 16.0, 2)), machine, reasoner())


@functools.cache
def _ringing():
    # CWRU 130 (excerpt, tests/data/README.md) on the motor described without its bearings: withheld for the
    # part the file lacks; the impacts ring near the top of the band at 12 kHz (samples-per-cycle fires)
    return diagnose(load_reading(ROOT / "tests/data/cwru-130.npz"),
                    load_machine(TEST_MACHINES / "cwru-motor-unlisted.yaml"), reasoner())


def _settings_firings(d):
    return [f for h in d.reasoning.reading_problems if h.fault.startswith("settings-") for f in h.support]


def _section(text: str, start: str, end: str) -> str:
    return text[text.index(start):text.index(end, text.index(start))]


def test_the_list_holds_each_settings_rule_s_remedy_not_its_reasons():
    d = _low_fmax()
    assert d.reasoning.withheld
    firings = _settings_firings(d)
    assert len(firings) >= 3
    assert list(d.advice.remeasure) == list(dict.fromkeys(f.measure_again for f in firings if f.measure_again))
    assert all(r.startswith("Fmax of at least") for r in d.advice.remeasure)
    assert not set(d.advice.remeasure) & {f.because for f in firings}


def test_a_limit_with_no_setting_to_change_is_not_listed():
    d = _ringing()
    assert d.reasoning.withheld
    ring = [f for f in _settings_firings(d) if f.rule_id == RING]
    assert ring and not ring[0].measure_again
    assert d.advice.remeasure and not [r for r in d.advice.remeasure if "ring near" in r]


def test_every_format_lists_the_same_remedies_and_no_limit():
    for d, absent in ((_low_fmax(), "damage stage cannot be judged"), (_ringing(), "ring near")):
        doc = document_of(d, made_at=MADE_AT)
        text = render(doc, "text")
        listed = _section(text, "measure again with:", "LIMITS OF THIS READING")
        assert all(r in listed for r in doc["remeasure"]) and absent not in listed
        md = render(doc, "md")
        listed = _section(md, "Measure again with:", "## Limits")
        assert all(r.replace("_", "\\_") in listed for r in doc["remeasure"]) and absent not in listed
        html = render(doc, "html")
        listed = _section(html, "Measure again with:", "</ul>")
        assert all(r.replace("'", "&#39;") in listed for r in doc["remeasure"]) and absent not in listed
