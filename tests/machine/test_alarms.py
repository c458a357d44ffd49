"""Alarm definitions: the machine file's and a site file's, their bands resolved through the kinematics
at a known speed, and every bad definition one line naming the file, the line and the field."""

from __future__ import annotations

import math

import pytest
import yaml

from engine.common.errors import MachineError
from engine.machine import load_machine
from engine.machine.alarms import band_ranges_hz, check_alarm_machines, load_alarm_file, with_site_alarms

from support import CASES, RW2, one_error_line

FAN = CASES / "machines" / "ct1-cooling-tower-fan.yaml"
MACHINE = RW2.read_text(encoding="utf-8").split("\nalarms:")[0]     # the demo pump without its own alarms


def _machine_with(tmp_path, alarms: list[dict], base: str = MACHINE):
    path = tmp_path / "m.yaml"
    path.write_text(base + "\n" + yaml.safe_dump({"alarms": alarms}, sort_keys=False), encoding="utf-8")
    return path


def _alarm(**over):
    return {"point": "P1H", "band": "1X", "quantity": "velocity_mm_s_rms", "alert": 2.0, "danger": 4.0} | over


def _ranges(machine, band, speeds=None, resolution=0.25, point="P1H"):
    a = next(a for a in machine.alarms if a.band == band and a.point == point)
    return band_ranges_hz(a, machine, speeds or machine.shaft_speeds_hz, resolution)


def test_order_bands_at_a_known_speed(tmp_path):
    m = load_machine(_machine_with(tmp_path, [_alarm(), _alarm(band="2-4X"), _alarm(band="0.5X")]))
    fr = 1800 / 60.0                                     # run the train at 1800 rpm: 1X is 30 Hz
    speeds = m.speeds_at(1800)
    lobe = 2 * 0.25                                      # +-2 lines of the Hann main lobe
    [(lo, hi)] = _ranges(m, "1X", speeds)
    assert (lo, hi) == pytest.approx((fr * 0.995 - lobe, fr * 1.005 + lobe))
    [(lo, hi)] = _ranges(m, "2-4X", speeds)
    assert (lo, hi) == pytest.approx((2 * fr * 0.995 - lobe, 4 * fr * 1.005 + lobe))
    [(lo, hi)] = _ranges(m, "0.5X", speeds)
    assert (lo + hi) / 2 == pytest.approx(15.0)


def test_bearing_rates_come_from_the_bearing_geometry(tmp_path):
    m = load_machine(_machine_with(tmp_path, [_alarm(point="P2H", band="bearing rates x1",
                                                     quantity="acceleration_g_rms", alert=0.1, danger=0.2)]))
    fr = 1486 / 60.0
    ratio = 22.225 / 95.0                                # pump_nde, 6312: 8 balls, d/D (handbook formulas,
    bpfo, bpfi = 4 * (1 - ratio) * fr, 4 * (1 + ratio) * fr   # Harris & Kotzalas, Rolling Bearing Analysis)
    bsf = 95.0 / (2 * 22.225) * (1 - ratio ** 2) * fr
    centres = sorted((lo + hi) / 2 for lo, hi in _ranges(m, "bearing rates x1", point="P2H"))
    assert centres == pytest.approx(sorted([bpfo, bpfi, bsf]), rel=1e-9)


def test_gmf_with_sidebands_of_the_faster_shaft():
    base = FAN.read_text(encoding="utf-8")
    fan = load_machine(FAN)
    point = fan.points[0].id
    text = base + "\n" + yaml.safe_dump({"alarms": [_alarm(point=point, band="GMF bevel_stage +-3")]})
    m = load_machine(_write(text))
    fr = 985 / 60.0
    gmf = 23 * fr                                        # GMF = teeth x shaft speed (handbook formula)
    [(lo, hi)] = _ranges(m, "GMF bevel_stage +-3", point=point)
    assert (lo + hi) / 2 == pytest.approx(gmf)
    assert hi - lo == pytest.approx(2 * (gmf * 0.005 + 3 * fr + 0.5))


def _write(text: str, name: str = "m.yaml"):
    import tempfile
    from pathlib import Path

    folder = Path(tempfile.mkdtemp())
    path = folder / name
    path.write_text(text, encoding="utf-8")
    return path


