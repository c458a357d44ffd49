"""Reading files in every format, units, quality gates and bad input."""

import wave

import numpy as np
import pytest
import pyuff
import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from scipy.io import wavfile

from engine.cli import main
from engine.common import units
from engine.common.errors import ReadingError, UsageError
from engine.readings import check_resolution, load_reading, sidecar_path
from engine.readings.quality import describe_issue

from support import tone

FS = 5120.0
N = 10240


def write_sidecar(path, **fields):
    sidecar_path(path).write_text(yaml.safe_dump(fields))


def write_wav_24bit(path, x, fs):
    ints = np.round(np.clip(x, -1, 1 - 2 ** -23) * 2 ** 23).astype("<i4")
    raw = b"".join(int(v).to_bytes(4, "little", signed=True)[:3] for v in ints)
    with wave.open(str(path), "wb") as w:
        w.setnchannels(1)
        w.setsampwidth(3)
        w.setframerate(int(fs))
        w.writeframes(raw)


@pytest.mark.parametrize("kind", ["int16", "int24", "int32", "float32"])
def test_wav_reads_back_engineering_units(tmp_path, kind):
    # A 0.5 full-scale sine at 80 Hz with 'scale: 2' (2 g at full scale) is 1 g peak.
    path = tmp_path / f"r_{kind}.wav"
    x = tone(80.0, FS, N, amplitude=0.5)
    if kind == "int16":
        wavfile.write(path, int(FS), np.round(x * 32767).astype(np.int16))
    elif kind == "int32":
        wavfile.write(path, int(FS), np.round(x * (2 ** 31 - 1)).astype(np.int32))
    elif kind == "int24":
        write_wav_24bit(path, x, FS)
    else:
        wavfile.write(path, int(FS), (x * 2).astype(np.float32))
    scale = 1.0 if kind == "float32" else 2.0
    write_sidecar(path, unit="g", scale=scale, point="M1H", direction="horizontal", speed_rpm=1486)
    r = load_reading(path)
    ch = r.channels[0]
    assert r.fs_hz == FS and r.speed_rpm == 1486 and ch.point == "M1H" and ch.direction == "horizontal"
    assert ch.quantity == "acceleration" and ch.unit == "g"
    peak_g = np.max(np.abs(ch.samples)) / units.STANDARD_GRAVITY_M_S2
    assert peak_g == pytest.approx(1.0, rel=2e-4)
    assert r.quality == ()


def test_wav_without_scale_is_refused_with_the_remedy(tmp_path):
    path = tmp_path / "r.wav"
    wavfile.write(path, int(FS), np.round(tone(80.0, FS, N, 0.3) * 32767).astype(np.int16))
    with pytest.raises(ReadingError, match=r"r.wav: a WAV file holds no engineering scale; give --scale"):
        load_reading(path, unit="g")
    assert load_reading(path, unit="g", scale=50.0).channels[0].full_scale_si == pytest.approx(50 * 9.80665)


def test_clipped_pcm_wav_is_flagged(tmp_path):
    path = tmp_path / "clip.wav"
    x = np.clip(tone(80.0, FS, N, amplitude=1.4), -1, 1)
    wavfile.write(path, int(FS), np.round(x * 32767).astype(np.int16))
    r = load_reading(path, unit="g", scale=1.0)
    kinds = [q.kind for q in r.quality]
    assert kinds == ["clipping"]


def test_stereo_wav_gives_two_channels(tmp_path):
    path = tmp_path / "two.wav"
    data = np.stack([tone(50.0, FS, N, 0.2), tone(70.0, FS, N, 0.1)], axis=1)
    wavfile.write(path, int(FS), data.astype(np.float32))
    write_sidecar(path, unit="mm/s", channels=[{"name": "P1H", "direction": "horizontal"},
                                              {"name": "P1A", "direction": "axial"}])
    r = load_reading(path)
    assert [c.name for c in r.channels] == ["P1H", "P1A"]
    assert r.channel("P1A").direction == "axial"
    assert np.max(np.abs(r.channel("P1H").samples)) == pytest.approx(0.2e-3, rel=1e-6)


