"""Which family owns an envelope line: harmonics first, then a stronger family's sidebands.

Geometry of the 6203 (CWRU fan-end bearing; multiples from the CWRU documentation as
../shared/datasets/README.md, section 2.3, tabulates them):
BPFO = 3.053 x, 2 x BSF = 3.987 x shaft speed, so BPFO + 1X lies 1.6 % from
2 x BSF, within a bearing's 1-2 % slip (Randall & Antoni 2011).
"""

from __future__ import annotations

import pytest

from engine.analysis.peaks import Peak
from engine.evidence.envelope import _defects, _owners
from engine.machine import load_machine
from engine.machine.kinematics import rates_at

from support import ROOT

CWRU = load_machine(ROOT / "tests/machines/cwru-motor.yaml")
SHAFT_HZ = 1797 / 60


def _families():
    rates = rates_at(CWRU, {"motor": SHAFT_HZ})
    defects = [d for d in _defects(type("R", (), {"rates": rates})()) if d[0].bearing == "fan_end"]
    return defects, {d[1]: i for i, d in enumerate(defects)}


def _peak(freq_hz: float, snr: float) -> Peak:
    return Peak(freq_hz, snr, int(round(freq_hz * 10)), snr)


def test_the_6203_geometry_puts_bpfo_plus_1x_within_slip_of_the_ball_rate():
    defects, at = _families()
    bpfo, ball = defects[at["BPFO"]][2], defects[at["BSF"]][2]
    assert bpfo / SHAFT_HZ == pytest.approx(3.053, abs=0.002)       # CWRU bearing documentation
    assert ball / SHAFT_HZ == pytest.approx(3.987, abs=0.003)       # 2 x BSF, same source
    assert abs((bpfo + SHAFT_HZ) / ball - 1) < 0.02


def test_a_line_at_bpfo_plus_1x_belongs_to_the_stronger_outer_race_family():
    defects, at = _families()
    found = [{} for _ in defects]
    bpfo = defects[at["BPFO"]][2]
    found[at["BPFO"]] = {k: _peak(k * bpfo, 200.0) for k in (1, 2, 3)}
    found[at["BSF"]] = {1: _peak(bpfo + SHAFT_HZ, 12.0)}
    owned = _owners(defects, found, "fan_end", 5000.0)
    assert owned[(at["BPFO"], 1)]
    assert not owned[(at["BSF"], 1)]


def test_a_line_at_the_exact_ball_rate_stays_the_ball_family_s():
    defects, at = _families()
    found = [{} for _ in defects]
    bpfo, ball = defects[at["BPFO"]][2], defects[at["BSF"]][2]
    found[at["BPFO"]] = {1: _peak(bpfo, 200.0)}
    found[at["BSF"]] = {1: _peak(ball, 12.0)}
    assert _owners(defects, found, "fan_end", 5000.0)[(at["BSF"], 1)]


def test_a_weaker_carrier_claims_no_sideband():
    defects, at = _families()
    found = [{} for _ in defects]
    bpfo = defects[at["BPFO"]][2]
    found[at["BPFO"]] = {1: _peak(bpfo, 5.0)}
    found[at["BSF"]] = {1: _peak(bpfo + SHAFT_HZ, 12.0)}
    assert _owners(defects, found, "fan_end", 5000.0)[(at["BSF"], 1)]


class _Rates:
    """A bearing's rates as the analysis gives them (only what the ownership reads)."""

    def __init__(self, bearing: str, shaft_hz: float, bpfo_hz: float):
        self.bearing, self.shaft_hz, self.ftf_hz = bearing, shaft_hz, bpfo_hz / 8


def _two_bearings(ratio: float = 2.0):
    """BPFO of one bearing (rate f) and of a neighbour at ``ratio`` x f, as in a 6312 motor bearing
    beside a gearbox input bearing whose BPFO is twice it (standard bearing kinematics, derived)."""
    f = 50.3
    return [(_Rates("motor_de", 16.42, f), "BPFO", f), (_Rates("input_front", 16.42, ratio * f), "BPFO", ratio * f)], f


