"""Smallest spares and crews, and their curves, against exact fractions and mpmath brute force."""

import math
from fractions import Fraction

import mpmath
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import walkmath as wm
from tests.walkmath.exact import mp_generator, spares_pool_law
from walkmath import ComputeTooLarge, SparesPool, crews_curve, smallest_crews, smallest_spares, spares_curve


def exact_unavailability(units, spares, failure_rate, repair_rate, crews, warm=0):
    return sum(spares_pool_law(units, spares, failure_rate, repair_rate, crews, warm)[spares + 1 :])


def test_the_design_notes_call_answers_with_the_smallest_count():
    # design notes section 4: wm.smallest_spares(...) -> int. Reference: unavailability of each count in
    # exact Fractions (product form); 0.999 availability is an unavailability of at most 1/1000
    found = wm.smallest_spares(
        units=4, failure_rate=0.05, repair_rate=0.5, crews=1, availability_target=0.999, warm_failure_rate=0.0
    )
    short = [exact_unavailability(4, s, Fraction(1, 20), Fraction(1, 2), 1) for s in range(10)]
    assert found == next(s for s, value in enumerate(short) if value <= Fraction(1, 1000))
    assert short[found - 1] > Fraction(1, 1000)


@pytest.mark.parametrize(
    ("units", "failure", "repair", "crews", "warm", "target"),
    [
        (2, Fraction(1, 10), Fraction(1, 2), 1, 0, Fraction(9999, 10000)),
        (5, Fraction(1, 50), Fraction(1, 8), 2, Fraction(1, 200), Fraction(999, 1000)),
        (1, Fraction(1, 3), Fraction(1, 1), 3, Fraction(1, 3), Fraction(99, 100)),
        (10, Fraction(1, 100), Fraction(1, 5), 1, 0, Fraction(1, 4)),  # a target below 1/2
    ],
)
def test_smallest_spares_for_an_availability_target_matches_exact_fractions(
    units, failure, repair, crews, warm, target
):
    curve = spares_curve(
        units, float(failure), float(repair), crews, warm_failure_rate=float(warm), availability_target=float(target)
    )
    exact = [exact_unavailability(units, s, failure, repair, crews, warm) for s in range(curve.counts[-1] + 1)]
    expected = next(s for s, short in enumerate(exact) if 1 - short >= target)
    assert curve.smallest == expected == curve.counts[-1]
    assert curve.unavailability == pytest.approx([float(v) for v in exact], rel=1e-12)
    assert curve.availability == pytest.approx([float(1 - v) for v in exact], rel=1e-14)
    assert smallest_spares(units, float(failure), float(repair), crews, float(target), float(warm)) == expected


def mp_shortage_risk(units, spares, failure, repair, crews, warm, mission_time):
    """P(a shortage within the mission from all good): mpmath.expm of the stopped chain at 40 digits."""
    mpmath.mp.dps = 40
    chain = SparesPool(units, spares, failure, repair, crews, warm).shortage_chain
    return float(mpmath.expm(mp_generator(chain) * mpmath.mpf(mission_time))[0, chain.top])


def test_smallest_spares_for_a_mission_risk_matches_mpmath():
    # oven igniters by the hour: 6 ovens, one failure in 2,000 h each, 48 h repairs, 1 crew, a 720 h month
    arguments = (6, 1 / 2000, 1 / 48, 1, 1 / 8000)
    risks = [mp_shortage_risk(*arguments[:1], s, *arguments[1:], 720.0) for s in range(6)]
    target = 1e-3
    curve = spares_curve(
        *arguments[:4], warm_failure_rate=arguments[4], risk_target=target, mission_time=720.0, shown=5
    )
    assert curve.counts.tolist() == list(range(6))
    assert curve.shortage_risk == pytest.approx(risks, rel=1e-10)
    assert curve.no_shortage_risk == pytest.approx([1 - r for r in risks], rel=1e-12)
    assert curve.smallest == next(s for s, r in enumerate(risks) if r <= target)
    both = spares_curve(
        *arguments[:4],
        warm_failure_rate=arguments[4],
        risk_target=target,
        mission_time=720.0,
        availability_target=1 - 1e-9,
    )
    assert both.smallest >= curve.smallest and both.unavailability[-1] <= 1e-9 and both.shortage_risk[-1] <= target