def test_csv_with_time_column(tmp_path):
    path = tmp_path / "r.csv"
    t = np.arange(2048) / 2000.0
    rows = "\n".join(f"{ti:.7f},{v:.6f}" for ti, v in zip(t, tone(100.0, 2000.0, 2048, 2.0)))
    path.write_text("# unit: in/s\n# speed_rpm: 1780\ntime_s,P2H\n" + rows + "\n")
    r = load_reading(path)
    assert r.fs_hz == pytest.approx(2000.0, rel=1e-6)
    assert r.channels[0].name == "P2H" and r.speed_rpm == 1780
    # Source: 1 in = 25.4 mm exactly: 2 in/s peak is 50.8 mm/s peak.
    assert np.max(np.abs(r.channels[0].samples)) * 1e3 == pytest.approx(50.8, rel=1e-4)


def test_csv_with_sample_rate_header_and_no_column_names(tmp_path):
    path = tmp_path / "r.csv"
    x = tone(250.0, 1000.0, 1000, 1.0)  # samples land on the crests
    path.write_text("# sample_rate_hz: 1000\n# unit: mils\n" + "\n".join(f"{v},{-v}" for v in x))
    r = load_reading(path)
    assert [c.name for c in r.channels] == ["ch1", "ch2"] and r.fs_hz == 1000.0
    # Source: 1 mil = 25.4 um exactly.
    assert np.max(r.channels[1].samples) * 1e6 == pytest.approx(25.4, rel=1e-6)


def test_csv_bad_cell_names_the_line(tmp_path):
    path = tmp_path / "r.csv"
    path.write_text("# sample_rate_hz: 1000\n# unit: g\na\n" + "0.1\n" * 70 + "oops\n")
    with pytest.raises(ReadingError, match=r"r.csv:74: not a number"):
        load_reading(path)


@pytest.mark.parametrize("header, scale, decimals", [("time_s", 1.0, 7), ("Time (s)", 1.0, 7), ("time [ms]", 1e3, 4),
                                                      ("t", 1.0, 6)])
def test_csv_time_stamps_written_to_few_decimals_give_the_exact_rate(tmp_path, header, scale, decimals):
    # 1/25600 s is 3.90625e-5 s: written to 7 decimals each step reads 3.90e-5 or 3.91e-5, whose median
    # gave 25575 Hz (every frequency 0.1 % low); to 6 decimals the steps jitter by 2.4 %
    fs = 25600.0
    t = np.arange(4096) / fs * scale
    path = tmp_path / "r.csv"
    path.write_text(f"# unit: g\n{header},a\n" + "\n".join(f"{v:.{decimals}f},0.1" for v in t))
    assert load_reading(path).fs_hz == pytest.approx(fs, rel=1e-5)


def test_csv_irregular_time_is_refused(tmp_path):
    path = tmp_path / "r.csv"
    t = np.sort(np.random.default_rng(1).uniform(0, 1, 200))
    path.write_text("# unit: g\ntime,a\n" + "\n".join(f"{v},0.1" for v in t))
    with pytest.raises(ReadingError, match="not uniformly spaced"):
        load_reading(path)


def test_npy_needs_sidecar_and_reads_two_channels(tmp_path):
    path = tmp_path / "r.npy"
    np.save(path, np.stack([tone(60.0, FS, N, 3.0), tone(60.0, FS, N, 1.0)], axis=1))
    with pytest.raises(ReadingError, match="sample rate is not stated"):
        load_reading(path, unit="um")
    write_sidecar(path, sample_rate_hz=FS, unit="um")
    r = load_reading(path)
    assert len(r.channels) == 2 and r.channels[0].quantity == "displacement"
    assert np.max(r.channels[0].samples) == pytest.approx(3e-6, rel=1e-6)


def test_npz_carries_its_own_metadata(tmp_path):
    path = tmp_path / "r.npz"
    np.savez(path, DE=tone(60.0, FS, N, 0.5), sample_rate_hz=FS, unit="m/s^2", speed_rpm=1797.0)
    r = load_reading(path)
    assert r.channels[0].name == "DE" and r.fs_hz == FS and r.speed_rpm == 1797.0
    assert np.max(r.channels[0].samples) == pytest.approx(0.5, rel=1e-6)


