"""Plots an analyst reads at a glance (issue 24, item 6): 1X, 2X and 3X of the shaft under the sensor,
marks grouped by source with a legend in words, crowding rates only when a hypothesis is on them, no
label cut off, every line labelled, and ``--plots`` choosing the channels plotted."""

from __future__ import annotations

import re

import numpy as np
import pytest

from engine.report import svg
from engine.report.plots import CROWDING, GROUPS, choose_channels, figures, shown, spectrum_marks, used_components

from support import RW2, case_diagnosis, one_error_line


def _text_spans(svg_text: str) -> list[tuple[float, str, str]]:
    """(x, anchor, text) of every mark label (font-size 9.5) of an SVG."""
    out = []
    for m in re.finditer(r'<text x="([\d.-]+)"( text-anchor="end")? y="[\d.]+" font-size="9.5"[^>]*>([^<]*)</text>',
                         svg_text):
        out.append((float(m.group(1)), "end" if m.group(2) else "start", m.group(3)))
    return out


def test_the_spectrum_marks_1x_2x_and_3x_of_the_shaft_under_the_sensor():
    d = case_diagnosis("rw2-pump-nde-outer-race")
    view = shown(d.plots, d.reasoning, d.evidence, d.machine)
    assert view.sensor_shaft == "pump"            # P2H sits at pump_nde, on the pump shaft
    hz = view.shaft_hz if view.shaft == "pump" else None
    orders = {m.name: m.freq_hz for m in view.spectrum_marks if m.component == "pump" and m.family == "shaft"}
    assert set(orders) == {"1X", "2X", "3X"}
    assert orders["2X"] == pytest.approx(2 * hz) and orders["3X"] == pytest.approx(3 * hz)   # k x running speed
    spectrum = next(f for f in figures(d.plots, d.evidence, d.reasoning, d.machine) if f.title.startswith("Spectrum"))
    labels = [t for _, _, t in _text_spans(spectrum.svg)]
    assert {"1X pump", "2X pump", "3X pump"} <= set(labels), labels     # drawn, and labelled


def test_marks_are_grouped_by_source_with_a_legend_in_words():
    d = case_diagnosis("rw2-vane-pass")
    spectrum = next(f for f in figures(d.plots, d.evidence, d.reasoning, d.machine) if f.title.startswith("Spectrum"))
    legend = re.findall(r'<text x="[\d.]+" y="[\d.]+" font-size="10" fill="#1a1a1a">([^<]*)</text>', spectrum.svg)
    assert {"shaft orders", "bearing rates", "vane/blade pass", "electrical"} <= set(legend), legend
    assert not re.search(r"#[0-9a-f]{6}", " ".join(legend) + spectrum.title)   # words, never colour codes
    colours = {m["group"]: m["color"] for m in spectrum.data["marks"]}
    assert len(set(colours.values())) == len(colours), "each group has its own colour"


def test_cage_rate_and_rotor_bar_marks_show_only_when_a_hypothesis_is_on_their_component():
    d = case_diagnosis("rw2-pump-nde-outer-race")
    view = shown(d.plots, d.reasoning, d.evidence, d.machine)
    used = used_components(d.reasoning)
    crowding = [m for m in view.spectrum_marks if m.name in CROWDING]
    assert crowding, "the pump train has cage rates and a rotor bar pass to hide"
    kept = [m for m in spectrum_marks(view, used) if m.label.split()[0] in ("FTF", "rotor")]
    assert kept and all(m.label.split()[-1] in used for m in kept), kept
    assert "FTF pump_nde" in [m.label for m in kept]                 # the outer race hypothesis is on pump_nde
    assert not [m for m in spectrum_marks(view) if m.label.split()[0] in ("FTF", "rotor")]
    bars = case_diagnosis("rw2-rotor-bars")
    bar_view = shown(bars.plots, bars.reasoning, bars.evidence, bars.machine)
    marks = spectrum_marks(bar_view, used_components(bars.reasoning))
    assert any(m.label.startswith("rotor bar pass") for m in marks), [m.label for m in marks]


def test_a_label_near_the_right_edge_is_written_to_the_left_of_its_line():
    plot = svg.Plot("t", "x", "y", [svg.Series(np.array([0.0, 100.0]), np.array([0.0, 1.0]))],
                    [svg.Mark(99.0, "a long label at the right edge"), svg.Mark(10.0, "left")], xlim=(0.0, 100.0))
    spans = {t: (x, a) for x, a, t in _text_spans(svg.render(plot))}
    x, anchor = spans["a long label at the right edge"]
    assert anchor == "end" and x < svg.WIDTH - svg.MARGIN_RIGHT
    assert x - svg.CHAR_PX * len("a long label at the right edge") > 0
    assert spans["left"][1] == "start"