def test_a_site_file_overrides_the_machine_files_alarm(tmp_path):
    m = load_machine(_machine_with(tmp_path, [_alarm(), _alarm(band="2-4X")]))
    site = tmp_path / "alarms.yaml"
    site.write_text(yaml.safe_dump({"machines": {"RW-2 raw water pump": [_alarm(alert=3.0, danger=5.0),
                                                                         _alarm(point="P2H")]}}))
    merged = {(a.point, a.band): a for a in with_site_alarms(m, [site]).alarms}
    assert merged[("P1H", "1X")].alert == 3.0 and merged[("P1H", "1X")].where.startswith(str(site))
    assert merged[("P1H", "2-4X")].alert == 2.0 and ("P2H", "1X") in merged
    assert load_alarm_file(site)["RW-2 raw water pump"][0].danger == 5.0


def test_each_alarm_is_resolved_once_however_many_site_alarms(tmp_path, monkeypatch):
    # closing-stop29: every machine alarm was resolved again for each site alarm (n x m); now n + m
    import engine.machine.alarms as alarms_module

    own = [_alarm(band=f"{k}X") for k in range(1, 5)]
    m = load_machine(_machine_with(tmp_path, own))
    site = tmp_path / "alarms.yaml"
    site.write_text(yaml.safe_dump({"machines": {m.name: [_alarm(band=f"{k}X", alert=3.0, danger=5.0)
                                                          for k in (1, 2, 7)]}}))
    calls = []
    real = alarms_module.measures_the_same
    monkeypatch.setattr(alarms_module, "measures_the_same", lambda a, machine: calls.append(a.band) or real(a, machine))
    merged = with_site_alarms(m, [site]).alarms
    assert [(a.band, a.alert) for a in merged] == [("1X", 3.0), ("2X", 3.0), ("3X", 2.0), ("4X", 2.0), ("7X", 3.0)]
    assert len(calls) == len(own) + 3
    calls.clear()
    assert with_site_alarms(m, [tmp_path / "none.yaml"] * 0).alarms == m.alarms and calls == []


@pytest.mark.parametrize("alarm, field, words", [
    (_alarm(band="1-2 X"), "alarms.0.band", "'1-2 X' is not an accepted form; accepted: overall; orders"),
    (_alarm(band="3-2X"), "alarms.0.band", "low to high"),
    (_alarm(danger=1.0), "alarms.0.danger", "above the alert level"),
    (_alarm(band="1" + "0" * 400 + "X"), "alarms.0.band", "goes above 1000X"),
    (_alarm(band="10-2000000 Hz"), "alarms.0.band", "goes above 1e+06 Hz"),
    (_alarm(band="1X", quantity="acceleration_g_peak"), "alarms.0.quantity", "overall band only"),
    (_alarm(point="P9Z"), "alarms.0.point", "no measurement point 'P9Z'"),
    (_alarm(band="bearing nowhere rates"), "alarms.0.band", "not a bearing"),
    (_alarm(band="GMF +-3"), "alarms.0.band", "no gear mesh"),
    (_alarm(quantity="velocity"), "alarms.0.quantity", "velocity_mm_s_rms"),
    (_alarm(alert=-1), "alarms.0.alert", ""),
    (_alarm(colour="red"), "alarms.0.colour", "unknown field"),
])
def test_a_bad_alarm_is_one_line_with_file_line_and_field(tmp_path, capsys, alarm, field, words):
    path = _machine_with(tmp_path, [alarm])
    with pytest.raises(MachineError) as err:
        load_machine(path)
    text = str(err.value)
    assert text.startswith(f"{path}:") and field in text and words in text, text
    assert int(text.split(":")[1]) > MACHINE.count("\n")         # a line of the alarms section
    # the command line: exit 3 (a machine file's error), one line, no traceback
    one_error_line(capsys, 3, ["frequencies", path])


@pytest.mark.parametrize("content, words", [
    ({"machines": {"RW-2 raw water pump": [_alarm(point="P9Z")]}}, "no measurement point 'P9Z'"),
    ({"machines": {"RW-2 raw water pump": [_alarm(danger=2.0)]}}, "above the alert level"),
    ({"machines": {}}, "machines"),
    ({"alarms": []}, "alarms: unknown field"),
])
def test_a_bad_site_alarm_file_is_one_line_naming_it(tmp_path, capsys, content, words):
    site = tmp_path / "site-alarms.yaml"
    site.write_text(yaml.safe_dump(content))
    reading = tmp_path / "r.npz"
    import numpy as np

    np.savez(reading, a=np.sin(np.arange(8192) * 0.3), sample_rate_hz=8192.0, unit="g", point="P1H")
    err = one_error_line(capsys, 3, ["diagnose", reading, "--machine", RW2, "--alarms", site])
    assert str(site) in err and words in err, err


