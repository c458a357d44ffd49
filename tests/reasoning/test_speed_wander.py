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


@pytest.mark.xfail(strict=True, reason=(
    "known since issue 28 (STG): with the simulator's stage-3 tooth sized against a sound gear's scatter, one "
    "reading at 1 % wander (seed 3) carries inner-race on input_front at 0.58: a line of the tooth's comb, "
    "smeared by the wander past the envelope's 0.3 % shaft-order tolerance, matches BPFI within slip. Small "
    "changes of the tooth's size move it to another seed; the envelope's shaft orders under wander need the "
    "tracked speed"))
def test_no_other_call_beside_it(rows):
    assert not [r.wrong for r in rows if r.wrong]