def test_a_long_title_wraps_and_the_picture_grows_to_hold_it():
    title = "P2H: " + " ".join(["bearing tones in the squared envelope spectrum"] * 3)
    out = svg.render(svg.Plot(title, "x", "y", [svg.Series(np.array([0.0, 1.0]), np.array([0.0, 1.0]))]))
    lines = re.findall(r'font-weight="bold" fill="#1a1a1a">([^<]*)</text>', out)
    assert len(lines) >= 2 and " ".join(lines) == title
    assert all(len(line) * svg.TITLE_CHAR_PX <= svg.WIDTH - svg.MARGIN_LEFT for line in lines)
    assert 'viewBox="0 0 760 244"' in out            # 230 and one more title line of 14


def test_a_level_line_at_the_top_is_labelled_inside_the_axes():
    plot = svg.Plot("kurtosis", "days", "kurtosis", [svg.Series(np.array([0.0, 1.0]), np.array([2.0, 2.5]))],
                    levels=[svg.Level(3.0, "3: a Gaussian signal")])
    out = svg.render(plot)
    y_label = float(re.search(r'y="([\d.]+)" text-anchor="end" font-size="10" fill="#777777">3: a Gaussian', out)[1])
    y_top = float(re.search(r'<rect x="64" y="([\d.]+)"', out)[1])
    assert y_label > y_top + 9, "the label is below the axes' top edge, not cut by it"


def test_the_legend_names_each_labelled_trace_and_each_group_of_marks():
    legend = svg.legend_entries(svg.Plot("t", "x", "y", [
        svg.Series(np.array([0.0]), np.array([0.0]), label="readings"),
        svg.Series(np.array([0.0]), np.array([0.0]), dashed=True, label="fitted curve"),
        svg.Series(np.array([0.0]), np.array([0.0]))],
        [svg.Mark(1.0, "1X", group="shaft orders", color=GROUPS["shaft"][1]),
         svg.Mark(2.0, "2X", group="shaft orders")]))
    assert legend == [("readings", svg.INK, False, "trace"), ("fitted curve", svg.INK, True, "trace"),
                      ("shaft orders", GROUPS["shaft"][1], True, "mark")]
    marks = [svg.Mark(1.0, "1X fan", group="shaft orders"),
             svg.Mark(2.0, "1X motor", strong=True, group="shaft orders")]
    solid = svg.legend_entries(svg.Plot("t", "x", "y", [], marks))
    assert solid == [("shaft orders", svg.MARK, False, "mark")], "a group with a solid mark shows solid"


def test_every_line_of_a_trend_plot_is_named_in_words(rng):
    """A rising point read 70 times: its peak-and-RMS plot names both traces and the dashed fitted curve, and
    the envelope tones plot names each tone, never a colour code."""
    from datetime import datetime, timedelta

    from engine.advice import ZoneScale
    from engine.trend.report import trend_from_rows

    t0 = datetime(2026, 3, 1, 8, 0)
    rows = []
    for i in range(70):
        rise = 1.0 + (0.2 * np.exp(0.12 * (i - 40)) if i >= 40 else 0.0)
        rows.append({"id": i, "taken_at": (t0 + timedelta(seconds=100.0 * i)).isoformat(), "channel": "H",
                     "point": "H", "direction": "horizontal",
                     "indicators": {"accel_peak_g": 2.0 * rise * np.exp(rng.normal(0.0, 0.03)),
                                    "accel_rms_g": 0.3 * rise, "kurtosis": 3.2, "env_BPFO_db": 6.0 + i / 10,
                                    "env_BPFI_db": 4.0}})
    scale = ZoneScale(2, "rigid", 1.4, 2.8, 4.5, False, "ISO 20816-3 (from memory)")
    doc = trend_from_rows("M", rows, scale, limits={"accel_peak_g": 20.0}, plots=True)
    plots = {p["title"]: p["svg"] for p in doc["points"][0]["plots"]}
    legend = {t: re.findall(r'font-size="10" fill="#1a1a1a">([^<]*)</text>', s) for t, s in plots.items()}
    assert legend["H: acceleration peak and RMS"][:2] == ["peak", "RMS"]
    assert legend["H: acceleration peak and RMS"][2].startswith("fitted curve of the peak, projected toward limit")
    assert 'stroke-dasharray="4 3"' in plots["H: acceleration peak and RMS"]
    assert legend["H: bearing tones in the squared envelope spectrum"] == ["BPFI", "BPFO"]
    assert not any(re.search(r"#[0-9a-f]{6}", t) for t in plots), list(plots)
    assert "3: a Gaussian signal" in plots["H: kurtosis"]