@pytest.mark.parametrize("true_rate", ["lower", "higher"])
def test_a_shared_line_goes_to_the_family_with_lines_of_its_own(true_rate):
    defects, f = _two_bearings()
    lines = [1, 2, 3, 4, 5] if true_rate == "lower" else [2, 4]        # in units of f, up to 5 f
    lower = {k: _peak(k * f, 100.0) for k in lines}
    higher = {k // 2: _peak(k * f, 100.0) for k in lines if k % 2 == 0}
    owned = _owners(defects, [lower, higher], None, 5000.0)
    if true_rate == "lower":          # odd harmonics are the lower rate's own: the even ones go with them
        assert all(owned[(0, k)] for k in lower) and not any(owned[(1, k)] for k in higher)
    else:                             # nothing at f, 3 f, 5 f: the higher rate explains its lines whole
        assert all(owned[(1, k)] for k in higher) and not any(owned[(0, k)] for k in lower)


class _Race:
    """An inner race's rates as the analysis gives them (only what the ownership reads)."""

    def __init__(self, bearing: str, shaft_hz: float):
        self.bearing, self.shaft_hz, self.ftf_hz = bearing, shaft_hz, 0.4 * shaft_hz


def test_a_sideband_s_place_is_known_to_the_speed_not_to_half_a_percent_of_its_own_frequency():
    """A 6312's BPFI family (4.936 x of 24.667 Hz, 8 balls of 22.225 mm on 95 mm: BPFI = n/2 (1 + d/D) fr,
    Randall & Antoni 2011, eq. 1; geometry from memory) puts 3 x BPFI + 1X at 389.9 Hz; a gearbox bearing
    whose BPFI is 194.25 Hz has its second harmonic expected at 388.5 Hz, 0.37 % below the line. The
    sideband's place is known to 0.5 % of 1X (0.12 Hz) and a line (0.25 Hz), not to 0.5 % of 390 Hz (2 Hz):
    the line is the stronger inner race's. A line at the gearbox bearing's own harmonic stays its own."""
    fr = 24.667
    bpfi = 4.936 * fr
    defects = [(_Race("motor_de", fr), "BPFI", bpfi), (_Race("input_bearing", fr), "BPFI", 194.25)]
    carrier = {k: _peak(k * bpfi, 30.0) for k in (1, 2, 3, 4, 5)}
    on_sideband = {2: _peak(3 * bpfi + fr, 19.0)}
    owned = _owners(defects, [carrier, on_sideband], None, 1000.0, resolution_hz=0.25)
    assert not owned[(1, 2)]
    own_place = {2: _peak(2 * 194.25, 19.0)}
    assert _owners(defects, [carrier, own_place], None, 1000.0, resolution_hz=0.25)[(1, 2)]


def test_centres_within_one_percent_are_the_first_such_centre_as_a_scan_of_all_finds_it():
    """``_Centres`` looks only at its neighbours in log frequency; the answer must be the plain scan's (the
    first centre, in the order they came, within TIE = 1 % of the frequency), here on frequencies that crowd
    each other's 1 % edges from both sides, seeded."""
    import numpy as np

    from engine.evidence.envelope import TIE, _Centres

    rng = np.random.default_rng(5)
    base = rng.uniform(5.0, 5000.0, 40)
    edges = np.concatenate([base * (1 + s * TIE * f) for s in (-1, 1) for f in (0.999, 1.0, 1.001, 0.5, 2.0)])
    freqs = rng.permutation(np.concatenate([base, edges, rng.uniform(1.0, 20000.0, 300)])).tolist()
    centres, scanned = _Centres(), []
    for f in freqs:
        first = next((i for i, c in enumerate(scanned) if abs(f / c - 1) < TIE), None)
        if first is None:
            scanned.append(f)
            first = len(scanned) - 1
        assert centres.index(f) == first
    assert centres.centres == scanned