def test_smallest_crews_matches_exact_fractions():
    # a busy repair shop: 8 units, 3 spares; each extra crew helps less, and past 4 crews no number
    # of them reaches 99.5 % (the spares, not the crews, are then what is short)
    exact = [exact_unavailability(8, 3, Fraction(1, 20), Fraction(1, 2), c) for c in range(1, 12)]
    for target in (Fraction(9, 10), Fraction(98, 100), Fraction(99, 100)):
        expected = next(c for c, short in enumerate(exact, start=1) if 1 - short >= target)
        assert smallest_crews(8, 3, 0.05, 0.5, float(target)) == expected
    assert [smallest_crews(8, 3, 0.05, 0.5, t) for t in (0.9, 0.98, 0.99)] == [2, 3, 4]
    assert smallest_crews(8, 3, 0.05, 0.5, 0.995) is None
    curve = crews_curve(8, 3, 0.05, 0.5, shown=11)
    assert curve.counts.tolist() == list(range(1, 12)) and curve.smallest is None
    assert curve.unavailability == pytest.approx([float(v) for v in exact], rel=1e-12)


def test_a_target_spares_cannot_reach_says_none():
    # hot spares fail while waiting, so with one slow crew more spares stop helping: availability
    # levels off near 80 % (each waiting spare adds failures the one crew must repair)
    assert smallest_spares(2, 0.1, 0.3, 1, 0.9, 0.1, most=200) is None
    curve = spares_curve(2, 0.1, 0.3, 1, warm_failure_rate=0.1, availability_target=0.9, shown=20, most=200)
    assert curve.searched_to == 200 and curve.smallest is None and not curve.budget_reached
    assert curve.counts.tolist() == list(range(21)) and 0.19 < curve.unavailability[-1] < 0.2
    # ... and a second crew would do it with 4 spares
    assert smallest_crews(2, 4, 0.1, 0.3, 0.9, 0.1) == 2


def test_searches_stop_at_their_budget_and_say_so():
    arguments = {"warm_failure_rate": 0.0, "risk_target": 1e-12, "mission_time": 5000.0}
    prices = [
        SparesPool(4, s, 0.05, 0.5).cost("long_run").units
        + SparesPool(4, s, 0.05, 0.5).cost("shortage_curve", times=5000.0).units
        for s in range(4)
    ]
    curve = spares_curve(4, 0.05, 0.5, 1, cap=sum(prices[:3]), shown=10, **arguments)
    assert curve.budget_reached and curve.smallest is None and curve.counts.tolist() == [0, 1, 2]
    assert curve.work == sum(prices[:3]) and curve.searched_to == 2
    with pytest.raises(ComputeTooLarge, match="stopped at .* spares without meeting the target"):
        smallest_spares(4, 0.05, 0.5, 1, cap=sum(prices[:3]), **arguments)
    with pytest.raises(ComputeTooLarge, match="one spares candidate needs"):
        spares_curve(4, 0.05, 0.5, 1, cap=10, **arguments)


def test_an_overloaded_pool_keeps_flat_curves_monotone():
    # failures twenty times faster than the one crew repairs: availability is tiny and almost the
    # same whatever the spares; rounding alone would make such a flat curve wobble
    curve = spares_curve(3, 20.0, 1.0, 1, shown=60)
    assert np.all(np.diff(curve.availability) >= 0) and np.all(np.diff(curve.unavailability) <= 0)
    assert 0 < curve.availability[-1] < 1e-3 and np.all(curve.availability > 0)
    exact = float(1 - exact_unavailability(3, 60, 20, 1, 1))
    assert curve.availability[-1] == pytest.approx(exact, rel=1e-12)


