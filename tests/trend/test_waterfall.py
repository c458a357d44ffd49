"""Spectra over time at a point: the waterfall and the overlay of two readings are well-formed, escaped SVG with
the forcing frequencies marked where they lie; the largest changes are found and named; readings stored
before schema 7 say they have no spectrum; bad --compare ids are one line with exit 2."""

from __future__ import annotations

import json
import re

import jsonschema
import numpy as np
import pytest

from engine.analysis.compact import CompactSpectrum
from engine.cli import main
from engine.common.yamlfile import load_schema
from engine.history.record import spectra_of
from engine.history.store import Store
from engine.report import render
from engine.report.svg import MARGIN_LEFT, MARGIN_RIGHT, WIDTH
from engine.trend import trend_document
from engine.trend.waterfall import NO_SPECTRUM, largest_changes, marks_for, parse_compare, spectra_section

from support import HtmlChecker, one_error_line

PUMP = "RW-2 raw water pump"
ONE_X, BPFI, STEP = 24.5, 203.5, 0.5        # tones on the grid's lines (invented demo values)
FORCING = [{"name": "1X", "component": "pump", "family": "shaft", "shaft": "pump", "frequency_hz": ONE_X},
           {"name": "BPFI", "component": "pump_de", "family": "bearing", "shaft": "pump", "frequency_hz": BPFI},
           {"name": "BPFO", "component": "motor_de", "family": "bearing", "shaft": "motor", "frequency_hz": 130.8},
           {"name": "vane pass", "component": "impeller", "family": "flow", "shaft": "pump", "frequency_hz": 148.5},
           {"name": "2xLF", "component": "M-RW2", "family": "electrical", "shaft": "motor", "frequency_hz": 100.0}]


def _amplitudes(bpfi_mm_s: float) -> np.ndarray:
    a = np.full(1600, 0.001)
    for hz, v in ((ONE_X, 0.5), (2 * ONE_X, 0.1), (BPFI, bpfi_mm_s), (2 * BPFI, bpfi_mm_s / 2)):
        a[round(hz / STEP)] = v               # the line whose group holds hz: step = resolution, one line a group
    return a


def _record(n: int, month: int, bpfi_mm_s: float, point: str = "P1H", spectrum: bool = True) -> dict:
    rec = {"content_hash": f"h{n}", "machine": PUMP, "machine_file": None, "source": f"r{n}.wav",
           "taken_at": f"2026-{month:02d}-12T08:30:00", "time_from": "route", "speed_rpm": 1485.0, "elapsed_s": 0.1,
           "fs_hz": 25600.0, "duration_s": 4.0,
           "verdict": {"urgency": "watch", "urgency_label": "watch", "worst_zone": "A", "withheld": False,
                       "summary": "s"},
           "top": None, "hypotheses": [],
           "channels": [{"channel": "ch1", "point": point, "direction": "horizontal", "location": "pump_de",
                         "zone": "A"}],
           "indicators": [{"channel": "ch1", "name": "velocity_rms_mm_s", "value": 1.0 + month / 10}]}
    if spectrum:
        sp = CompactSpectrum("ch1", point, "pump", "pump_de", "velocity", "mm/s RMS", STEP, STEP,
                             _amplitudes(bpfi_mm_s).astype(np.float32))
        rec.update(spectra=spectra_of([sp], {"ch1"}), forcing=FORCING)
    return rec


@pytest.fixture
def store(tmp_path):
    path = tmp_path / "h.sqlite"
    with Store(path) as s:
        s.add(_record(1, 1, 0.0, spectrum=False))           # as a reading stored before schema 7 reads
        s.db.execute("UPDATE readings SET spectra_kept = NULL")
        for month, bpfi in ((2, 0.01), (3, 0.04), (4, 0.16)):
            s.add(_record(month, month, bpfi))
    return path


