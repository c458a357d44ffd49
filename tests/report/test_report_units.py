"""Reports follow the units a user chose (--frequency-unit, --velocity-unit, a site's ``units:``):
the reasoning trail's values, the levels table, the zone boundaries and Fmax, in every format;
JSON says which units it shows and keeps its _hz and _mm_s fields in Hz and mm/s RMS."""

from __future__ import annotations

import json
import re
from datetime import datetime, timedelta

import pytest

from engine.advice import ZoneScale
from engine.cli import main
from engine.common.errors import RulebookError
from engine.common.units import ShownUnits
from engine.pipeline import document_of
from engine.reasoning import load_rulebook
from engine.report import render
from engine.trend.report import trend_from_rows
from engine.trend.shown import trend_in_units

from support import CASES, MADE_AT, case_diagnosis


@pytest.fixture(scope="module")
def diagnosis():
    return case_diagnosis("rw2-pump-de-inner-race")


def _firings(doc):
    for h in doc["hypotheses"]:
        yield from h["support"]
    yield from doc["chain"]


def test_the_trail_shows_frequencies_in_cpm_from_the_same_measured_values(diagnosis):
    hz = document_of(diagnosis, made_at=MADE_AT)
    cpm = document_of(diagnosis, made_at=MADE_AT, units=ShownUnits("cpm", "mm/s-rms"))
    assert [f["because"] for f in _firings(hz)] != [f["because"] for f in _firings(cpm)]
    checked = 0
    for a, b in zip(_firings(hz), _firings(cpm), strict=True):
        assert a["facts"] == b["facts"]                        # the evidence values keep Hz
        hz_values = re.findall(r"([0-9.]+) Hz\b", a["because"])
        cpm_values = re.findall(r"([0-9.]+) CPM\b", b["because"])
        assert " Hz" not in b["because"] and len(hz_values) == len(cpm_values)
        for h, c in zip(hz_values, cpm_values, strict=True):
            # 1 Hz = 60 CPM (definition of the minute); both worded to three significant digits
            assert float(c) == pytest.approx(60 * float(h), rel=0.01)
            checked += 1
    assert checked >= 3


def test_orders_are_of_the_shaft_under_the_sensor(diagnosis):
    doc = document_of(diagnosis, made_at=MADE_AT, units=ShownUnits("orders", "mm/s-rms"))
    speeds = doc["units"]["shaft_speeds_hz"]
    found = 0
    for f in _firings(doc):
        for fact in (x["values"] for x in f["facts"]):
            if "freq_hz" in fact and fact.get("location_shaft") in speeds and fact["freq_hz"]:
                # an order is the frequency over the speed of the shaft the point's bearing carries
                order = fact["freq_hz"] / speeds[fact["location_shaft"]]
                shown = f"{order:.2f}X" if order < 10 else f"{order:.1f}X"
                if shown in f["because"]:
                    found += 1
    assert found >= 1


def test_levels_and_boundaries_in_inches_stay_rms_for_a_broadband_level(diagnosis):
    doc = document_of(diagnosis, made_at=MADE_AT, units=ShownUnits("hz", "in/s-peak"))
    units = doc["units"]
    assert units["velocity"] == "in/s-peak" and units["overall_velocity_label"] == "in/s RMS"
    # ISO 20816-3 group 2 rigid, B/C 2.8 mm/s (from memory) = 0.110 in/s (1 in = 25.4 mm exactly, 1959)
    assert units["zone_boundaries_text"][1] == "0.110"
    # in JSON, numbers with their unit beside them
    assert units["zone_boundaries"]["b_c"] == pytest.approx(2.8 / 25.4, rel=1e-3)
    assert units["zone_boundaries"]["unit"] == "in/s RMS" and units["point_level_unit"] == "in/s RMS"
    for z in doc["zones"]["points"]:
        # broadband: RMS in inches, never sqrt(2) x RMS (the peak of a sine only)
        assert units["point_levels"][z["channel"]] == pytest.approx(z["velocity_rms_mm_s"] / 25.4, rel=1e-3)
        assert float(units["point_levels_text"][z["channel"]]) == pytest.approx(z["velocity_rms_mm_s"] / 25.4,
                                                                               rel=0.01)
    for fmt in ("text", "md", "html"):
        out = render(doc, fmt)
        assert "in/s RMS" in out and "mm/s" not in out, fmt      # the trail holds g values only here
    # the site's velocity alarms too: value and limits in in/s, still RMS (a band's level)
    velocity = [a for a in doc["alarms"]["results"] if a["quantity"].startswith("velocity")]
    assert velocity and all(a["unit"] == "in/s RMS" for a in velocity)
    plain = {(a["point"], a["band"], a["quantity"]): a
             for a in document_of(diagnosis, made_at=MADE_AT)["alarms"]["results"]}
    for a in velocity:       # shown to four digits
        assert a["alert"] == pytest.approx(plain[(a["point"], a["band"], a["quantity"])]["alert"] / 25.4, rel=1e-3)
    parsed = json.loads(render(doc, "json"))
    assert parsed["units"]["velocity"] == "in/s-peak"
    assert parsed["zones"]["points"][0]["velocity_rms_mm_s"] == doc["zones"]["points"][0]["velocity_rms_mm_s"]