@settings(max_examples=40, deadline=None)
@given(
    units=st.integers(1, 8),
    failure_rate=st.floats(1e-3, 5.0),
    repair_rate=st.floats(1e-3, 5.0),
    crews=st.integers(1, 3),
    warm_share=st.sampled_from([0.0, 0.25, 1.0]),
    mission_time=st.floats(0.1, 40.0),
)
def test_curves_move_one_way_and_agree_with_each_pool(
    units, failure_rate, repair_rate, crews, warm_share, mission_time
):
    warm = warm_share * failure_rate
    spares = spares_curve(
        units, failure_rate, repair_rate, crews, warm_failure_rate=warm, mission_time=mission_time, shown=6
    )
    assert spares.counts.tolist() == list(range(7))
    assert np.all(np.diff(spares.availability) >= 0) and np.all(np.diff(spares.unavailability) <= 0)
    assert np.all(np.diff(spares.shortage_risk) <= 0) and np.all(np.diff(spares.no_shortage_risk) >= 0)
    for curve in (spares.availability, spares.unavailability, spares.shortage_risk, spares.no_shortage_risk):
        assert np.all((curve >= 0) & (curve <= 1))
    # the running extremes only remove rounding ripples: every point is its own pool's figure
    for count in (0, 3, 6):
        pool = SparesPool(units, count, failure_rate, repair_rate, crews, warm)
        assert spares.unavailability[count] == pytest.approx(pool.unavailability(), rel=1e-12, abs=1e-300)
        assert spares.shortage_risk[count] == pytest.approx(pool.shortage_probability(mission_time), rel=1e-12)
    crews_found = crews_curve(units, 2, failure_rate, repair_rate, warm_failure_rate=warm, shown=units + 2)
    assert crews_found.counts.tolist() == list(range(1, units + 3))
    assert np.all(np.diff(crews_found.availability) >= 0) and np.all(np.diff(crews_found.unavailability) <= 0)


@pytest.mark.parametrize(
    ("call", "words"),
    [
        (lambda: smallest_spares(4, 0.05, 0.5, 1), "give availability_target or risk_target"),
        (lambda: smallest_crews(4, 1, 0.05, 0.5), "give availability_target or risk_target"),
        (lambda: smallest_spares(4, 0.05, 0.5, 1, 1.0), "availability_target must be a probability strictly between"),
        (lambda: smallest_spares(4, 0.05, 0.5, 1, risk_target=0.01), "mission_time is required with risk_target"),
        (lambda: spares_curve(4, 0.05, 0.5, most=-1), "most must be a whole number from 0"),
        (lambda: spares_curve(4, 0.05, 0.5, most=3, shown=4), "shown must be a whole number from 0 to 3"),
        (lambda: crews_curve(4, 1, 0.05, 0.5, shown=6), "shown must be a whole number from 1 to 5"),
        (lambda: spares_curve(4, 0.05, 0.5, mission_time=math.nan), "mission_time must be a finite number"),
        (lambda: spares_curve(0, 0.05, 0.5), "units must be a whole number from 1"),
    ],
)
def test_bad_search_inputs_name_the_input(call, words):
    with pytest.raises(ValueError, match=words):
        call()


def test_kept_candidates_change_neither_figures_nor_reach():
    # A search that finds every candidate kept from an earlier one must give the same figures and
    # stop at the same place under the same budget (the price is charged kept or not).
    from walkmath import sparesizing

    arguments = dict(units=12, failure_rate=0.02, repair_rate=0.25, crews=2, warm_failure_rate=0.004)
    mission = dict(risk_target=1e-6, mission_time=400.0, shown=6, most=60)
    whole = spares_curve(**arguments, **mission)
    budget = whole.work // 3
    sparesizing.forget_candidates()
    cold = spares_curve(**arguments, **mission, cap=budget)
    warm_up = spares_curve(**arguments, **mission)  # every candidate kept
    warm = spares_curve(**arguments, **mission, cap=budget)
    assert warm_up.searched_to >= cold.searched_to
    assert cold.budget_reached and warm.budget_reached
    for field in ("counts", "availability", "unavailability", "shortage_risk", "no_shortage_risk"):
        np.testing.assert_array_equal(getattr(warm, field), getattr(cold, field))
    assert (warm.smallest, warm.work, warm.searched_to) == (cold.smallest, cold.work, cold.searched_to)
    # and each kept figure is the pool's own, worked out afresh (SparesPool directly)
    for count, risk in zip(warm.counts, warm.shortage_risk, strict=True):
        pool = SparesPool(spares=int(count), **arguments)
        assert risk == pytest.approx(pool.shortage_split(400.0)[0], rel=1e-12)