def test_the_marks_are_the_points_shaft_orders_bearing_rates_and_its_shafts_other_lines():
    marks = marks_for(FORCING, "pump", "pump_de", 1000.0)
    assert [(m["label"], m["frequency_hz"]) for m in marks] == [
        ("1X", ONE_X), ("2X", 2 * ONE_X), ("3X", 3 * ONE_X), ("vane pass", 148.5), ("BPFI", BPFI)]
    assert [m["label"] for m in marks_for(FORCING, "pump", "pump_de", 100.0)] == ["1X", "2X", "3X"]


def test_the_largest_changes_are_found_and_named(store):
    with Store(store, create=False) as s:
        rows = [r for r in s.spectra(PUMP, "P1H") if r["amplitudes"] is not None]
    changes = largest_changes(rows[0], rows[-1], marks_for(FORCING, "pump", "pump_de", 1000.0))
    assert [(c["at"], c["change"]) for c in changes[:2]] == [("BPFI", pytest.approx(0.15)),
                                                             ("2xBPFI", pytest.approx(0.075))]
    assert changes[0]["frequency_hz"] == pytest.approx(BPFI, abs=STEP)
    assert changes[0]["before"] == pytest.approx(0.01) and changes[0]["after"] == pytest.approx(0.16)


def _mark_xs(svg: str) -> list[float]:
    """x of every vertical mark line (the mark colour) in an SVG."""
    return [float(m.group(1)) for m in re.finditer(r'<line x1="([\d.]+)" y1="[\d.]+" x2="\1" y2="[\d.]+" '
                                                   r'stroke="#8a2d2a"', svg)]


def test_the_waterfall_marks_sit_at_the_forcing_frequencies(store):
    with Store(store, create=False) as s:
        section = spectra_section(s, PUMP, "P1H", plots=True)
    svg = section["waterfall"]["svg"]
    f_max = 12 * ONE_X if 12 * ONE_X > 1.3 * BPFI else 1.3 * BPFI      # the figure's own rule: 12 orders or 1.3 x
    x0, x1 = MARGIN_LEFT, WIDTH - MARGIN_RIGHT

    def px(hz):
        return round(x0 + hz / f_max * (x1 - x0), 1)
    assert sorted(_mark_xs(svg)) == [px(hz) for hz in sorted((ONE_X, 2 * ONE_X, 3 * ONE_X, 148.5, BPFI))]
    assert svg.count("<polyline") == 3 and svg.count("<polygon") == 3          # three surveys with a spectrum
    for label in ("1X", "2X", "3X", "BPFI", "vane pass", "2026-02-12", "2026-04-12"):
        assert f">{label}<" in svg
    assert section["without_spectrum"] == 1 and section["readings"][0]["why"] == NO_SPECTRUM


def test_the_html_is_well_formed_and_escapes_a_hostile_point_name(tmp_path):
    hostile = 'P1H<script>&"x'
    path = tmp_path / "h.sqlite"
    with Store(path) as s:
        for month, bpfi in ((1, 0.01), (2, 0.1)):
            s.add(_record(month, month, bpfi, point=hostile))
        doc = trend_document(s, PUMP, point=hostile, plots=True, waterfall=True)
        both = trend_document(s, PUMP, point=hostile, plots=True, compare=(1, 2))
    for d in (doc, both):
        html = render(d, "html", "trend")
        checker = HtmlChecker()
        checker.feed(html)
        checker.close()
        assert not checker.errors and checker.stack == [], (checker.errors, checker.stack)
        assert "<script>" not in html and "P1H&lt;script&gt;&amp;" in html
    assert both["points"][0]["spectra"]["compare"]["svg"].count("<polyline") == 2


