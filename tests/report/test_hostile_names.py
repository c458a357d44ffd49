"""Hostile names reach no output raw: every command that renders text, Markdown or HTML.

A machine name (and plant), a channel name (the point a stored reading is
trended by when the route maps none), the reading files' names, the route's
name and a site rule's title each carry HTML (``<script>``, ``<img onerror>``),
a Markdown ``javascript:`` link, a line break that would start a heading, a
comment opener, and the terminal's ESC and BEL. Each command is run through
``engine.cli.main`` and every output (terminal and files) is checked for its
format (``engine.common.escape``: one function per output kind):

- text (terminal, ``summary.txt``): no ESC, no BEL, no line break from a value
  (text that looks like HTML is only text on a terminal: it is shown as written);
- Markdown: none of the above, and no raw ``<``, no link to ``javascript:``,
  no ``<!--``;
- HTML: no ESC, no BEL, no element or comment from a value, no ``javascript:`` link.

Each output must also show a hostile value (its ESC as the code ``\\x1b``), so
no check passes because the value was left out. A file name cannot hold ``/``,
so the file names carry every piece but ``<script>...</script>``.
"""

from __future__ import annotations

import contextlib
import io
import json
import re

import pytest
import yaml

from engine.cli import main
from engine.machine import load_machine
from engine.simulation import simulate, write_simulation

from support import CASES

HOSTILE = ["<script>alert(1)</script>", "<img src=x onerror=alert(1)>", "[x](javascript:alert(1))", "\n# heading",
           "<!--", "\x1b[31m", "\x07"]
NAME = "RW-2 " + " ".join(HOSTILE)
FILE_NAME = "r " + " ".join(h for h in HOSTILE if "/" not in h)
RW2 = CASES / "machines/rw2-raw-water-pump.yaml"
SITE = CASES / "site/tallow-ridge.yaml"
SITE_TITLE = "title: A dominant radial 1X with little 2X (rigid supports, group 2 scale)"


def run(*argv) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main([str(a) for a in argv])
    return code, out.getvalue(), err.getvalue()


@pytest.fixture(scope="module")
def world(tmp_path_factory):
    """A hostile machine, two readings with hostile file and channel names, a route run, a site overlay."""
    base = tmp_path_factory.mktemp("hostile")
    machine = base / "m.yaml"
    machine.write_text(RW2.read_text().replace("machine: RW-2 raw water pump", "machine: " + json.dumps(NAME))
                       .replace("plant: Tallow Ridge Water Works", "plant: " + json.dumps(NAME)))
    m = load_machine(machine)
    readings, files = [], []
    for i, (fault, component) in enumerate([("inner-race", "pump_de"), ("unbalance", "pump")]):
        sim = simulate(m, fault, component, 3, fs_hz=12800.0, duration_s=1.0, seed=i, points=["P1H"])
        path = base / f"{FILE_NAME} {i}.wav"
        write_simulation(sim, path)
        sidecar = path.with_name(path.name + ".yaml")
        side = yaml.safe_load(sidecar.read_text())
        side["channels"][0]["name"] = "ch " + NAME
        if i == 1:
            del side["channels"][0]["point"]        # the channel's name stands for the point
        sidecar.write_text(yaml.safe_dump(side))
        readings.append({"file": path.name, "machine": "m", "time": f"2026-0{i + 1}-01T08:00:00"})
        files.append(path)
    route = base / "route.yaml"
    route.write_text(yaml.safe_dump({"route": NAME, "machines": {"m": "m.yaml"}, "readings": readings}))
    site = base / "site.yaml"
    assert SITE_TITLE in SITE.read_text()
    site.write_text(SITE.read_text().replace(SITE_TITLE, "title: " + json.dumps(NAME)))
    store = base / "h.sqlite"
    out = base / f"out {FILE_NAME}"
    code, stdout, stderr = run("route", route, "--store", store, "--format", "md", "--workers", "1", "--out", out,
                               "--quiet")
    assert code == 0, stderr
    code, summary_stdout, stderr = run("route", route, "--store", store, "--workers", "1", "--out", out)
    assert code == 0, stderr
    return {"base": base, "machine": machine, "files": files, "route": route, "site": site, "store": store,
            "out": out, "route_run": stdout + stderr, "route_again": summary_stdout + stderr}


def outside_code_spans(md: str) -> str:
    """Markdown with its code spans taken out: a span shows its content literally, HTML and links
    included (CommonMark 0.31, section 6.1), so what is inside one is text, not markup. A span ends
    at the first backquote run as long as its opening one, on the same line here (values never
    break lines), so a value that could end its span early would leave markup outside it."""
    return re.sub(r"(?<!`)(`+)(?!`).*?(?<!`)\1(?!`)", "`code`", md)


def assert_clean(text: str, fmt: str, where: str) -> None:
    assert "\x1b" not in text and "\x07" not in text, where
    if fmt in ("text", "md"):
        assert "\n# heading" not in text, where               # no value starts a line of its own
    if fmt == "md":
        # a backslash before < makes it text (CommonMark 0.31, "Backslash escapes")
        for raw in ("<script", "<img", "<!--", "[x](javascript:"):
            assert not re.search(r"(?<!\\)" + re.escape(raw), outside_code_spans(text)), (where, raw)
        # an unescaped ] opens a link
        assert not re.search(r"(?<!\\)\]\(\s*<?javascript:", outside_code_spans(text), re.I), where
    if fmt == "html":
        for raw in ("<script>alert", "<img src=x", "<!--"):
            assert raw not in text, (where, raw)
        assert not re.search(r"""(href|src)\s*=\s*["']?\s*javascript:""", text, re.I), where
    shown = {"text": r"\x1b[31m", "md": r"\\x1b\[31m", "html": r"\x1b[31m"}[fmt]
    assert shown in text, f"{where}: no hostile value shown (escaped) at all"