def test_uff58_time_records(tmp_path):
    # UFF type 58 written by pyuff (the open Universal File Format reference implementation).
    path = tmp_path / "r.uff"
    sets = []
    for direction, amp in ((1, 0.2), (3, 0.4)):
        sets.append(pyuff.prepare_58(
            binary=0, func_type=1, rsp_node=7, rsp_dir=direction, ref_node=7, ref_dir=direction,
            rsp_ent_name="PUMP", ref_ent_name="PUMP", id1="RW-2 pump DE",
            data=tone(90.0, FS, 4096, amp), x=np.arange(4096) / FS, abscissa_spacing=1,
            abscissa_spec_data_type=17, ordinate_spec_data_type=12, orddenom_spec_data_type=13,
            ordinate_axis_units_lab="g"))
    pyuff.UFF(str(path)).write_sets(sets, mode="overwrite")
    r = load_reading(path)
    assert [c.name for c in r.channels] == ["PUMPx", "PUMPz"]
    assert r.fs_hz == pytest.approx(FS)
    assert np.max(r.channels[1].samples) / units.STANDARD_GRAVITY_M_S2 == pytest.approx(0.4, rel=1e-5)


@pytest.mark.parametrize("name, si", [("g", 9.80665), ("m/s^2", 1.0), ("mm/s", 1e-3), ("in/s", 0.0254),
                                      ("um", 1e-6), ("mils", 25.4e-6), ("m/s2", 1.0), ("ips", 0.0254)])
def test_units_convert_to_si(name, si):
    # Source: g_n = 9.80665 m/s^2 (CGPM 1901); 1 in = 25.4 mm (1959 agreement).
    assert units.to_si(1.0, name) == pytest.approx(si)
    assert units.from_si(units.to_si(3.7, name), name) == pytest.approx(3.7)


def test_unknown_unit_and_cross_quantity_conversion_are_refused():
    with pytest.raises(UsageError, match="unknown unit 'furlongs'"):
        units.unit("furlongs")
    with pytest.raises(UsageError, match="without integrating"):
        units.convert(1.0, "g", "mm/s")
    assert units.convert(1.0, "in/s", "mm/s") == pytest.approx(25.4)


def test_unknown_unit_in_a_file_names_the_file(tmp_path):
    path = tmp_path / "r.npz"
    np.savez(path, a=np.arange(1000.0), sample_rate_hz=1000.0, unit="furlongs")
    with pytest.raises(ReadingError, match=r"r.npz: unknown unit 'furlongs'"):
        load_reading(path)


def _npz(tmp_path, x, fs=FS):
    path = tmp_path / "q.npz"
    np.savez(path, a=x, sample_rate_hz=fs, unit="g")
    return load_reading(path)


def test_gate_nan_blocks(tmp_path):
    x = tone(50.0, FS, N)
    x[100:110] = np.nan
    r = _npz(tmp_path, x)
    assert [(q.kind, q.blocking) for q in r.quality] == [("nonfinite", True)]


def test_gate_dead_channel(tmp_path):
    assert [q.kind for q in _npz(tmp_path, np.full(N, 0.3)).quality] == ["dead"]


def test_gate_flat_topping(tmp_path):
    x = np.clip(tone(50.0, FS, N, 2.0), -1.5, 1.5)
    assert [q.kind for q in _npz(tmp_path, x).quality] == ["clipping"]


def test_gate_dc_offset(tmp_path, rng):
    x = tone(50.0, FS, N) + 0.1 * rng.standard_normal(N) + 2.0
    assert [q.kind for q in _npz(tmp_path, x).quality] == ["dc_offset"]


def test_gate_slow_drift(tmp_path, rng):
    x = tone(50.0, FS, N, 0.2) + np.linspace(0, 2.0, N)
    assert "drift" in [q.kind for q in _npz(tmp_path, x).quality]


