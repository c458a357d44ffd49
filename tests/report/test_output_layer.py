"""One output layer: every document kind (diagnosis, plan, route summary, trend, demo index) renders
through ``engine.report.render`` with the templates in ``templates/<kind>/``, each HTML template
extends the one base template that holds the CSS, every template is given ``doc`` and nothing
else, and real documents render in every format with StrictUndefined (an undeclared or missing
variable is an error, not an empty string)."""

from __future__ import annotations

import json
import re
import sys

import jinja2
import jinja2.meta
import pytest

from engine.advice import load_advice, zone_scale
from engine.common.errors import UsageError
from engine.history.store import Store
from engine.machine import load_machine
from engine.pipeline import diagnose, document_of
from engine.pipeline.cases import case_files, describe, judge, load_case, reading_of, simulation_of
from engine.pipeline.learning import learning_document
from engine.planner import build_plan, given_settings, load_policy
from engine.report import KINDS, render
from engine.report.render import EXTENSIONS, environment
from engine.route import load_route, route_summary, run_route
from engine.simulation import as_reading
from engine.trend import trend_document
from engine.trend.diagnosis import HistoryLink

from support import CASES, ROOT, HtmlChecker, case_diagnosis
from support import reasoner as session_reasoner

TEMPLATES = ROOT / "templates"
BASE = "base.html.j2"
MADE_AT = "2026-03-04T10:15+01:00"


def _name(path) -> str:
    return path.relative_to(TEMPLATES).as_posix()


def _parse(name: str):
    env = environment("html" if name.endswith(".html.j2") else "text")
    return env.parse(env.loader.get_source(env, name)[0])


ALL = sorted(_name(p) for p in TEMPLATES.rglob("*.j2"))


def test_each_kind_has_its_folder_and_a_template_per_format():
    for kind, k in KINDS.items():
        for fmt in k.formats:
            assert (TEMPLATES / k.template(fmt)).is_file(), (kind, fmt)
            assert k.template(fmt).count("/") == 1 and k.template(fmt).endswith(f".{EXTENSIONS[fmt]}.j2")
    assert [n for n in ALL if "/" not in n] == [BASE], "templates live in one folder per document"


@pytest.mark.parametrize("name", ALL)
def test_every_template_is_given_the_document_and_nothing_else(name):
    """An undeclared variable (one the render function does not pass) fails here, on every branch."""
    undeclared = jinja2.meta.find_undeclared_variables(_parse(name))
    assert undeclared == (set() if name == BASE else {"doc"}), name


def test_no_template_is_left_unused():
    used = {BASE}
    for k in KINDS.values():
        for fmt in k.formats:
            used.add(k.template(fmt))
    for name in ALL:
        used |= {r for r in jinja2.meta.find_referenced_templates(_parse(name)) if r}
    assert set(ALL) == used


def test_the_css_has_one_home():
    """Every HTML document extends the base template, and only the base holds a <style> element."""
    for kind, k in KINDS.items():
        if "html" in k.formats:
            assert BASE in set(jinja2.meta.find_referenced_templates(_parse(k.template("html")))), kind
    with_style = [n for n in ALL if "<style" in (TEMPLATES / n).read_text()]
    assert with_style == [BASE]
    assert (TEMPLATES / BASE).read_text().count("<style>") == 1


def test_only_the_output_layer_builds_a_jinja_environment_and_json_goes_through_jsonout():
    engine = ROOT / "engine"
    jinja = [_rel(p) for p in engine.rglob("*.py") if re.search(r"^\s*(import|from) jinja2", p.read_text(), re.M)]
    assert jinja == ["engine/report/render.py"]
    raw_json = [_rel(p) for p in engine.rglob("*.py") if re.search(r"\bjson\.dumps?\(", p.read_text())
                and p != engine / "common" / "jsonout.py" and "reasoning" not in p.parts]
    assert raw_json == []


def _rel(path) -> str:
    return path.relative_to(ROOT).as_posix()


def test_an_undeclared_variable_is_an_error_when_rendered():
    """The environment's StrictUndefined: a name the document lacks stops the render (this is what makes
    the renders below a check of every variable they reach)."""
    for fmt in ("text", "md", "html"):
        with pytest.raises(jinja2.UndefinedError):
            environment(fmt).from_string("{{ doc.no_such_field }}").render(doc={})
        with pytest.raises(jinja2.UndefinedError):
            environment(fmt).from_string("{{ results }}").render(doc={})


def test_an_unknown_format_is_a_usage_error_naming_the_document():
    with pytest.raises(UsageError, match="unknown trend format 'pdf'"):
        render({}, "pdf", "trend")
    with pytest.raises(UsageError, match="unknown demo index format 'md'"):
        render({}, "md", "demo")


# ------------------------------------------------------------------ real documents of every kind


