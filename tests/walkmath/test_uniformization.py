"""The step ladder of small chains against step-by-step sweeps, mpmath and the cost model."""

import math

import mpmath
import numpy as np
import pytest

from tests.walkmath.exact import mp_generator
from walkmath import uniformization
from walkmath.continuous import BirthDeath
from walkmath.uniformization import _ladder, _point_law, _uniformized, absorption_curve, ladder_pays


def chain_of(size: int, seed: int) -> BirthDeath:
    rng = np.random.default_rng(seed)
    return BirthDeath(rng.uniform(0.2, 3.0, size), rng.uniform(0.2, 3.0, size))


@pytest.mark.parametrize(("size", "time"), [(2, 40.0), (7, 300.0), (30, 90.0)])
def test_ladder_sweeps_equal_step_by_step_sweeps(size, time):
    # the same sums of non-negative terms in another order: equal to rounding, entry by entry
    chain = chain_of(size, size)
    start = _point_law(size, size // 2)
    times = np.array([0.0, time / 7, time])
    stepped = _uniformized(chain, start, times)
    laddered = _uniformized(chain, start, times, _ladder(chain))
    assert laddered[2] == stepped[2]
    assert laddered[0] == pytest.approx(stepped[0], rel=1e-12, abs=0)


def test_ladder_keeps_tiny_tails_to_mpmath():
    # reference: mpmath.expm at 50 digits; the top level of an M/M/1/12 queue at t = 0.3 is about 1e-16
    chain = BirthDeath([1.0] * 13, [9.0] * 13)
    assert ladder_pays(13, [uniformization.window_steps(chain.uniformization_rate * 0.3)])
    law = _uniformized(chain, _point_law(13, 0), np.array([0.3]))[0][0]
    mpmath.mp.dps = 50
    exact = mpmath.expm(mp_generator(chain) * mpmath.mpf("0.3"))
    for level in (0, 6, 12):
        assert law[level] == pytest.approx(float(exact[0, level]), rel=1e-11)
    assert 1e-18 < law[12] < 1e-15


def test_passage_curves_share_one_ladder_and_stay_monotone():
    chain = BirthDeath([2.0, 2.0, 1.5, 1.0, 0.0], [0.0, 3.0, 3.0, 3.0, 0.0])
    times = np.linspace(0.0, 60.0, 61)
    curve = absorption_curve(chain, 0, times)
    assert np.all(np.diff(curve.reached) >= 0) and np.all(np.diff(curve.not_reached) <= 0)
    mpmath.mp.dps = 40
    exact = mpmath.expm(mp_generator(chain) * 30)
    assert curve.reached[30] == pytest.approx(float(exact[0, 4]), rel=1e-11)


def test_the_cheaper_way_is_chosen_by_the_cost_model():
    # a long sweep of a small chain: the ladder; a short sweep, or a chain past LADDER_LEVELS: steps
    assert ladder_pays(10, [5_000]) and not ladder_pays(10, [20])
    assert not ladder_pays(uniformization.LADDER_LEVELS + 1, [10**6])
    assert uniformization.sweep_units(10, [5_000]) == uniformization.ladder_units(10, [5_000])
    assert uniformization.sweep_units(10, [20]) == uniformization.direct_units(10, [20])
    many = [150] * 40  # forty short gaps of one passage curve share one ladder
    assert ladder_pays(10, many) and uniformization.ladder_units(10, many) < uniformization.direct_units(10, many)
    assert math.isfinite(uniformization.ladder_units(64, [10**7]))
