"""Store schema 7: a compact spectrum per stored channel (the peak of each group of lines) and the reading's
forcing frequencies; readings stored before say they have none; a damaged blob reads as no spectrum."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import signal
from test_store import record

from engine.analysis.compact import MAX_LINES, CompactForcing, CompactSpectrum, peak_reduce
from engine.analysis.spectrum import Transform
from engine.history.record import spectra_of
from engine.history.store import SCHEMA_VERSION, Store

PUMP = "RW-2 raw water pump"


@pytest.mark.parametrize("freq_hz", [123.0, 123.4, 1987.25])
def test_the_reduction_keeps_a_tones_peak_amplitude(freq_hz):
    fs, n, amplitude = 8192.0, 2 ** 16, 3.0
    t = np.arange(n) / fs
    x = amplitude * np.sin(2 * np.pi * freq_hz * t) + 0.01 * np.random.default_rng(7).standard_normal(n)
    spectrum = Transform.of(x, fs).amplitude("rms")
    kept, step = peak_reduce(spectrum.amplitude, spectrum.resolution_hz)
    assert len(kept) <= MAX_LINES and step == pytest.approx(spectrum.resolution_hz * np.ceil(len(spectrum.amplitude)
                                                                                              / MAX_LINES))
    # the kept line holding the tone has the spectrum's largest line, whatever the group size
    line = int(np.argmax(kept))
    assert line * step <= freq_hz < (line + 1) * step
    assert float(kept[line]) == pytest.approx(float(spectrum.amplitude.max()), rel=1e-6)      # float32
    # scipy as reference: a Hann periodogram's largest line ("spectrum" scaling: power of a line, RMS^2)
    f, p = signal.periodogram(x, fs, window="hann", scaling="spectrum")
    assert float(kept[line]) == pytest.approx(float(np.sqrt(p.max())), rel=1e-3)
    if freq_hz == 123.0:       # on a line: the RMS of the sine, A / sqrt(2) (handbook formula)
        assert float(kept[line]) == pytest.approx(amplitude / np.sqrt(2), rel=1e-3)


def test_a_short_spectrum_is_kept_whole():
    a = np.linspace(0, 1, 800)
    kept, step = peak_reduce(a, 0.5)
    assert step == 0.5 and np.array_equal(kept, a.astype(np.float32))


def test_an_average_would_lose_the_tone_the_peak_keeps():
    a = np.zeros(16000)
    a[8001] = 1.0
    kept, step = peak_reduce(a, 0.125)
    assert step == 1.25 and kept.max() == 1.0 and int(np.argmax(kept)) == 800
    assert a.reshape(1600, 10).mean(axis=1).max() == pytest.approx(0.1)     # what a mean of 10 lines would keep


def _spectrum(values, channel="P1H"):
    return CompactSpectrum(channel, "P1H", "pump", "pump_de", "velocity", "mm/s RMS", 0.5, 0.25,
                           np.asarray(values, dtype=np.float32))


FORCING = [{"name": "1X", "component": "pump", "family": "shaft", "shaft": "pump", "frequency_hz": 24.8},
           {"name": "BPFI", "component": "pump_de", "family": "bearing", "shaft": "pump", "frequency_hz": 203.6}]


def with_spectrum(n: int, values, when="2026-01-12T08:30:00") -> dict:
    return dict(record(n, when=when), spectra=spectra_of([_spectrum(values)], {"P1H"}), forcing=FORCING)


def test_a_spectrum_and_the_forcing_frequencies_come_back(tmp_path):
    values = np.abs(np.random.default_rng(3).standard_normal(1200)).astype(np.float32)
    with Store(tmp_path / "h.sqlite") as s:
        rid = s.add(with_spectrum(1, values))
        (row,) = s.spectra(PUMP, "P1H")
        assert row["id"] == rid and row["spectra_kept"] and not row["damaged"]
        assert row["amplitudes"].dtype == np.float32 and np.array_equal(row["amplitudes"], values)
        assert (row["step_hz"], row["resolution_hz"], row["shaft"], row["at"], row["unit"]) == \
               (0.5, 0.25, "pump", "pump_de", "mm/s RMS")
        assert row["forcing"] == FORCING
        assert s.db.execute("SELECT length(amplitudes) FROM spectra").fetchone()[0] == 4 * 1200
        s.delete(rid)                           # the spectrum and forcing go with the reading
        assert s.db.execute("SELECT COUNT(*) FROM spectra").fetchone()[0] == 0
        assert s.db.execute("SELECT COUNT(*) FROM forcing").fetchone()[0] == 0


def test_a_channel_whose_scale_is_not_trusted_keeps_no_spectrum():
    assert spectra_of([_spectrum([1.0, 2.0]), _spectrum([3.0], "P2H")], {"P2H"})[0]["channel"] == "P2H"
    assert spectra_of([_spectrum([1.0])], set()) == []


def test_schema_6_migrates_to_7_and_its_readings_say_they_have_no_spectrum(tmp_path):
    path = tmp_path / "h.sqlite"
    with Store(path, migrate_to=6) as old:
        assert old.version == 6
        rid = old.db.execute("INSERT INTO readings (content_hash, machine, source, taken_at, time_from, stored_at)"
                             " VALUES ('h0', ?, 'a.wav', '2026-01-12T08:30:00', 'route', 'now')", (PUMP,)).lastrowid
        old.db.execute("INSERT INTO channels (reading_id, channel, point) VALUES (?, 'P1H', 'P1H')", (rid,))
        assert "spectra" not in [r[0] for r in old.db.execute("SELECT name FROM sqlite_master")]
    with Store(path) as new:
        assert new.version == SCHEMA_VERSION >= 7
        (row,) = new.spectra(PUMP, "P1H")
        assert row["id"] == rid and row["spectra_kept"] is False and row["amplitudes"] is None
        assert row["forcing"] == []
        later = new.add(with_spectrum(2, [0.5, 1.0], when="2026-02-12T08:30:00"))
        assert [r["spectra_kept"] for r in new.spectra(PUMP, "P1H")] == [False, True]
        assert [r["id"] for r in new.spectra(PUMP, "P1H", [later])] == [later]


@pytest.mark.parametrize("blob, step", [(b"\x00\x00\x80", 0.5), (np.array([1.0, np.inf], "<f4").tobytes(), 0.5),
                                        (np.array([1.0], "<f4").tobytes(), -1.0), ("text", 0.5)],
                         ids=["cut-short", "infinite", "negative-step", "text"])
def test_a_damaged_spectrum_reads_as_none(tmp_path, blob, step):
    with Store(tmp_path / "h.sqlite") as s:
        rid = s.add(with_spectrum(1, [1.0, 2.0]))
        s.db.execute("UPDATE spectra SET amplitudes = ?, step_hz = ? WHERE reading_id = ?", (blob, step, rid))
        (row,) = s.spectra(PUMP, "P1H")
        assert row["damaged"] and row["amplitudes"] is None


def test_the_forcing_of_a_record_is_plain_data():
    from engine.history.record import record_of

    from support import doc_of

    doc = doc_of("rw2-healthy-baseline")
    rec = record_of(doc, [], content_hash="k", taken_at="2026-01-01T00:00:00", time_from="route", machine_file=None,
                    elapsed_s=0.1, spectra=[_spectrum([1.0])], forcing=[CompactForcing("1X", "pump", "shaft", "pump",
                                                                                       24.8)])
    assert rec["forcing"] == [FORCING[0]] and rec["spectra"] == []      # no overall fact: no stored channel