def test_a_line_in_peak_is_sqrt2_times_its_rms():
    unbalance = case_diagnosis("rw2-impeller-unbalance")
    rms = document_of(unbalance, made_at=MADE_AT)
    peak = document_of(unbalance, made_at=MADE_AT, units=ShownUnits("hz", "mm/s-peak"))
    pairs = [(a["because"], b["because"]) for a, b in zip(_firings(rms), _firings(peak), strict=True)
             if "mm/s RMS" in a["because"]]
    assert pairs
    for a, b in pairs:
        for r, p in zip(re.findall(r"([0-9.]+) mm/s RMS", a), re.findall(r"([0-9.]+) mm/s peak", b), strict=True):
            # peak = sqrt(2) x RMS for a sine (one spectral line): handbook formula
            assert float(p) == pytest.approx(2 ** 0.5 * float(r), rel=0.02, abs=0.006)


def test_the_default_report_is_unchanged_in_words(diagnosis):
    doc = document_of(diagnosis, made_at=MADE_AT)
    assert doc["units"]["frequency"] == "hz" and doc["units"]["velocity"] == "mm/s-rms"
    text = render(doc, "text")
    assert "mm/s RMS  zone" in text and " Hz (" in text and "CPM" not in text


def test_a_site_file_chooses_units_and_a_bad_name_is_one_line_with_file_and_line(tmp_path, capsys):
    site = tmp_path / "site.yaml"
    site.write_text("rulebook: units only\nunits: {frequency: cpm, velocity: in/s-peak}\n")
    assert load_rulebook(site).units == ShownUnits("cpm", "in/s-peak")
    assert load_rulebook().units == ShownUnits()
    later = tmp_path / "later.yaml"
    later.write_text("rulebook: later\nunits: {velocity: mm/s-peak}\n")
    assert load_rulebook(site, later).units == ShownUnits("cpm", "mm/s-peak")   # a later file wins
    bad = tmp_path / "bad.yaml"
    bad.write_text("rulebook: bad\nunits:\n  frequency: rpm\n")
    with pytest.raises(RulebookError) as err:
        load_rulebook(bad)
    assert err.value.path == str(bad) and err.value.line == 3 and "rpm" in str(err.value)
    assert main(["rulebook", "check", "--site", str(bad)]) == RulebookError.exit_code
    out = capsys.readouterr()
    assert "Traceback" not in out.err and "bad.yaml" in out.err + out.out


def test_the_shipped_demo_site_states_its_units(tmp_path):
    assert load_rulebook(CASES / "site").units == ShownUnits()


def test_the_command_line_wins_over_the_site(tmp_path, capsys):
    from engine.cli.diagnose import register  # noqa: F401  (the command exists)

    site = tmp_path / "site.yaml"
    site.write_text("rulebook: units only\nunits: {frequency: cpm}\n")
    reading = tmp_path / "r.wav"
    machine = CASES / "machines" / "rw2-raw-water-pump.yaml"
    assert main(["synth", str(machine), "-o", str(reading), "--fault", "inner-race", "--component", "pump_de",
                 "--stage", "3", "--seed", "3", "--duration", "2"]) == 0
    capsys.readouterr()
    assert main(["diagnose", str(reading), "--machine", str(machine), "--site", str(site), "--format", "json"]) == 0
    assert json.loads(capsys.readouterr().out)["units"]["frequency"] == "cpm"
    assert main(["diagnose", str(reading), "--machine", str(machine), "--site", str(site),
                 "--frequency-unit", "orders", "--velocity-unit", "in/s-rms"]) == 0
    out = capsys.readouterr().out
    assert "CPM" not in out and "in/s RMS  zone" in out and re.search(r"\d\.\d+X\b", out)


