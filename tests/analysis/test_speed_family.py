"""The running speed is measured only from lines that hang together as one shaft's family.

Invented signals (seeded noise); the expectations follow from the definition of a harmonic family
(lines at whole multiples of one 1X: common practice) and the FFT line spacing fs / N.
"""

from __future__ import annotations

import numpy as np

from engine.analysis.spectrum import amplitude_spectrum
from engine.analysis.speed import hangs_together, refine_speeds, shaft_family

FS = 1024.0
N = 32768                       # lines 1/32 Hz apart


def spectrum_of(*tones: tuple[float, float], seed: int = 0):
    t = np.arange(N) / FS
    rng = np.random.default_rng(seed)
    x = sum(a * np.sin(2 * np.pi * f * t) for f, a in tones) + 0.01 * rng.standard_normal(N)
    return amplitude_spectrum(x, FS)


def test_one_line_near_the_stated_speed_is_not_a_measurement():
    # a lone line 1.2 % below the stated 25 Hz: nothing else of a shaft stands with it
    e = refine_speeds(spectrum_of((24.7, 1.0)), {"shaft": 25.0}, "shaft")
    assert not e.refined and e.source == "stated" and e.speed_hz == 25.0


def test_a_1x_with_its_2x_is_a_measurement():
    e = refine_speeds(spectrum_of((24.7, 1.0), (49.4, 0.5)), {"shaft": 25.0}, "shaft")
    assert e.refined and abs(e.speed_hz - 24.7) < 0.01 and e.harmonics_found == (1, 2)


def test_lines_that_do_not_sit_at_whole_multiples_of_one_speed_are_not_a_family():
    # 1X at 24.7 Hz and a line at 49.9 Hz: 2X of 24.95 Hz, eight lines from 2 x 24.7 Hz
    e = refine_speeds(spectrum_of((24.7, 1.0), (49.9, 0.5)), {"shaft": 25.0}, "shaft")
    assert not e.refined


def test_three_harmonics_without_a_1x_are_a_family():
    # a shaft with little unbalance: 2X, 3X and 4X of 24.7 Hz, nothing at 1X
    e = refine_speeds(spectrum_of((49.4, 1.0), (74.1, 0.5), (98.8, 0.3)), {"shaft": 25.0}, "shaft")
    assert e.refined and abs(e.speed_hz - 24.7) < 0.01


def test_one_strong_unrelated_line_does_not_pull_the_family_off_its_lines():
    # the family of 24.7 Hz (1X to 4X) and a strong line at 122.0 Hz, 1.2 % below 5 x 24.7 Hz and
    # within the 5 % searched: the speed stays within a line's worth of 24.7 Hz and the four
    # harmonics are kept
    tones = [(24.7, 0.3), (49.4, 0.3), (74.1, 0.2), (98.8, 0.2), (122.0, 5.0)]
    e = refine_speeds(spectrum_of(*tones), {"shaft": 25.0}, "shaft")
    assert e.refined and abs(e.speed_hz - 24.7) < 1 / 32 / 4
    assert set(e.harmonics_found) >= {1, 2, 3, 4} and 5 not in e.harmonics_found


def test_a_lone_1x_is_confirmed_by_a_pair_of_sidebands_round_a_shaft_locked_carrier():
    # a mesh line at 13 x 24.7 Hz with sidebands at +-24.7 Hz, and a 1X: the sidebands confirm the 1X;
    # without the sidebands the 1X stands alone
    gmf = 13 * 24.7
    with_sides = spectrum_of((24.7, 1.0), (gmf, 1.0), (gmf - 24.7, 0.3), (gmf + 24.7, 0.3))
    alone = spectrum_of((24.7, 1.0), (gmf, 1.0))
    assert hangs_together(with_sides, [(25.0, 1)], 0.988, [13 * 25.0])
    assert not hangs_together(alone, [(25.0, 1)], 0.988, [13 * 25.0])


def test_bearing_tones_that_two_families_claim_at_speeds_further_apart_than_slip_give_no_speed():
    # one tone family at 89.15 Hz: a family of rate 89.6 Hz puts the speed 0.5 % low, one of rate 85.9 Hz puts it
    # 3.8 % high; bearing tones slip 1-2 % (Randall & Antoni 2011, MSSP 25(2), section 2), so the lines cannot
    # say which family, and so which speed, they are
    from engine.analysis.speed import speed_from_tones
    t = np.arange(65536) / FS
    ses = amplitude_spectrum(sum(np.cos(2 * np.pi * k * 89.15 * t) for k in range(1, 5)), FS)
    assert speed_from_tones(ses, [89.6], 25.0) is not None
    assert speed_from_tones(ses, [89.6, 85.9], 25.0) is None