def test_diagnose_in_every_format(world, tmp_path):
    reading, machine = world["files"][0], world["machine"]
    code, out, err = run("diagnose", reading, "--machine", machine)
    assert code in (0, 7), err
    assert_clean(out, "text", "diagnose text")
    for fmt in ("md", "html"):
        target = tmp_path / f"report.{fmt}"
        code, out, err = run("diagnose", reading, "--machine", machine, "--format", fmt, "-o", target)
        assert code in (0, 7), err
        assert_clean(target.read_text(), fmt, f"diagnose {fmt}")


def test_plan_in_every_format(world, tmp_path):
    common = (world["machine"], "--reading", world["files"][0], "--point", "P1H", "--no-proof")
    code, out, err = run("plan", *common)
    assert code == 0, err
    assert_clean(out, "text", "plan text")
    for fmt in ("md", "html"):
        target = tmp_path / f"plan.{fmt}"
        assert run("plan", *common, "--format", fmt, "-o", target)[0] == 0
        assert_clean(target.read_text(), fmt, f"plan {fmt}")


def test_route_summary_on_the_terminal_and_in_every_file(world):
    assert_clean(world["route_again"], "text", "route on the terminal")
    assert "\x1b" not in world["route_run"] and "\x07" not in world["route_run"]
    for fmt, ext in (("text", "txt"), ("md", "md"), ("html", "html")):
        assert_clean((world["out"] / f"summary.{ext}").read_text(), fmt, f"summary.{ext}")
    reports = sorted(world["out"].rglob("*.md"))
    assert len(reports) == 3                                   # two readings' reports and the summary
    for report in reports:
        assert_clean(report.read_text(), "md", str(report.name))


def test_trend_in_every_format(world, tmp_path):
    store = world["store"]
    code, out, err = run("trend", NAME, "--store", store)
    assert code == 0, err
    assert_clean(out, "text", "trend text")
    for fmt in ("md", "html"):
        target = tmp_path / f"trend.{fmt}"
        code, out, err = run("trend", NAME, "--store", store, "--format", fmt, "-o", target)
        assert code == 0, err
        assert_clean(target.read_text(), fmt, f"trend {fmt}")


def test_history_lists(world):
    for argv in (("history", "--store", world["store"]), ("history", NAME, "--store", world["store"])):
        code, out, err = run(*argv)
        assert code == 0, err
        assert_clean(out, "text", " ".join(map(str, argv[:2])))
    assert out.count("\n") == 2 + 2                            # a heading, the columns and one line per reading


def test_rulebook_list_and_explain(world):
    code, out, err = run("rulebook", "list", "--site", world["site"])
    assert code == 0, err
    assert_clean(out, "text", "rulebook list")
    code, out, err = run("rulebook", "explain", "shaft.unbalance.radial-1x", "--site", world["site"])
    assert code == 0, err
    assert_clean(out, "text", "rulebook explain")


# ---------------------------------------------------------------- the escapes themselves


def test_markdown_neutralises_html_links_comments_line_breaks_and_list_markers():
    from engine.common.escape import markdown

    assert markdown("<!-- x") == r"\<\!-- x"
    # a backslash, never an entity: the Markdown is read as plain text too (CommonMark 0.31,
    # "Backslash escapes" and "Entity and numeric character references")
    assert markdown("Randall & Antoni (2011)") == "Randall & Antoni (2011)"
    assert markdown("AT&T; &lt;b&gt;") == r"AT\&T; \&lt;b\&gt;"
    assert markdown("a > b < c") == r"a \> b \< c"
    assert markdown("[x](javascript:alert(1))") == r"\[x\](javascript:alert(1))"
    assert markdown("a\n# heading\r\nb") == r"a \# heading b"
    assert markdown("1. first") == r"1\. first" and markdown("12) x") == r"12\) x"
    assert markdown("12.5 mm/s") == "12.5 mm/s"                     # a number is not a list item


def test_a_link_target_stays_a_relative_path():
    from engine.common.escape import url_path

    assert url_path("reports/rw-2/r 1.wav.html") == "reports/rw-2/r%201.wav.html"
    assert url_path("javascript:alert(1)") == "javascript%3Aalert%281%29"
    assert url_path('a"><img src=x>).md') == "a%22%3E%3Cimg%20src%3Dx%3E%29.md"


def test_html_values_show_control_characters_as_codes_and_keep_markup_made_safe():
    import markupsafe

    from engine.common.escape import html_value

    assert html_value("a\x1bb\x07") == r"a\x1bb\x07"
    kept = html_value(markupsafe.Markup("<b>x\x1b</b>"))
    assert isinstance(kept, markupsafe.Markup) and kept == r"<b>x\x1b</b>"
    assert html_value(3.5) == 3.5


def test_every_document_renders_through_one_escaping_function():
    """No module builds a Jinja environment without a format (which would escape nothing for text
    and Markdown); documents render with ``engine.report.render``."""
    from support import ROOT

    unescaped = [str(p.relative_to(ROOT)) for p in (ROOT / "engine").rglob("*.py")
                 if re.search(r"\benvironment\(\s*\)", p.read_text())]
    assert unescaped == []