def test_a_trend_shows_velocity_indicators_in_the_chosen_unit():
    scale = ZoneScale(2, "rigid", 1.4, 2.8, 4.5, False, "ISO 20816-3 (from memory)")
    t0 = datetime(2026, 1, 1, 8)
    rows = [{"id": i, "taken_at": (t0 + timedelta(days=30 * i)).isoformat(), "channel": "P1H", "point": "P1H",
             "direction": "horizontal", "indicators": {"velocity_rms_mm_s": v, "x1_mm_s": v / 2}}
            for i, v in enumerate([1.0, 1.1, 1.0, 1.2, 2.54])]
    doc = trend_in_units(trend_from_rows("M", rows, scale), ShownUnits("hz", "in/s-peak"))
    by_name = {i["name"]: i for i in doc["points"][0]["indicators"]}
    # 2.54 mm/s = 0.1 in/s (1 in = 25.4 mm exactly); broadband stays RMS
    overall = by_name["velocity_rms_mm_s"]
    assert overall["latest"] == pytest.approx(0.1) and "in/s RMS" in overall["label"]
    # a line: sqrt(2) x RMS (a sine)
    assert by_name["x1_mm_s"]["latest"] == pytest.approx(0.05 * 2 ** 0.5) and "in/s peak" in by_name["x1_mm_s"]["label"]
    text = render(doc, "text", "trend")
    assert "in/s RMS" in text and "mm/s" not in text.split("indicator")[0].split("baseline:")[0]
    with pytest.raises(ValueError):
        trend_in_units(doc, ShownUnits("hz", "in/s-rms"))      # never converted twice


def test_evidence_shows_frequencies_and_velocities_in_the_chosen_units(tmp_path, capsys):
    reading = tmp_path / "r.wav"
    machine = CASES / "machines" / "rw2-raw-water-pump.yaml"
    assert main(["synth", str(machine), "-o", str(reading), "--fault", "unbalance", "--component", "pump",
                 "--stage", "3", "--seed", "4", "--duration", "1", "--points", "P1H"]) == 0
    capsys.readouterr()
    assert main(["evidence", str(reading), "--machine", str(machine), "--json"]) == 0
    facts = json.loads(capsys.readouterr().out)
    assert main(["evidence", str(reading), "--machine", str(machine), "--frequency-unit", "cpm",
                 "--velocity-unit", "in/s-peak"]) == 0
    lines = [line for line in capsys.readouterr().out.splitlines() if line.startswith("tone ")]
    tones = [f for f in facts if f["kind"] == "tone"]
    assert len(lines) == len(tones) >= 1
    for line, fact in zip(lines, tones, strict=True):
        cpm = float(re.search(r"\bfreq=([0-9.]+) CPM", line).group(1))
        peak = float(re.search(r"\bamplitude=([0-9.]+) in/s peak", line).group(1))
        assert cpm == pytest.approx(60 * fact["freq_hz"], rel=0.01)                 # 1 Hz = 60 CPM
        # a line: sqrt(2) x RMS (a sine), 1 in = 25.4 mm exactly
        assert peak == pytest.approx(2 ** 0.5 * fact["amplitude_mm_s"] / 25.4, rel=0.01, abs=6e-6)


@pytest.mark.parametrize("frequency, velocity", [("cpm", "in/s-rms"), ("orders", "mm/s-peak"), ("hz", "mm/s-rms")])
def test_the_json_units_block_gives_numbers_with_their_unit(diagnosis, frequency, velocity):
    import jsonschema

    from engine.common.yamlfile import load_schema

    doc = json.loads(render(document_of(diagnosis, made_at=MADE_AT, units=ShownUnits(frequency, velocity)), "json"))
    jsonschema.validate(doc, load_schema("report.schema.json"))
    units, scale, settings = doc["units"], doc["zones"]["scale"], doc["acquisition"]
    per_mm = 1 / 25.4 if velocity.startswith("in/s") else 1.0     # 1 in = 25.4 mm exactly (1959)
    bounds = units["zone_boundaries"]
    # broadband boundaries stay RMS whichever is chosen (sqrt(2) x RMS is the peak of a sine only)
    assert bounds["unit"] == ("in/s RMS" if per_mm != 1 else "mm/s RMS")
    for key, mm_s in (("a_b", scale["ab_mm_s"]), ("b_c", scale["bc_mm_s"]), ("c_d", scale["cd_mm_s"])):
        assert isinstance(bounds[key], float) and bounds[key] == pytest.approx(mm_s * per_mm, rel=1e-3)
    ref = units["shaft_speeds_hz"][diagnosis.evidence.speed["shaft"]]
    # CPM = 60 x Hz (definition of the minute); an order is the frequency over the shaft's speed
    expected = {"cpm": 60 * settings["fmax_hz"], "orders": settings["fmax_hz"] / ref, "hz": settings["fmax_hz"]}
    assert units["fmax"]["value"] == pytest.approx(expected[frequency], rel=1e-5)
    assert units["fmax"]["unit"] == {"cpm": "CPM", "orders": "orders", "hz": "Hz"}[frequency]
    for channel, value in units["point_levels"].items():
        assert isinstance(value, float) and isinstance(units["point_levels_text"][channel], str)