def test_band_of_an_overall_alarm_is_no_range(tmp_path):
    m = load_machine(_machine_with(tmp_path, [_alarm(band="overall", quantity="acceleration_g_peak")]))
    assert _ranges(m, "overall") == []
    assert not math.isnan(m.alarms[0].alert)


@pytest.mark.parametrize("machine_band, site_band, point, base", [
    ("GMF +-3", "GMF bevel_stage +-3", "GINH", FAN),       # GINH sees one mesh: the same band by its id
    ("bearing rates", "bearing pump_de rates x3", "P1H", RW2),   # P1H sits at pump_de; 3 harmonics by default
    ("bearing rates", "bearing rates x3", "P1H", RW2),
])
def test_a_site_alarm_replaces_the_same_band_written_another_way(tmp_path, machine_band, site_band, point, base):
    # nu25 item 3: both were listed for the same value, one "alert", one "within"
    own = base.read_text(encoding="utf-8").split("\nalarms:")[0]
    q = "acceleration_g_rms"
    m = load_machine(_machine_with(tmp_path, [_alarm(point=point, band=machine_band, quantity=q),
                                              _alarm(point=point, band="overall", quantity=q)], own))
    site = tmp_path / "alarms.yaml"
    site.write_text(yaml.safe_dump({"machines": {m.name: [_alarm(point=point, band=site_band, quantity=q,
                                                                 alert=0.05, danger=0.2)]}}))
    merged = with_site_alarms(m, [site]).alarms
    assert [(a.band, a.alert) for a in merged] == [(site_band, 0.05), ("overall", 2.0)]   # in the replaced one's place
    # a band that resolves to other ranges is another alarm, kept beside it
    site.write_text(yaml.safe_dump({"machines": {m.name: [_alarm(point=point, band="2X", quantity=q)]}}))
    assert [a.band for a in with_site_alarms(m, [site]).alarms] == [machine_band, "overall", "2X"]


def test_a_site_file_must_name_a_machine_of_the_run_and_no_near_miss(tmp_path, capsys):
    # nu25 item 4: a misspelt machine name left the file's alarms silently unused (exit 0)
    site = tmp_path / "alarms.yaml"
    known = ["RW-2 raw water pump", "BW-1 backwash blower"]
    for names, words in [
        (["RW-2 raw water pmp"], "no machine 'RW-2 raw water pmp' in this run; did you mean 'RW-2 raw water pump'?"),
        (["rw-2  raw water pump", "BW-1 backwash blower"], "did you mean 'RW-2 raw water pump'?"),
        (["CT-9 some other fan"], "names no machine of this run ('CT-9 some other fan')"),
    ]:
        site.write_text(yaml.safe_dump({"machines": {n: [_alarm()] for n in names}}))
        with pytest.raises(MachineError) as err:
            check_alarm_machines([site], known)
        text = str(err.value)
        assert text.startswith(f"{site}:") and words in text, text
        assert "known machines: 'BW-1 backwash blower', 'RW-2 raw water pump'" in text.replace("Known", "known")
    # one file may hold a whole site's alarms: another machine's beside this one's is no error
    whole_site = {"RW-2 raw water pump": [_alarm()], "CT-9 some other fan": [_alarm()]}
    site.write_text(yaml.safe_dump({"machines": whole_site}))
    check_alarm_machines([site], known)
    # the command line: one line, exit 3 as for any bad site alarm file
    site.write_text(yaml.safe_dump({"machines": {"RW-2 raw water pmp": [_alarm()]}}))
    reading = tmp_path / "r.npz"
    import numpy as np

    np.savez(reading, a=np.sin(np.arange(8192) * 0.3), sample_rate_hz=8192.0, unit="g", point="P1H")
    err = one_error_line(capsys, 3, ["diagnose", reading, "--machine", RW2, "--alarms", site])
    assert "did you mean 'RW-2 raw water pump'?" in err and "Known machines: 'RW-2 raw water pump'" in err, err


@pytest.mark.parametrize("band", ["1x", "100-400 cpm", "bearing rates x0", "GMF +- 3"])
def test_a_bad_band_is_named_in_words_with_the_accepted_forms(tmp_path, band):
    # nu25 item 18: the error was the schema's raw regular expression
    path = _machine_with(tmp_path, [_alarm(band=band)])
    with pytest.raises(MachineError) as err:
        load_machine(path)
    text = str(err.value)
    assert f"{band!r} is not an accepted form; accepted: overall; orders of the point's shaft (1X, 2-4X)" in text
    assert "^(" not in text and "[0-9]" not in text, text
