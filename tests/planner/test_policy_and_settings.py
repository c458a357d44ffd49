"""The acquisition policy file and the settings arithmetic against the rules of the trade."""

import math

import pytest
import yaml
from hypothesis import given
from hypothesis import settings as hyp_settings
from hypothesis import strategies as st

from engine.cli import main
from engine.common.errors import RulebookError, UsageError
from engine.planner import given_settings, load_policy, read_policy, reading_settings
from engine.planner.policy import DEFAULT_POLICY

from support import CASES

POLICY = load_policy()


def test_shipped_policy_states_the_rules_of_the_trade():
    # Source: common practice in analyzer documentation (check-values.md, "Acquisition"):
    # sample rate = 2.56 x Fmax.
    assert POLICY.sample_rate_per_fmax == 2.56
    # Source: common practice: at least two lines between a carrier and its sideband.
    assert POLICY.lines_between_carrier_and_sideband == 2 and POLICY.separation_lines == 3
    # Source: common practice: 10 turns of the slowest shaft for a stable average.
    assert POLICY.min_revolutions == 10
    # Source: derived from check-values.md "Acquisition": cos(pi / k) >= 0.95 needs k >= 10.
    assert POLICY.min_samples_per_impact == 10
    assert math.cos(math.pi / POLICY.min_samples_per_impact) >= 0.95
    # Source: ISO 20816-3:2022 measurement band, 10-1000 Hz, 2-1000 Hz at 600 r/min and below (from memory,
    # check-values.md).
    assert POLICY.iso_band_hz == (10, 1000) and POLICY.iso_band_slow_hz == (2, 1000)
    assert POLICY.iso_slow_speed_rpm == 600


def test_every_policy_number_names_its_source():
    data = yaml.safe_load(DEFAULT_POLICY.read_text())["acquisition_policy"]
    for key in data:
        if key != "sources":
            assert POLICY.source_of(key).strip(), key


def _policy_file(tmp_path, change):
    data = yaml.safe_load(DEFAULT_POLICY.read_text())
    change(data["acquisition_policy"])
    path = tmp_path / "site-policy.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False))
    return path


BAD_POLICIES = [
    ("missing key", lambda d: d.pop("min_revolutions"), "min_revolutions"),
    ("misspelt key", lambda d: d.update(min_revolution=10), "did you mean"),
    ("wrong type", lambda d: d.update(sample_rate_per_fmax="2.56"), "sample_rate_per_fmax"),
    ("steps fall", lambda d: d.update(fmax_steps_hz=[1000, 500]), "rise"),
    ("band upside down", lambda d: d.update(bearing_resonance_hz=[9000, 2000]), "lower edge"),
    ("no source", lambda d: d["sources"].pop("overlap_pct"), "overlap_pct"),
]


@pytest.mark.parametrize("name, change, word", BAD_POLICIES, ids=[b[0] for b in BAD_POLICIES])
def test_bad_policy_is_one_line_with_file_and_line(tmp_path, name, change, word):
    path = _policy_file(tmp_path, change)
    with pytest.raises(RulebookError) as err:
        read_policy(path)
    text = str(err.value)
    assert text.startswith(str(path)) and word in text and "\n" not in text


def test_a_site_policy_changes_the_proposal(tmp_path, capsys):
    path = _policy_file(tmp_path, lambda d: d.update(lines_between_carrier_and_sideband=5))
    machine = str(CASES / "machines" / "rw2-raw-water-pump.yaml")
    assert main(["plan", machine, "--point", "M1H", "--no-proof", "--policy", str(path), "--format", "json"]) == 0
    import json
    doc = json.loads(capsys.readouterr().out)
    electrical = next(p for p in doc["proposals"] if p["purpose"] == "electrical")
    pole_pass = 4 * (2 * 50 / 4 - 1486 / 60)          # poles x slip frequency [derived]
    assert electrical["resolution_hz"] <= pole_pass / 6 * (1 + 1e-9)   # 5 lines between: 6 line spacings


def test_bad_policy_file_on_the_command_line_exits_5(tmp_path, capsys):
    path = _policy_file(tmp_path, lambda d: d.pop("window"))
    assert main(["plan", str(CASES / "machines" / "rw2-raw-water-pump.yaml"), "--policy", str(path)]) == 5
    err = capsys.readouterr().err
    assert err.startswith("tellwave: error:") and err.count("\n") == 1 and "Traceback" not in err


@hyp_settings(max_examples=60, deadline=None)
@given(fmax=st.sampled_from(POLICY.fmax_steps_hz), lines=st.sampled_from(POLICY.standard_lines))
def test_given_fmax_and_lines_follow_the_trade_formulas(fmax, lines):
    s = given_settings(POLICY, fmax_hz=fmax, lines=lines)
    # Source: common practice in analyzer documentation (check-values.md, "Acquisition"):
    assert s.sample_rate_hz == pytest.approx(2.56 * fmax)            # sample rate = 2.56 x Fmax
    assert s.resolution_hz == pytest.approx(fmax / lines)            # resolution = Fmax / lines
    assert s.record_s == pytest.approx(lines / fmax)                 # record length = lines / Fmax
    assert s.n_samples == round(2.56 * lines)                        # samples per record = 2.56 x lines


def test_a_reading_s_settings_are_its_sample_rate_and_length():
    s = reading_settings(POLICY, 25600.0, 65536, "r.wav")
    # Source: common practice (check-values.md, "Acquisition"): Fmax = fs / 2.56, lines = samples / 2.56
    assert s.fmax_hz == pytest.approx(10000.0) and s.lines == 25600
    assert s.resolution_hz == pytest.approx(25600 / 65536) and s.duration_s == pytest.approx(2.56)


def test_sample_rate_and_duration_give_fmax_and_lines():
    s = given_settings(POLICY, sample_rate_hz=5120.0, duration_s=2.0)
    assert s.fmax_hz == pytest.approx(2000.0) and s.lines == 4000


BAD_SETTINGS = [
    ("nothing about frequency", dict(lines=400), "--fmax"),
    ("nothing about length", dict(fmax_hz=1000.0), "--lines"),
    ("Fmax above Nyquist", dict(fmax_hz=2000.0, sample_rate_hz=3000.0, lines=400), "half the sample rate"),
    ("negative", dict(fmax_hz=-5.0, lines=400), "positive"),
    ("record longer than the waveform", dict(fmax_hz=1000.0, lines=800, duration_s=0.5), "longer than"),
]


@pytest.mark.parametrize("name, kwargs, word", BAD_SETTINGS, ids=[b[0] for b in BAD_SETTINGS])
def test_inconsistent_settings_are_usage_errors(name, kwargs, word):
    with pytest.raises(UsageError, match=word):
        given_settings(POLICY, **kwargs)
