"""The sentences a report quotes from the reasoning (the limits of a reading, the settings to measure
again with, the differential's separating signs and the sign against each rival) follow the chosen
units as the trail does: each is worded again from its firing's measured values, never by editing words."""

from __future__ import annotations

import re

import pytest

from engine.common.units import ShownUnits
from engine.pipeline import document_of
from engine.report import render

from support import MADE_AT, case_diagnosis


@pytest.fixture(scope="module")
def misalignment():
    return case_diagnosis("rw2-misalignment")


@pytest.fixture(scope="module")
def inner_race():
    """A reading with an impact train, so the ring-frequency limitation is said of it."""
    return case_diagnosis("rw2-pump-de-inner-race")


def _quoted(doc):
    return [*doc["limitations"], *doc["remeasure"],
            *(t for dx in doc["differential"] for t in (*dx["separating"], *(r["against"] for r in dx["rivals"])))]


def test_a_limitation_gives_its_ring_frequency_in_cpm(inner_race):
    hz = document_of(inner_race, made_at=MADE_AT)
    cpm = document_of(inner_race, made_at=MADE_AT, units=ShownUnits("cpm", "mm/s-rms"))
    pairs = [(a, b) for a, b in zip(hz["limitations"], cpm["limitations"], strict=True) if " Hz" in a]
    assert pairs
    for a, b in pairs:
        assert " Hz" not in b
        for h, c in zip(re.findall(r"([0-9.]+) Hz\b", a), re.findall(r"([0-9.]+) CPM\b", b), strict=True):
            # 1 Hz = 60 cycles per minute (definition of the minute); both worded to three or more digits
            assert float(c) == pytest.approx(60 * float(h), rel=0.01)
    assert "CPM" in render(cpm, "text").split("LIMITS OF THIS READING")[1].split("SITE ALARMS")[0]


def test_the_differential_gives_1x_levels_in_inches_peak(misalignment):
    rms = document_of(misalignment, made_at=MADE_AT)
    peak = document_of(misalignment, made_at=MADE_AT, units=ShownUnits("hz", "in/s-peak"))
    pairs = [(a, b) for a, b in zip(_quoted(rms), _quoted(peak), strict=True) if "mm/s RMS" in a]
    assert pairs
    for a, b in pairs:
        assert "mm/s" not in b
        for r, p in zip(re.findall(r"([0-9.]+) mm/s RMS", a), re.findall(r"([0-9.]+) in/s peak", b), strict=True):
            # one 1X line: peak = sqrt(2) x RMS (a sine, handbook formula); 1 in = 25.4 mm exactly (1959)
            assert float(p) == pytest.approx(2 ** 0.5 * float(r) / 25.4, rel=0.02)
    text = render(peak, "text").split("DIFFERENTIAL")[1].split("LIMITS OF THIS READING")[0]
    assert "in/s peak" in text and "mm/s" not in text


def test_orders_in_a_quoted_sentence_are_of_the_shaft_under_the_sensor(inner_race):
    doc = document_of(inner_race, made_at=MADE_AT, units=ShownUnits("orders", "mm/s-rms"))
    hz = document_of(inner_race, made_at=MADE_AT)
    a = next(x for x in hz["limitations"] if "ring near" in x)
    b = next(x for x in doc["limitations"] if "ring near" in x)
    ring = float(re.search(r"ring near ([0-9.]+) Hz", a).group(1))
    order = float(re.search(r"ring near ([0-9.]+)X", b).group(1))
    # an order is the frequency over the shaft's speed (orders of the reference shaft for a fact of none)
    ref = doc["units"]["shaft_speeds_hz"][inner_race.evidence.speed["shaft"]]
    assert order == pytest.approx(ring / ref, rel=0.01)