def test_a_dominant_1x_away_from_the_stated_speed_keeps_its_harmonics_in_its_family():
    # user trial 33, item 4: a 2-pole motor's unbalance (1X 75 dB over the floor, 2X and 3X 20-25 dB below it)
    # running 12 % above the speed looked for. A line this strong scores over the lines either side of it, so the
    # best candidate 1X could lie most of a line off and its 3X beyond the line it is looked for within: the
    # family read 2 lines, short of the 3 the speed rules ask, and the reading read as sound
    from engine.analysis.speed import shaft_family

    fs, n = 25600.0, 102400                                     # lines 0.25 Hz apart, as the simulated reading
    t = np.arange(n) / fs
    x = (np.sin(2 * np.pi * 55.17 * t) + 0.04 * np.sin(2 * np.pi * 110.34 * t) + 0.016 * np.sin(2 * np.pi * 165.51 * t)
         + 1e-5 * np.random.default_rng(2).standard_normal(n))
    f = shaft_family(amplitude_spectrum(x, fs), 2955 / 60, [50.0 * k for k in range(1, 21)], [2955 / 60 * 0.64])
    assert f["far_family_lines"] >= 3
    assert abs(f["far_family_hz"] / 55.17 - 1) < 0.001         # within the interpolation error of a line


def test_a_family_one_line_from_the_stated_speed_on_a_short_record_is_the_stated_speeds_own():
    # A 1 s record (lines 1 Hz apart) of a shaft at 10.045 Hz, stated at 10 Hz, beside an unrelated comb
    # at whole multiples of 9 Hz (2 to 6 of them). The 1X line sits one line from 9 Hz, within a Hann
    # window's main lobe (2 lines: the window's definition), so it cannot count as the 1X of a family
    # "10 % away": the stated speed's own 1X is no contradiction of it. (python -m bench.real_data
    # --inject length=1: HIT-SM's IR5_600 cut to 1 s was withheld as "the stated speed or sample rate is wrong".)
    fs = 4096.0
    t = np.arange(int(fs)) / fs
    comb = sum(0.2 * np.sin(2 * np.pi * 9 * k * t + k) for k in range(2, 7))
    x = np.sin(2 * np.pi * 10.045 * t) + comb + 0.002 * np.random.default_rng(5).standard_normal(len(t))
    short = shaft_family(amplitude_spectrum(x, fs), 10.0)
    assert short["far_one_x_db"] == 0.0 and short["near_one_x_db"] > 40
    # eight times longer (lines 1/8 Hz apart) the 1X stands eight lines from 9 Hz: the far search is as before
    t = np.arange(int(8 * fs)) / fs
    comb = sum(0.2 * np.sin(2 * np.pi * 9 * k * t + k) for k in range(2, 7))
    x = np.sin(2 * np.pi * 10.045 * t) + comb + 0.002 * np.random.default_rng(5).standard_normal(len(t))
    long = shaft_family(amplitude_spectrum(x, fs), 10.0)
    assert long["near_one_x_db"] > 40 and long["far_one_x_db"] == 0.0


def test_a_family_away_from_the_stated_speed_is_far_only_past_two_lines():
    # harmonics of 24.7 Hz stated at 23 Hz (7 % low): on 1 s (lines 1 Hz apart) its 1X lies 1.7 lines from the
    # stated 1X and counts as near; on 32 s (1/32 Hz) it lies 54 lines away and is the far family it is
    def family(seconds):
        fs = 1024.0
        t = np.arange(int(seconds * fs)) / fs
        x = sum(np.sin(2 * np.pi * k * 24.7 * t) / k for k in range(1, 6))
        return shaft_family(amplitude_spectrum(x + 0.01 * np.random.default_rng(0).standard_normal(len(t)), fs), 23.0)
    short = family(1.0)
    assert short["far_family_lines"] == 0 and short["near_family_lines"] >= 3
    far = family(32.0)
    assert far["far_family_lines"] >= 3 and abs(far["far_family_hz"] - 24.7) < 0.05