@pytest.mark.parametrize("turns", [2.5, 5.0, 10.0, 10.3])
@pytest.mark.parametrize("phase", [0.0, 0.7, 1.6])
def test_a_short_clean_tone_is_not_drift(tmp_path, turns, phase):
    # ten turns of a 1X sine in 16 segments put 0.6 turn in each: its segment means spread over 1.35 x its
    # RMS (2 sqrt 2 sin(pi L) / (pi L), L = 0.625 [derived]), above the gate's 1 x; a tone is no drift
    fs, f = 2560.0, 1486 / 60
    n = int(round(turns / f * fs))
    x = tone(f, fs, n, 1.0, phase)
    assert "drift" not in [q.kind for q in _npz(tmp_path, x, fs).quality]


def test_drift_under_a_short_tone_is_still_drift_and_named_once(tmp_path):
    fs, f = 2560.0, 1486 / 60
    n = int(round(10 / f * fs))                 # the same ten turns, on a ramp
    x = tone(f, fs, n, 1.0) + np.linspace(0, 2.0, n)
    drift = [q for q in _npz(tmp_path, x, fs).quality if q.kind == "drift"]
    assert len(drift) == 1 and describe_issue(drift[0]).count("slow drift") == 1


def test_gate_dropout(tmp_path, rng):
    x = rng.standard_normal(N)
    x[4000:4200] = x[3999]
    assert [q.kind for q in _npz(tmp_path, x).quality] == ["dropout"]


def test_clean_noise_passes_every_gate(tmp_path, rng):
    assert _npz(tmp_path, rng.standard_normal(N)).quality == ()


def test_record_too_short_for_resolution():
    issues = check_resolution(0.5, "a", resolution_hz=0.5)
    assert [q.kind for q in issues] == ["too_short"] and "needs at least 2.00 s" in issues[0].message
    assert check_resolution(4.0, "a", resolution_hz=0.5) == []


@pytest.mark.parametrize("suffix", [".wav", ".csv", ".npy", ".npz", ".uff"])
def test_empty_file(tmp_path, suffix):
    path = tmp_path / f"empty{suffix}"
    path.write_bytes(b"")
    with pytest.raises(ReadingError, match="empty"):
        load_reading(path, unit="g", sample_rate_hz=1000)


def test_mislabelled_file(tmp_path):
    path = tmp_path / "really_csv.wav"
    path.write_text("time,a\n0,1\n0.1,2\n")
    with pytest.raises(ReadingError, match="really_csv.wav: not a readable WAV file"):
        load_reading(path, unit="g", scale=1)


def test_unknown_format(tmp_path):
    path = tmp_path / "r.xlsx"
    path.write_bytes(b"PK")
    with pytest.raises(ReadingError, match="unknown reading format '.xlsx'"):
        load_reading(path)


def test_bad_sidecar_names_its_file_and_line(tmp_path):
    path = tmp_path / "r.npy"
    np.save(path, np.arange(100.0))
    sidecar_path(path).write_text("unit: g\nsample_rate: 100\n")
    with pytest.raises(ReadingError, match=r"r.npy.yaml:2: sample_rate: unknown field; did you mean 'sample_rate_hz'"):
        load_reading(path)


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(data=st.binary(min_size=1, max_size=600), suffix=st.sampled_from([".wav", ".csv", ".npy", ".npz", ".uff"]))
def test_random_bytes_never_crash_a_reader(tmp_path, data, suffix):
    path = tmp_path / f"junk{suffix}"
    path.write_bytes(data)
    try:
        load_reading(path, unit="g", sample_rate_hz=1000.0, scale=1.0)
    except ReadingError as exc:
        assert str(exc).startswith(str(path))


def test_cli_reading_summary(tmp_path, capsys):
    path = tmp_path / "r.npz"
    np.savez(path, a=tone(49.5, FS, N, 1.0), sample_rate_hz=FS, unit="g")
    assert main(["reading", str(path)]) == 0
    out = capsys.readouterr().out
    assert "velocity" in out and "49.500 Hz" in out and "kurtosis 1.50" in out


def test_cli_bad_reading_one_line(tmp_path, capsys):
    path = tmp_path / "r.npy"
    np.save(path, np.arange(100.0))
    assert main(["reading", str(path)]) == ReadingError.exit_code
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "sample rate is not stated" in err and "Traceback" not in err