def test_text_md_and_json_list_the_changes_and_the_readings_without_a_spectrum(store, capsys):
    with Store(store, create=False) as s:
        doc = trend_document(s, PUMP, point="P1H", waterfall=True)
    text, md = render(doc, "text", "trend"), render(doc, "md", "trend")
    for out in (text, md):
        assert "stored before schema 7" in out and "BPFI" in out and "2xBPFI" in out and "--format html" in out
    assert main(["trend", PUMP, "--point", "P1H", "--waterfall", "--format", "json", "--store", str(store)]) == 0
    got = json.loads(capsys.readouterr().out)
    jsonschema.validate(got, load_schema("trend.schema.json"))
    section = got["points"][0]["spectra"]
    assert [r["has_spectrum"] for r in section["readings"]] == [False, True, True, True]
    assert len(section["readings"][-1]["amplitudes"]) == 1600 and section["waterfall"]["svg"] is None


def test_compare_gives_the_two_readings_only(store, capsys):
    assert main(["trend", PUMP, "--point", "P1H", "--compare", "2,4", "--format", "json", "--store", str(store)]) == 0
    section = json.loads(capsys.readouterr().out)["points"][0]["spectra"]
    assert [r["id"] for r in section["readings"]] == [2, 4] and section["waterfall"] is None
    assert section["compare"]["changes"][0]["at"] == "BPFI"


@pytest.mark.parametrize("text", ["2", "2,3,4", "a,b", "2,2", "-1,2", "99999999999999999999,1"])
def test_a_bad_compare_is_a_usage_error(text):
    from engine.common.errors import UsageError

    with pytest.raises(UsageError, match="--compare"):
        parse_compare(text)


def test_compare_with_a_reading_of_another_point_is_one_line(store, capsys):
    err = one_error_line(capsys, 2, ["trend", PUMP, "--point", "P1H", "--compare", "2,999", "--store", store])
    assert "reading 999 is not a stored reading" in err
    err = one_error_line(capsys, 2, ["trend", PUMP, "--compare", "2,999", "--store", store])
    assert "not both stored readings" in err


def test_a_long_history_shows_the_latest_surveys(tmp_path):
    from engine.trend.waterfall import MOST_SURVEYS

    with Store(tmp_path / "h.sqlite") as s:
        for n in range(MOST_SURVEYS + 2):
            rec = _record(n + 1, 1, 0.01 * n)
            rec["taken_at"] = f"2026-01-{n + 1:02d}T08:30:00"
            s.add(rec)
        section = spectra_section(s, PUMP, "P1H", plots=True)
    assert len(section["readings"]) == MOST_SURVEYS and section["surveys_left_out"] == 2
    assert section["readings"][0]["taken_at"].startswith("2026-01-03")        # the two oldest are left out
    assert section["waterfall"]["svg"].count("<polyline") == MOST_SURVEYS


def _repaired_store(tmp_path, found_on: str, after: tuple[float, ...] = (0.01, 0.02)):
    """Two faulty surveys (BPFI 0.16 mm/s), the bearing replaced on ``found_on``, then ``after``."""
    path = tmp_path / "r.sqlite"
    with Store(path) as s:
        ids = [s.add(_record(n, n, bpfi)) for n, bpfi in enumerate((0.16, 0.16, *after), start=2)]
        s.add_finding({"reading_id": ids[1], "component": "pump_de", "fault": "inner-race", "found_on": found_on})
    return path, ids


def test_the_largest_changes_never_span_a_repair(tmp_path, capsys):
    path, ids = _repaired_store(tmp_path, "2026-03-20")
    with Store(path, create=False) as s:
        doc = trend_document(s, PUMP, point="P1H", waterfall=True, plots=True, names={})
    section = doc["points"][0]["spectra"]
    # across the repair BPFI fell 0.16 -> 0.02; since it (April to May) it rose 0.01 -> 0.02
    assert (section["changes_from"], section["changes_to"]) == (ids[2], ids[3])
    bpfi = next(c for c in section["changes"] if c["at"] == "BPFI")
    assert (bpfi["before"], bpfi["after"]) == (pytest.approx(0.01), pytest.approx(0.02))
    assert section["repair"]["found_on"] == "2026-03-20" and section["repair"]["surveys_before"] == 2
    svg = section["waterfall"]["svg"]
    assert "repair 2026-03-20 (pump_de)" in svg and "grey: before the repair of pump_de" in svg
    assert svg.count('stroke="#a8a8a8"') == 2                  # the two surveys before it drawn grey
    for fmt in ("text", "md", "html"):
        assert "Repair of pump_de found 2026-03-20".lower() in render(doc, fmt, "trend").lower().replace("\\_", "_")
    jsonschema.validate(json.loads(render(doc, "json", "trend")), load_schema("trend.schema.json"))


