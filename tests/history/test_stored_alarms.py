"""The site alarms a diagnosis judged its reading by are stored with it (schema 8): `trend` shows and
projects to the levels as applied (a site alarm file's over the machine file's) and says where they came
from; a store written before keeps every reading, and its trend falls back to the machine file's alarms."""

from __future__ import annotations

import json

import yaml

from engine.cli import main
from engine.history.store import SCHEMA_VERSION, Store
from engine.trend.report import FROM_MACHINE_FILE, trend_document

from support import RW2, diagnose_stored, pump_reading

MACHINE = "RW-2 raw water pump"
# a site's own 1X limits at P1H, lower than the machine file's (alert 2.0, danger 3.5 mm/s RMS)
SITE = {"machines": {MACHINE: [{"point": "P1H", "band": "1X", "quantity": "velocity_mm_s_rms", "alert": 1.0,
                                "danger": 1.5, "source": "test site: tighter 1X limits"}]}}


def _site(folder):
    path = folder / "site-alarms.yaml"
    path.write_text(yaml.safe_dump(SITE, sort_keys=False))
    return path


def test_the_alarms_a_reading_was_judged_by_are_stored_with_it(tmp_path):
    store, site = tmp_path / "h.sqlite", _site(tmp_path)
    assert diagnose_stored(pump_reading(tmp_path), store, "--alarms", str(site), "--taken-at", "2026-03-02T09:00") == 0
    with Store(store, create=False) as s:
        assert s.version == SCHEMA_VERSION == 8
        (kept,) = s.db.execute("SELECT alarms_kept FROM readings").fetchall()
        assert kept[0] == 1
        at = s.alarms(MACHINE)["P1H"]
        rows = {(a["band"], a["quantity"]): a for a in at["alarms"]}
    one_x = rows[("1X", "velocity_mm_s_rms")]
    assert (one_x["alert"], one_x["danger"]) == (1.0, 1.5)               # the site's, not the file's 2.0 / 3.5
    assert one_x["set_at"].startswith(str(site)) and one_x["source"] == "test site: tighter 1X limits"
    overall = rows[("overall", "velocity_mm_s_rms")]                      # the machine file's, not replaced
    assert (overall["alert"], overall["danger"]) == (2.8, 4.5) and overall["set_at"].startswith(str(RW2))


def test_trend_shows_and_projects_to_the_stored_site_levels_and_says_where_they_came_from(tmp_path, capsys):
    store, site = tmp_path / "h.sqlite", _site(tmp_path)
    assert diagnose_stored(pump_reading(tmp_path), store, "--alarms", str(site), "--taken-at", "2026-03-02T09:00") == 0
    capsys.readouterr()
    out = tmp_path / "t.json"
    assert main(["trend", MACHINE, "--point", "P1H", "--store", str(store), "--format", "json", "-o", str(out)]) == 0
    (p,) = json.loads(out.read_text())["points"]
    (one_x,) = [a for a in p["alarms"] if a["band"] == "1X"]
    assert (one_x["alert"], one_x["danger"]) == (1.0, 1.5)
    assert one_x["judged"] == "as judged on reading 1 (2026-03-02)" and one_x["set_at"].startswith(str(site))
    assert any(x["limit_label"] == "alarm danger level 1X = 1.5 mm/s RMS" for x in p["projections"])
    assert main(["trend", MACHINE, "--point", "P1H", "--store", str(store)]) == 0
    text = capsys.readouterr().out
    assert f"danger 1.5 mm/s RMS (as judged on reading 1 (2026-03-02), set at {site}:" in text, text


def test_a_store_of_schema_7_keeps_its_readings_and_its_trend_falls_back_to_the_machine_file(tmp_path):
    path = tmp_path / "h.sqlite"
    with Store(path, migrate_to=7) as old:
        rid = old.db.execute("INSERT INTO readings (content_hash, machine, machine_file, source, taken_at, time_from,"
                             " stored_at) VALUES ('h0', ?, ?, 'a.wav', '2026-01-12T08:30:00', 'route', 'now')",
                             (MACHINE, str(RW2))).lastrowid
        old.db.execute("INSERT INTO channels (reading_id, channel, point) VALUES (?, 'P1H', 'P1H')", (rid,))
        old.db.executemany("INSERT INTO indicators VALUES (?, 'P1H', ?, ?)",
                           [(rid, "velocity_rms_mm_s", 1.2), (rid, "band[1X]_mm_s", 0.9)])
        assert "alarms" not in [r[0] for r in old.db.execute("SELECT name FROM sqlite_master")]
    with Store(path) as new:
        assert new.version == SCHEMA_VERSION
        (row,) = new.readings(MACHINE)
        assert row["id"] == rid and row["alarms_kept"] is None
        assert new.alarms(MACHINE) == {}                   # not known: never read as "no alarms"
        doc = trend_document(new, MACHINE, point="P1H")
    (p,) = doc["points"]
    (one_x,) = [a for a in p["alarms"] if a["band"] == "1X"]
    assert (one_x["alert"], one_x["danger"]) == (2.0, 3.5) and one_x["judged"] == FROM_MACHINE_FILE
    assert one_x["set_at"].startswith(str(RW2))


def test_a_damaged_stored_alarm_is_left_out_not_read(tmp_path):
    store = tmp_path / "h.sqlite"
    assert diagnose_stored(pump_reading(tmp_path), store, "--taken-at", "2026-03-02T09:00") == 0
    with Store(store) as s:
        s.db.execute("UPDATE alarms SET danger = 'high' WHERE band = '1X'")
        s.db.execute("UPDATE alarms SET alert = 9.0 WHERE band = 'bearing rates'")    # alert above danger
        bands = {a["band"] for a in s.alarms(MACHINE)["P1H"]["alarms"]}
    assert "1X" not in bands and "bearing rates" not in bands and "overall" in bands
