"""The HTML report's zoom and cursors (templates/plots.js), driven in headless Chromium.

The report is written as a user gets it; the test appends one script that plays a reader: it types a
band and presses "zoom", drags across the plot, clicks a line with the harmonic cursor and with the
sideband cursor, and writes what the live drawing then holds into the page. ``--dump-dom`` returns
the page after its scripts ran. Each check is of what is drawn (the ticks, the trace's points, the
cursor lines and the read-out), so a script that parses but does nothing fails.
"""

from __future__ import annotations

import json
import re
import shutil
import subprocess

import pytest

from engine.report import render

from support import MADE_AT, case_diagnosis

# plays the reader on the first live plot (the spectrum) and on the last (the squared envelope)
DRIVER = r"""
<script>
(function () {
  function client(plot, f) {          // where frequency f is on the screen
    var p = plot.svg.createSVGPoint();
    p.x = plot.px(f); p.y = 150;
    return p.matrixTransform(plot.svg.getScreenCTM());
  }
  function mouse(plot, type, f) {
    var c = client(plot, f);
    plot.svg.dispatchEvent(new MouseEvent(type, {bubbles: true, clientX: c.x, clientY: c.y}));
  }
  function state(plot) {
    var text = function (t) { return t.textContent; };
    return {ticks: Array.prototype.map.call(plot.svg.querySelectorAll("text.tick"), text),
            trace: plot.svg.querySelector("polyline.trace").getAttribute("points").split(" ").length,
            marks: plot.svg.querySelectorAll("line.mark").length,
            cursors: Array.prototype.map.call(plot.svg.querySelectorAll("line.cursor"),
                                              function (l) { return plot.freq(parseFloat(l.getAttribute("x1"))); }),
            readout: plot.readout.textContent, from: plot.from.value, to: plot.to.value,
            static_shown: getComputedStyle(plot.figure.querySelector("svg")).display !== "none"};
  }
  var out = {plots: window.tellwavePlots.length};
  var s = window.tellwavePlots[0];
  out.first = state(s);
  s.from.value = "40"; s.to.value = "60";
  s.tools.querySelector("button.zoom").click();
  out.typed = state(s);
  s.tools.querySelector("button.whole").click();
  out.whole = state(s);
  s.zoom(0, 100);
  mouse(s, "mousedown", 20); mouse(s, "mousemove", 25); mouse(s, "mouseup", 30);
  out.dragged = state(s);
  s.zoom(0, 200);
  var one_x = s.data.spacing;
  s.mode.value = "harmonic";
  mouse(s, "mousedown", one_x); mouse(s, "mouseup", one_x);
  out.harmonic = state(s);
  var e = window.tellwavePlots[window.tellwavePlots.length - 1];
  var carrier = e.data.marks.filter(function (m) { return m.strong; })[0].x;
  e.mode.value = "sideband"; e.spacing.value = "10"; e.spacing.onchange();
  e.zoom(carrier - 50, carrier + 50);
  mouse(e, "mousedown", carrier); mouse(e, "mouseup", carrier);
  out.sideband = state(e);
  out.carrier = carrier;
  out.one_x = one_x;
  var pre = document.createElement("pre");
  pre.id = "driver-out";
  pre.textContent = JSON.stringify(out);
  document.body.appendChild(pre);
})();
</script>
"""


def _browser():
    browser = shutil.which("chromium") or shutil.which("chromium-browser")
    if browser is None:
        pytest.skip("no chromium on this machine (.ci/run installs the Debian package)")
    return browser


def _played(tmp_path, html: str) -> dict:
    page = tmp_path / "report.html"
    page.write_text(html.replace("</body>", DRIVER + "</body>"), encoding="utf-8")
    done = subprocess.run([_browser(), "--headless", "--no-sandbox", "--disable-gpu", "--no-first-run",
                           "--disable-background-networking", "--disable-component-update", "--disable-sync",
                           f"--user-data-dir={tmp_path / 'profile'}", "--window-size=1000,3000",
                           "--dump-dom", page.as_uri()], check=True, capture_output=True, timeout=120, text=True)
    found = re.search(r'<pre id="driver-out">(.*?)</pre>', done.stdout, re.S)
    assert found, "the driver script did not run: " + done.stdout[-500:]
    return json.loads(found.group(1).replace("&amp;", "&").replace("&lt;", "<").replace("&gt;", ">"))


