"""The report draws from plain plot data the analysis stage hands over (DESIGN.md, "Layout").

The analysis cuts a view of every channel from every shaft before anyone
knows the diagnosis; the report picks the view of the top hypothesis's
evidence from the reasoning and the evidence's summaries, and never goes back
to the analysis. Advice and the report read typed summaries, not raw facts
picked by kind.
"""

from __future__ import annotations

import ast
import functools
from pathlib import Path

import numpy as np
import pytest

from engine.analysis import analyse
from engine.analysis.plotdata import PlotSet, plot_data
from engine.evidence import run_extractors, summarise
from engine.machine import load_machine
from engine.pipeline import diagnose
from engine.pipeline.cases import load_case, simulation_of
from engine.reasoning import Reasoner, load_rulebook
from engine.report.plots import _matched_harmonics, draw, figures, focus, shown, used_components
from engine.simulation import as_reading

from support import CASES, ROOT

ENGINE = ROOT / "engine"
# a bearing fault, a gear fault on a three-shaft fan drive, a shaft fault, and a withheld reading
NAMES = ("rw2-pump-nde-outer-race", "ct1-bevel-tooth", "rw2-misalignment", "bw1-clipped-recording")


@functools.cache
def _reasoner() -> Reasoner:
    return Reasoner(load_rulebook())


@functools.cache
def _case(name: str):
    case = load_case(CASES / "demo" / f"{name}.case.yaml")
    machine = load_machine(case.machine)
    reading = as_reading(simulation_of(case, machine), f"{name}.wav")
    return machine, reading, diagnose(reading, machine, _reasoner(), plots=True)


@pytest.mark.parametrize("name", NAMES)
def test_the_analysis_hands_over_a_view_of_every_channel_from_every_shaft(name):
    machine, reading, d = _case(name)
    assert isinstance(d.plots, PlotSet)
    pairs = [(v.channel, v.shaft) for v in d.plots.views]
    assert sorted(pairs) == sorted((c.name, s) for c in reading.channels for s in machine.shaft_speeds_hz)
    for v in d.plots.views:       # plain data: numpy arrays and numbers, no analysis objects
        assert isinstance(v.waveform_g, np.ndarray) and isinstance(v.spectrum_mm_s, np.ndarray)
        assert v.bearing is None
        assert {m.component for m in v.envelope_marks} <= {b.id for b in machine.bearings if b.shaft == v.shaft}


@pytest.mark.parametrize("name", NAMES)
def test_the_view_shown_is_the_one_the_analysis_would_cut_for_the_focus(name):
    """The figures equal those drawn from the analysis cut for the focus directly (the way the
    pipeline once did it): handing every view over changes nothing the report shows."""
    machine, reading, d = _case(name)
    channel, shaft, bearing = focus(d.reasoning, d.evidence, machine)
    direct = plot_data(analyse(reading, machine), channel, shaft, bearing)
    view = shown(d.plots, d.reasoning, d.evidence, machine)
    assert (view.channel, view.shaft, view.bearing) == (channel, shaft, bearing)
    assert view.envelope_marks == direct.envelope_marks and view.spectrum_marks == direct.spectrum_marks
    assert figures(d.plots, d.evidence, d.reasoning, machine) == draw(direct, d.evidence, used_components(d.reasoning))


def test_a_bearing_fault_is_shown_at_its_bearing_with_its_own_rates_only():
    machine, _, d = _case("rw2-pump-nde-outer-race")
    view = shown(d.plots, d.reasoning, d.evidence, machine)
    assert d.reasoning.top.fault == "outer-race"
    assert view.bearing == d.reasoning.top.component
    assert view.envelope_marks and {m.component for m in view.envelope_marks} == {view.bearing}
    whole = d.plots.view(view.channel, view.shaft)
    assert len(whole.envelope_marks) > len(view.envelope_marks), "the shaft's other bearing is left out"


def test_the_top_hypothesis_names_the_channels_at_its_component_first():
    machine, _, d = _case("rw2-pump-nde-outer-race")
    top = d.reasoning.top
    at = {f["channel"] for firing in top.support for _, f in firing.facts
          if top.component in (f.get("location"), f.get("location_shaft"))}
    assert at and top.channels[0] in at
    order = [c in at for c in top.channels]
    assert order == sorted(order, reverse=True), "every channel at the component comes before any other"


def test_the_envelope_families_summarise_every_envelope_tone_fact():
    machine, reading, d = _case("ct1-bevel-tooth")
    tones = [f for f in d.evidence.facts if f["kind"] == "envelope_tone"]
    assert tones and len(d.evidence.envelope_families) == len(tones)
    for fam, f in zip(d.evidence.envelope_families, tones):
        assert (fam.channel, fam.bearing, fam.defect, fam.expected_hz, fam.harmonics_found, fam.band_method,
                fam.fundamental_owned) == (f["channel"], f["component"], f["defect"], f["expected_hz"],
                                           f["harmonics_found"], f["band_method"], f["fundamental_owned"])
    facts = run_extractors(analyse(reading, machine))
    assert summarise(facts).envelope_families == d.evidence.envelope_families
    view = shown(d.plots, d.reasoning, d.evidence, machine)
    assert _matched_harmonics(d.evidence, view), "the gear case's envelope shows bearing families to mark"


def _kind_lookups(path: Path) -> list[int]:
    """Lines of ``path`` that read a fact's ``kind``: ``x["kind"]`` or ``x.get("kind")``."""
    found = []
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Subscript) and isinstance(node.slice, ast.Constant) and node.slice.value == "kind":
            found.append(node.lineno)
        if (isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute) and node.func.attr == "get"
                and node.args and isinstance(node.args[0], ast.Constant) and node.args[0].value == "kind"):
            found.append(node.lineno)
    return sorted(found)


@pytest.mark.parametrize("module", ["advice.py", "report/plots.py", "pipeline/__init__.py"])
def test_advice_and_plots_read_summaries_not_facts_picked_by_kind(module):
    assert _kind_lookups(ENGINE / module) == [], f"engine/{module} picks facts by kind"


def test_the_kind_lookup_check_can_fail(tmp_path):
    sample = tmp_path / "sample.py"
    sample.write_text('x = [f for f in facts if f["kind"] == "overall"]\ny = fact.get("kind")\n')
    assert _kind_lookups(sample) == [1, 2]


def test_the_pipeline_does_not_ask_the_report_what_to_plot():
    """diagnose hands the analysis's plot data on; only document_of, which makes the report, imports it."""
    tree = ast.parse((ENGINE / "pipeline" / "__init__.py").read_text(encoding="utf-8"))
    diagnose_def = next(n for n in tree.body if isinstance(n, ast.FunctionDef) and n.name == "diagnose")
    imports = [n for n in ast.walk(diagnose_def) if isinstance(n, ast.ImportFrom)]
    assert not [n.module for n in imports if n.module and "report" in n.module]
