"""Rules are named by file and line relative to their folder (``bearings.yaml:87``,
``site/NAME.yaml:12``), never by the install path, in reports and in ``rulebook explain``.

The tests named ``test_N_*`` reproduce issue 13's report defects and keep their names.
"""

from __future__ import annotations

import re

from engine.cli import main
from engine.reasoning import load_rulebook
from engine.report import render

from support import CASES, ROOT, doc_of

ORIGIN = re.compile(r"^(site\d*/)?[\w.-]+\.ya?ml(:\d+)?$")


def _origins(doc: dict) -> list[str]:
    firings = [f for h in doc["hypotheses"] for f in h["support"] + h["against"]] + doc["chain"]
    firings += [f for p in doc["reading_problems"] for f in p["support"]]
    return [f["origin"] for f in firings] + [o for f in firings for o in f["overrides"]] + doc["rulebooks"]


def test_4_shipped_rules_are_named_by_file_and_line_in_their_folder_never_by_install_path():
    doc = doc_of("rw2-pump-nde-outer-race")
    origins = _origins(doc)
    assert origins and all(ORIGIN.match(o) for o in origins), [o for o in origins if not ORIGIN.match(o)]
    assert "bearings.yaml" in doc["rulebooks"]
    envelope = next(f for f in doc["hypotheses"][0]["support"] if f["rule"] == "bearing.defect.envelope")
    line = envelope["origin"].split(":")[1]
    text = (ROOT / "rulebooks/bearings.yaml").read_text().splitlines()[int(line) - 1]
    assert "bearing.defect.envelope" in text, "the line is the rule's own"
    install = str(ROOT)
    for fmt in ("text", "md", "html", "json"):       # the user's own files may be named as given
        out = render(doc, fmt).replace(doc["reading"]["source"], "").replace(str(doc["machine"]["file"]), "")
        assert install not in out, fmt


def test_4_site_overlay_rules_are_named_site_slash_file(tmp_path):
    site = CASES / "site"
    doc = doc_of("ct1-bevel-tooth", str(site))
    assert "site/tallow-ridge.yaml" in doc["rulebooks"]
    assert all(ORIGIN.match(o) for o in _origins(doc))
    book = load_rulebook(site)
    rule = book.rule("shaft.unbalance.radial-1x")
    assert re.fullmatch(r"site/tallow-ridge\.yaml:\d+", rule.origin) and rule.replaced == ("shaft.yaml",)
    assert book.disabled["electrical.stator.at-motor"][1] == "site/tallow-ridge.yaml"
    # a file given directly, and a second overlay of the same name
    other = tmp_path / "more"
    other.mkdir()
    (other / "tallow-ridge.yaml").write_text("rulebook: more\nrules: []\n")
    book = load_rulebook(site / "tallow-ridge.yaml", other)
    assert book.files[-2:] == ("site/tallow-ridge.yaml", "more/tallow-ridge.yaml")     # each by its own folder
    # two folders of one name are told apart by the place's number
    same = tmp_path / "again" / "site"
    same.mkdir(parents=True)
    (same / "tallow-ridge.yaml").write_text("rulebook: more\nrules: []\n")
    book = load_rulebook(site, same)
    assert book.files[-2:] == ("site/tallow-ridge.yaml", "site2/tallow-ridge.yaml")


def test_4_rulebook_explain_names_the_file_and_where_an_overlay_lies(capsys):
    assert main(["rulebook", "explain", "shaft.unbalance.radial-1x", "--site", str(CASES / "site")]) == 0
    out = capsys.readouterr().out
    assert re.search(r"from site/tallow-ridge\.yaml:\d+ \(site overlay .*cases/site/tallow-ridge\.yaml; "
                     r"overrides the rule in shaft\.yaml\)", out), out