@pytest.fixture(scope="module")
def outer_race_html():
    from engine.pipeline import document_of

    return render(document_of(case_diagnosis("rw2-pump-nde-outer-race"), made_at=MADE_AT), "html")


@pytest.mark.browser
def test_zoom_and_cursors_change_what_is_drawn(tmp_path, outer_race_html):
    out = _played(tmp_path, outer_race_html)
    assert out["plots"] == 2, "the spectrum and the squared envelope spectrum are live"
    first, typed, whole, dragged = out["first"], out["typed"], out["whole"], out["dragged"]
    assert not first["static_shown"], "on screen the live drawing stands in for the static one"
    # typed band 40-60 Hz: the axis runs from 40 to 60 and fewer points are drawn
    assert (float(typed["from"]), float(typed["to"])) == (40.0, 60.0)
    assert typed["ticks"][0] == "40.0" and typed["ticks"][-1] == "60.0" and "42.5" in typed["ticks"], typed["ticks"]
    assert typed["trace"] != first["trace"]
    assert float(whole["to"]) > float(first["to"]), "whole shows every line the data holds"
    # a drag from 20 to 30 Hz (on a 0-100 Hz view) zooms to that band, within a screen pixel (0.2 Hz)
    assert abs(float(dragged["from"]) - 20) < 0.2 and abs(float(dragged["to"]) - 30) < 0.2, dragged
    assert len(dragged["ticks"]) >= 4 and all(19.8 <= float(t) <= 30.2 for t in dragged["ticks"]), dragged["ticks"]
    # the harmonic cursor on 1X: lines at 1X, 2X, ... up to the view's 200 Hz, read out in Hz
    h = out["harmonic"]
    one_x = out["one_x"]
    assert len(h["cursors"]) == int(200 // one_x), h["cursors"]
    assert all(abs(c - (k + 1) * one_x) < 0.3 for k, c in enumerate(h["cursors"])), h["cursors"]
    assert h["readout"].startswith("harmonic cursor, f = ") and h["readout"].endswith(" Hz"), h["readout"]
    # the sideband cursor on the BPFO carrier with a 10 Hz spacing: the carrier and 3 pairs, read out
    sb = sorted(out["sideband"]["cursors"])
    carrier = out["carrier"]
    assert len(sb) == 7 and abs(sb[3] - carrier) < 0.6, sb
    assert [round(b - a, 1) for a, b in zip(sb, sb[1:])] == [10.0] * 6, sb
    assert "sideband cursor, carrier" in out["sideband"]["readout"] and "spacing 10 Hz" in out["sideband"]["readout"]


def test_the_plot_data_goes_in_a_json_block_and_the_script_is_inline(outer_race_html):
    """No network and nothing to fetch: the data is JSON in the page, the script inline, and the static
    SVG stays for print (the print CSS hides the live drawing and the controls)."""
    html = outer_race_html
    blocks = re.findall(r'<script type="application/json" id="(plot-data-\d+)">(.*?)</script>', html, re.S)
    assert len(blocks) == 2
    data = json.loads(blocks[0][1])
    assert data["unit"] == "Hz" and data["xlabel"] == "frequency, Hz" and len(data["x"]) == len(data["y"]) > 100
    plots = html.split('<section id="plots">')[1].replace("http://www.w3.org/2000/svg", "")  # a name, not a fetch
    assert "<script>" in plots and not re.search(r"<script[^>]+src=|https?://|fetch\(|XMLHttpRequest", plots)
    style = html[html.index("@media print"):]
    assert ".plot-tools, svg.plot-live, .plot-help { display: none; }" in style
    assert html.count("<svg") >= 4


def test_a_label_in_the_plot_data_cannot_end_the_script_block():
    """A hostile name in a mark label stays inside the JSON block (tojson escapes <, > and &)."""
    from engine.report.render import environment

    text = environment("html").from_string('<script type="application/json">{{ d | tojson }}</script>').render(
        d={"marks": [{"label": "</script><script>alert(1)</script>"}]})
    assert text.count("</script>") == 1 and "\\u003c/script\\u003e" in text