def test_choose_channels():
    assert choose_channels(None, ["A", "B"]) is None
    assert choose_channels("all", ["A", "B"]) == ("all",)
    assert choose_channels("B, A,B", ["A", "B"]) == ("B", "A")
    from engine.common.errors import UsageError

    with pytest.raises(UsageError, match="no channel 'C' in the reading; its channels are A, B"):
        choose_channels("A,C", ["A", "B"])


def test_plots_all_adds_every_channels_spectrum_and_a_list_shows_those_channels():
    d = case_diagnosis("rw2-pump-nde-outer-race")
    default = figures(d.plots, d.evidence, d.reasoning, d.machine)
    every = figures(d.plots, d.evidence, d.reasoning, d.machine, ("all",))
    channels = sorted({v.channel for v in d.plots.views})
    spectra = [f.title.split(",")[1].split("(")[0].strip() for f in every if f.title.startswith("Spectrum")]
    assert every[:len(default)] == default and sorted(spectra) == channels
    chosen = figures(d.plots, d.evidence, d.reasoning, d.machine, ("M1H",))
    assert chosen and all("M1H" in f.title for f in chosen)
    spectrum = next(f for f in chosen if f.title.startswith("Spectrum"))
    assert {m["label"] for m in spectrum.data["marks"]} >= {"1X motor", "2X motor", "3X motor"}   # M1H is on the motor


def test_diagnose_plots_names_an_unknown_channel_in_one_line(tmp_path, capsys):
    from engine.cli import main

    reading = tmp_path / "r.npz"
    assert main(["synth", str(RW2), "--duration", "1", "--points", "P1H,M1H", "-o", str(reading)]) == 0
    capsys.readouterr()
    err = one_error_line(capsys, 2, ["diagnose", reading, "--machine", RW2, "--format", "html",
                                     "-o", tmp_path / "r.html", "--plots", "P1H,nosuch"])
    assert "--plots: no channel 'nosuch'" in err and "P1H" in err
    err = one_error_line(capsys, 2, ["diagnose", reading, "--machine", RW2, "--plots", "all"])
    assert "add --format html" in err
    assert not (tmp_path / "r.html").exists()
    assert main(["diagnose", str(reading), "--machine", str(RW2), "--format", "html", "-o", str(tmp_path / "r.html"),
                 "--plots", "all"]) in (0, 7)
    page = (tmp_path / "r.html").read_text(encoding="utf-8")
    assert page.count("<figure") > 4 and 'Spectrum, M1H' in page and 'Spectrum, P1H' in page


def test_the_route_keeps_the_channels_a_reading_has():
    from types import SimpleNamespace

    from engine.route.work import _plot_channels

    reading = SimpleNamespace(channels=[SimpleNamespace(name="P1H"), SimpleNamespace(name="M1H")])
    assert _plot_channels("", reading) is None and _plot_channels(None, reading) is None
    assert _plot_channels("all", reading) == ("all",)
    assert _plot_channels("M1H,P9V", reading) == ("M1H",)
    assert _plot_channels("P9V", reading) is None      # none of them here: the usual view


@pytest.mark.parametrize(("value", "step", "text"), [
    (42.5, 2.5, "42.5"), (45.0, 2.5, "45.0"), (0.25, 0.25, "0.25"), (300.0, 100.0, "300"), (1.5, 0.5, "1.5"),
])
def test_tick_labels_keep_the_digits_their_step_needs(value, step, text):
    """A 2.5-step axis printed 42.5 as "42" (round half to even with no decimals)."""
    assert svg.tick_text(value, step) == text


def test_route_plots_need_the_html_reports(tmp_path, capsys):
    route = tmp_path / "route.yaml"
    route.write_text("route: r\nmachines: {rw2: x.yaml}\nreadings: []\n")
    err = one_error_line(capsys, 2, ["route", route, "--format", "md", "--plots", "all",
                                     "--store", tmp_path / "s.sqlite"])
    assert "--plots draws plots in each reading's HTML report" in err
    assert not (tmp_path / "s.sqlite").exists()
