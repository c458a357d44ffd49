"""Report templates compiled once and kept in the user's cache folder (``engine.report.render``).

A kept template must never give a stale report: a report rendered from kept code is the one rendered
from a fresh compile, an edited template is compiled afresh, each format's environment keeps its own
code, and a spoilt file or a folder that cannot be written only costs a compile.
"""

from __future__ import annotations

import importlib

import jinja2
import pytest

from engine.report.render import CompiledTemplates, environment, render
from tests.support import doc_of

render_module = importlib.import_module("engine.report.render")     # the package's ``render`` is the function


@pytest.fixture
def kept(tmp_path, monkeypatch):
    """Compiled templates kept in a folder of the test's own; the environments built afresh around it."""
    monkeypatch.setattr(render_module, "user_cache", lambda: tmp_path)
    environment.cache_clear()
    yield tmp_path / render_module.COMPILED
    environment.cache_clear()


@pytest.fixture
def compiles(monkeypatch):
    """Counts the templates Jinja compiles from their text."""
    calls = []
    real = jinja2.Environment.compile

    def counting(self, source, name=None, filename=None, raw=False, defer_init=False):
        calls.append(name)
        return real(self, source, name, filename, raw, defer_init)

    monkeypatch.setattr(jinja2.Environment, "compile", counting)
    return calls


@pytest.mark.parametrize("fmt", ["text", "md", "html"])
def test_a_report_from_kept_code_is_the_report_from_a_fresh_compile(kept, compiles, fmt):
    doc = doc_of("rw2-pump-nde-outer-race")
    fresh = render(doc, fmt)
    assert compiles and any(kept.iterdir())
    compiles.clear()
    environment.cache_clear()                           # a new process: nothing compiled in memory
    assert render(doc, fmt) == fresh
    assert compiles == []                               # read from the kept code


def test_each_format_keeps_its_own_code(kept):
    doc = doc_of("rw2-pump-nde-outer-race")
    render(doc, "text")
    after_text = set(kept.iterdir())
    render(doc, "md")
    assert len(set(kept.iterdir()) - after_text) == 1


def _env(folder, templates, fmt="text"):
    return jinja2.Environment(loader=jinja2.FileSystemLoader(str(templates)),
                              bytecode_cache=CompiledTemplates(folder, fmt))


def test_an_edited_template_is_compiled_afresh(tmp_path):
    templates = tmp_path / "t"
    templates.mkdir()
    (templates / "a.txt.j2").write_text("one {{ x }}")
    assert _env(tmp_path / "kept", templates).get_template("a.txt.j2").render(x=1) == "one 1"
    (templates / "a.txt.j2").write_text("two {{ x }}")
    assert _env(tmp_path / "kept", templates).get_template("a.txt.j2").render(x=1) == "two 1"


def test_the_format_and_the_versions_are_in_the_key(tmp_path):
    text, md = CompiledTemplates(tmp_path, "text"), CompiledTemplates(tmp_path, "md")
    assert text.get_cache_key("a.j2", "/t/a.j2") != md.get_cache_key("a.j2", "/t/a.j2")
    assert text.get_cache_key("a.j2", "/t/a.j2") != text.get_cache_key("b.j2", "/t/b.j2")
    assert jinja2.__version__ in text.salt and render_module._this_file() in text.salt


def test_a_spoilt_file_costs_a_compile(tmp_path, compiles):
    templates = tmp_path / "t"
    templates.mkdir()
    (templates / "a.txt.j2").write_text("one {{ x }}")
    _env(tmp_path / "kept", templates).get_template("a.txt.j2")
    for f in (tmp_path / "kept").iterdir():
        f.write_bytes(b"not code")
    compiles.clear()
    assert _env(tmp_path / "kept", templates).get_template("a.txt.j2").render(x=2) == "one 2"
    assert compiles == ["a.txt.j2"]


def test_a_folder_that_cannot_be_written_costs_a_compile(tmp_path, compiles):
    templates = tmp_path / "t"
    templates.mkdir()
    (templates / "a.txt.j2").write_text("one {{ x }}")
    blocker = tmp_path / "a-file"
    blocker.write_text("not a folder")
    for _ in range(2):
        assert _env(blocker / "kept", templates).get_template("a.txt.j2").render(x=3) == "one 3"
    assert compiles == ["a.txt.j2", "a.txt.j2"]
