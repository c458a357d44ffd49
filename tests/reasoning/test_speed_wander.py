"""A gear's tooth damage is called when the speed wanders during the record (order tracking from the
signal, engine/analysis/tracking.py). The readings are invented (the demo plant's cooling-tower fan
drive, seeded) with a known fluctuation of the speed (bench/wander.py): +-0.5 % and +-1 % at 0.5 Hz,
as a loaded induction motor's speed fluctuates (common practice). Before the tracking, +-0.5 % dropped
the bevel tooth to 0.25 and left gear eccentricity on top at up to 0.59, a wrong call."""

import pytest

from bench.wander import run

from support import reasoner

pytestmark = pytest.mark.slow


@pytest.fixture(scope="module")
def rows():
    return run(seeds=(0, 1, 2, 3), wanders=(0.005, 0.01), scenarios=(("gear-tooth", "ct1", "bevel_stage", 3),),
               reasoner=reasoner())


def test_the_bevel_tooth_is_called_at_07_or_more_when_the_speed_wanders(rows):
    assert len(rows) == 8
    missed = [(r.wander, r.seed, r.top) for r in rows if r.truth < 0.7]
    assert not missed, missed


def test_no_eccentricity_call_beside_it(rows):
    eccentric = [(r.wander, r.seed, r.wrong) for r in rows if any("eccentricity" in w for w in r.wrong)]
    assert not eccentric, eccentric


def test_no_other_call_beside_it(rows):
    # with the simulator's stage-3 tooth sized against a sound gear's scatter, seed 3 at 1 % wander carried
    # inner race on input_front at 0.58 until the speed came from lines that agree within their
    # interpolation error (engine/analysis/speed.py): its comb line then fell outside the shaft-order tolerance
    assert not [r.wrong for r in rows if r.wrong]