@pytest.fixture(scope="module")
def documents(tmp_path_factory):
    """kind -> real documents: every demo case's diagnosis, one with a trend section; plans with and
    without given settings; a route summary with a failed reading; a trend with plots; the demo index."""
    reasoner = session_reasoner()
    diagnoses, index = [], []
    for path in case_files(CASES / "demo"):
        case = load_case(path)
        machine = load_machine(case.machine)
        name = path.name.removesuffix(".case.yaml")
        if case.simulate is not None:       # the same diagnosis the report tests read: made once a worker
            d = case_diagnosis(name)
        else:
            d = diagnose(reading_of(case, machine), machine, reasoner, plots=True)
        diagnoses.append(document_of(d, made_at=MADE_AT))
        index.append({"name": case.name, "report": f"{name}.html", "diagnosis": describe(d.reasoning),
                      "as_expected": judge(case.expect, d.reasoning)})

    sys.path.insert(0, str(ROOT / "tests" / "route"))      # the route tests' small routes
    try:
        from routes import PUMP, make_route
    finally:
        sys.path.remove(str(ROOT / "tests" / "route"))
    folder = tmp_path_factory.mktemp("output-layer")
    with Store(folder / "h.sqlite") as store:
        outcome = run_route(load_route(make_route(folder / "route", n=8)), store, folder / "out", workers=1)
        summary = route_summary(outcome, store, folder / "out")
        trend = trend_document(store, "RW-2 raw water pump", plots=True, limits={"accel_peak_g": 20.0})
        pump = load_machine(PUMP)
        case = load_case(CASES / "demo" / "rw2-pump-de-inner-race.case.yaml")
        link = HistoryLink(store, pump, zone_scale(pump, load_advice()), content_hash="later",
                           taken_at="2026-03-01T08:00:00", plots=True)
        d = diagnose(as_reading(simulation_of(case, pump), "later.wav"), pump, reasoner, plots=True, more_facts=link)
        later = document_of(d, made_at=MADE_AT)
        assert link.doc is not None, "the store's earlier readings give the diagnosis a trend"
        later["trend"] = link.doc
        for i, r in enumerate(store.readings()[:4]):        # findings at repair (invented) for the learning report
            store.add_finding({"reading_id": r["id"], "component": "pump_de", "fault": "nothing-found" if i % 2 else
                               "outer-race", "found_on": "2026-06-01"})
    diagnoses.append(later)
    learning = learning_document(folder / "h.sqlite", diagram=True, made_at=MADE_AT)
    assert learning["findings"] == 4 and learning["rules"]

    policy = load_policy()
    ct1 = load_machine(CASES / "machines" / "ct1-cooling-tower-fan.yaml")
    plans = [build_plan(ct1, policy, points=["GINH", "MDEH"], given=given_settings(policy, fmax_hz=1000.0, lines=400),
                        with_proof=False, with_figures=True),
             build_plan(load_machine(PUMP), policy, with_proof=False)]
    assert summary["failures"] and trend["points"]
    return {"diagnosis": diagnoses, "plan": plans, "route": [summary], "trend": [trend], "demo": [{"cases": index}],
            "learning": [learning]}


CASES_OF_KINDS = [(kind, fmt) for kind, k in KINDS.items() for fmt in (*k.formats, "json")]


@pytest.mark.parametrize("kind, fmt", CASES_OF_KINDS, ids=[f"{k}-{f}" for k, f in CASES_OF_KINDS])
def test_real_documents_of_every_kind_render_in_every_format(documents, kind, fmt):
    assert environment(fmt if fmt != "json" else "text").undefined is jinja2.StrictUndefined
    for doc in documents[kind]:
        out = render(doc, fmt, kind)
        if fmt == "json":
            assert set(json.loads(out)) == set(doc) and "NaN" not in out
            continue
        assert out.strip()
        if fmt == "html":
            checker = HtmlChecker()
            checker.feed(out)
            assert not checker.errors and not checker.stack, (kind, checker.errors, checker.stack)
            assert out.count("<style>") == 1 and "td.num { text-align: right;" in out, "the base template's CSS"
            assert out.startswith("<!DOCTYPE html>")
        else:
            assert "<style" not in out and "<!DOCTYPE" not in out


def test_the_diagnosis_with_a_history_shows_its_trend_in_every_format(documents):
    later = documents["diagnosis"][-1]
    point = later["trend"]["points"][0]
    for fmt in ("text", "md", "html"):
        assert f"{point['point']}: {point['readings']} readings since {point['first'][:10]}" in render(later, fmt)


def test_the_hashed_json_text_keeps_its_bytes():
    """``jsonout.canonical`` is the text stored reading keys are hashed from: the same bytes as the
    ``json.dumps(..., sort_keys=True, default=str)`` that history.record.reading_key used before, or
    every reading stored earlier would be diagnosed again on resume (expected text written out by hand)."""
    from pathlib import PurePath

    from engine.common.jsonout import canonical

    parts = {"recording": "ab", "how": {"unit": "g", "scale": 2.5, "point": "P1H"}, "rulebooks": "é",
             "machine": PurePath("m.yaml")}
    assert canonical(parts) == ('{"how": {"point": "P1H", "scale": 2.5, "unit": "g"}, "machine": "m.yaml", '
                                '"recording": "ab", "rulebooks": "\\u00e9"}')