def test_the_quoted_sentences_are_unchanged_in_the_default_units(misalignment):
    doc = document_of(misalignment, made_at=MADE_AT)
    assert doc["limitations"] == [" ".join(x.split()) for x in misalignment.advice.limitations]
    assert [t for dx in doc["differential"] for t in dx["separating"]] == \
        [" ".join(t.split()) for dx in misalignment.reasoning.differential for t in dx.separating]


def test_what_the_settings_cannot_show_is_worded_in_cpm():
    belt = case_diagnosis("bw1-belt-slack")
    hz = document_of(belt, made_at=MADE_AT)
    cpm = document_of(belt, made_at=MADE_AT, units=ShownUnits("cpm", "mm/s-rms"))
    pairs = [(a, b) for x, y in zip(hz["reach"], cpm["reach"], strict=True)
             for a, b in zip(x["reasons"], y["reasons"], strict=True) if " Hz" in a]
    assert pairs
    for a, b in pairs:
        assert " Hz" not in b
        for h, c in zip(re.findall(r"([0-9.]+) Hz\b", a), re.findall(r"([0-9.]+) CPM\b", b), strict=True):
            # 1 Hz = 60 CPM; the planner's words are converted as printed, to three significant digits
            assert float(c) == pytest.approx(60 * float(h), rel=0.01)


def test_rewording_leaves_everything_but_frequencies_in_hz():
    words = "BPFO of pump_de (143.09 Hz) beside 6X of pump (148.60 Hz); band 2000-10000 Hz; 2.56 x Fmax; 30 dB"
    assert ShownUnits().reword_hz(words) == words
    assert ShownUnits("orders").reword_hz(words) == words        # orders without a shaft speed: as they are
    # 1 Hz = 60 CPM; an order is f / shaft Hz (24.767 Hz here, invented)
    assert ShownUnits("cpm").reword_hz(words) == ("BPFO of pump_de (8585 CPM) beside 6X of pump (8916 CPM); "
                                                  "band 120000-600000 CPM; 2.56 x Fmax; 30 dB")
    assert ShownUnits("orders").reword_hz(words, 24.767) == ("BPFO of pump_de (5.78X) beside 6X of pump (6.00X); "
                                                             "band 80.8X-404X; 2.56 x Fmax; 30 dB")


def test_the_envelope_plot_names_its_band_in_the_axis_unit():
    inner = case_diagnosis("rw2-pump-de-inner-race")
    hz = [f["title"] for f in document_of(inner, made_at=MADE_AT)["figures"] if f["title"].startswith("Squared")]
    cpm = [f["title"] for f in document_of(inner, made_at=MADE_AT, units=ShownUnits("cpm", "mm/s-rms"))["figures"]
           if f["title"].startswith("Squared")]
    assert hz and len(hz) == len(cpm)
    for a, b in zip(hz, cpm, strict=True):
        lo, hi = map(float, re.search(r"band ([0-9.]+)-([0-9.]+) Hz$", a).groups())
        c_lo, c_hi = map(float, re.search(r"band ([0-9.]+)-([0-9.]+) CPM$", b).groups())
        # 1 Hz = 60 CPM (definition of the minute), three significant digits
        assert (c_lo, c_hi) == (pytest.approx(60 * lo, rel=0.01, abs=1), pytest.approx(60 * hi, rel=0.01))


def test_a_band_is_worded_from_its_edges_values():
    # closing-stop29: the envelope plot's band was converted from its printed "N Hz"; now from the edges.
    # 1 Hz = 60 CPM (definition of the minute); an order is f / shaft Hz (24.767 Hz here, invented)
    assert ShownUnits().frequency_range_text(1999.6, 10000.4) == "2000-10000 Hz"
    assert ShownUnits("cpm").frequency_range_text(1999.6, 10000.4) == "119976-600024 CPM"
    assert ShownUnits("orders").frequency_range_text(2000.0, 10000.0, 24.767) == "80.8X-404X"
    assert ShownUnits("orders").frequency_range_text(2000.0, 10000.0) == "2000-10000 Hz"    # no shaft speed