@pytest.mark.parametrize("after, why", [((0.01,), "one survey since the repair of pump_de found 2026-03-20"),
                                        ((), "no survey with a spectrum after the repair of pump_de found")])
def test_too_few_surveys_after_a_repair_list_no_change_and_say_why(tmp_path, after, why):
    path, _ = _repaired_store(tmp_path, "2026-03-20", after)
    with Store(path, create=False) as s:
        doc = trend_document(s, PUMP, point="P1H", waterfall=True, names={})
    section = doc["points"][0]["spectra"]
    assert section["changes"] == [] and section["changes_why"].startswith(why)
    assert "no largest changes: " + why in render(doc, "text", "trend")


# a point on a gearbox's output shaft (invented demo values): the input shaft is seen through the mesh, the
# pump through a coupling at the same speed
GEARED = [{"name": "1X", "component": "gout", "family": "shaft", "shaft": "gout", "frequency_hz": 7.69},
          {"name": "1X", "component": "pump", "family": "shaft", "shaft": "pump", "frequency_hz": 7.69},
          {"name": "1X", "component": "gin", "family": "shaft", "shaft": "gin", "frequency_hz": 24.68},
          {"name": "1X", "component": "far", "family": "shaft", "shaft": "far", "frequency_hz": 3.1},
          {"name": "BSF", "component": "gout_b", "family": "bearing", "shaft": "gout", "frequency_hz": 16.33},
          {"name": "vane pass", "component": "impeller", "family": "flow", "shaft": "pump", "frequency_hz": 38.43}]


def test_the_marks_name_the_orders_of_every_shaft_the_point_sees():
    marks = marks_for(GEARED, "gout", "gout_b", 1000.0, {"gout", "gin", "pump"})
    labels = [m["label"] for m in marks]
    assert {"1X", "2X", "3X", "1X gin", "2X gin", "3X gin", "vane pass", "BSF"} == set(labels)
    assert not any("pump" in x or "far" in x for x in labels)    # same speed as 1X: one line; far: not seen
    assert [m["label"] for m in marks_for(GEARED, "gout", "gout_b", 1000.0)] == ["1X", "2X", "BSF", "3X"]
    # another shaft's lines are named but do not stretch the figure: 12 orders of the point's 1X (92 Hz)
    # are drawn, not 1.3 x the vane pass of the pump (50 Hz) nor 1.3 x 3X gin (96 Hz)
    from engine.trend.waterfall import drawn_to_hz
    rows = [{"amplitudes": np.ones(2000), "step_hz": 0.5, "resolution_hz": 0.5}]
    assert drawn_to_hz(rows, marks) == pytest.approx(12 * 7.69)


def test_a_line_two_names_reach_goes_to_the_shaft_order_before_a_bearing_multiple():
    from engine.trend.waterfall import name_of, named_lines

    names = named_lines(marks_for(GEARED, "gout", "gout_b", 1000.0, {"gout", "gin"}))
    # 49.00 Hz on a 1 Hz grid: 3 x BSF (48.99) and 2X of the input shaft (49.36) lie within half a line of
    # each other, so the grid cannot tell them apart: the shaft order names it, the other is listed
    at, also = name_of(49.0, 1.0, names)
    assert at == "2X gin" and "3xBSF" in also
    # on a fine grid (0.1 Hz) 3 x BSF is the nearer by more than half a line: the nearer names it
    assert name_of(49.0, 0.1, names)[0] == "3xBSF"
    assert name_of(200.0, 1.0, names) == (None, [])


def test_the_shafts_seen_come_from_the_machine_file(tmp_path):
    from support import CASES

    with Store(tmp_path / "h.sqlite") as s:
        for month in (1, 2):
            rec = _record(month, month, 0.01)
            rec["machine_file"] = str(CASES / "machines" / "rw2-raw-water-pump.yaml")
            s.add(rec)
        section = spectra_section(s, PUMP, "P1H")
    # the demo pump (invented plant data): the pump shaft is coupled to the motor's
    assert section["shafts_seen"] == ["motor", "pump"]


def test_a_waterfall_of_every_point_reads_the_machine_file_once(tmp_path, monkeypatch):
    # closing-stop29: the waterfall read the machine file once per point (and the repairs once more)
    import engine.machine as machine_module

    from support import CASES

    reads = []
    real = machine_module.load_machine
    monkeypatch.setattr(machine_module, "load_machine", lambda path: reads.append(path) or real(path))
    with Store(tmp_path / "h.sqlite") as s:
        for n, point in enumerate(("P1H", "P2H", "P1A", "P1H", "P2H", "P1A")):
            rec = _record(n + 1, 1 + n // 3, 0.01, point=point)
            rec["machine_file"] = str(CASES / "machines" / "rw2-raw-water-pump.yaml")
            s.add(rec)
        s.add_finding({"reading_id": 1, "component": "pump_de", "fault": "inner-race", "stage": 2,
                       "found_on": "2026-01-20"})
        doc = trend_document(s, PUMP, waterfall=True, names={})
    assert [p["spectra"]["shafts_seen"] for p in doc["points"]] == [["motor", "pump"]] * 3
    assert len(reads) == 1


@pytest.mark.parametrize("taken_at, after", [("2026-03-20T23:59:59", False), ("2026-03-21T00:00:00", True),
                                             ("2026-03-21T00:30:00+02:00", True), ("2026-03-19T10:00:00", False)])
def test_one_cut_at_a_repair_for_the_trend_and_the_waterfall(taken_at, after):
    # a reading on the day found is the as-found condition (engine/trend/repairs.py); the trend's baseline
    # (report._since), the waterfall's surveys and the route summary all ask Repair.is_after
    from engine.trend.repairs import Repair

    r = Repair("2026-03-20", "pump_de", "inner-race", "inner race", 2, None, None, (), None)
    assert r.is_after(taken_at) is after


def test_a_line_has_one_rounding_in_the_waterfall_words(tmp_path, capsys):
    # nu25 item 21: "largest ... at 25.2 Hz" beside "25.25 Hz" for one line; every frequency of the section
    # is worded to two decimals. Lines of a compact spectrum kept 1 Hz apart from a 0.5 Hz resolution sit
    # at k + 0.25 Hz (invented demo values)
    with Store(tmp_path / "h.sqlite") as s:
        for month, one_x in ((1, 0.2), (2, 0.6)):
            rec = _record(month, month, 0.0)
            a = np.full(800, 0.001)
            a[24] = one_x                               # the line at 24.25 Hz
            rec["spectra"] = spectra_of([CompactSpectrum("ch1", "P1H", "pump", "pump_de", "velocity", "mm/s RMS",
                                                         1.0, 0.5, a.astype(np.float32))], {"ch1"})
            s.add(rec)
    for fmt in ("text", "md"):
        out = ["-o", str(tmp_path / "t.md")] if fmt == "md" else []
        assert main(["trend", PUMP, "--point", "P1H", "--waterfall", "--format", fmt,
                     "--store", str(tmp_path / "h.sqlite"), *out]) == 0
        text = capsys.readouterr().out if fmt == "text" else (tmp_path / "t.md").read_text(encoding="utf-8")
        assert "largest 0.6 mm/s at 24.25 Hz" in text and "24.25" in text.split("largest 0.6 mm/s")[1]
        assert "24.2 Hz" not in text
