"""Design solvers for periodic review (s, S): smallest levels, cheapest pair (walkmath/reviewdesign.py)."""

from __future__ import annotations

from fractions import Fraction

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import walkmath as wm
from tests.walkmath.exact import periodic_review_long_run
from walkmath.policy import PeriodicReview
from walkmath.reviewdesign import best_policy, smallest_order_up_to, smallest_reorder_level

# Flour sacks drawn from the silo's day bin: none, one, or a baking day's three.
SACKS = {0: Fraction(1, 2), 1: Fraction(1, 4), 3: Fraction(1, 4)}
SACKS_LAW = wm.StepLaw.from_pmf({k: float(v) for k, v in SACKS.items()})


def exact_service(s, big_s, lead_time, unmet, measure):
    """Long-run service from the literal fraction chain (tests/walkmath/exact.py)."""
    exact = periodic_review_long_run(SACKS, s, big_s, lead_time, unmet)
    return 1 - exact["stockout"] if measure == "cycle" else exact["fill_rate"]


SETTINGS = [(0, "lost"), (0, "backorder"), (1, "lost"), (2, "backorder")]


@pytest.mark.parametrize("lead_time, unmet", SETTINGS)
@pytest.mark.parametrize("measure, target", [("cycle", 0.9), ("cycle", 0.99), ("fill", 0.95), ("fill", 0.6)])
@pytest.mark.parametrize("gap", [1, 3])
def test_smallest_order_up_to_meets_the_target_and_one_less_does_not(lead_time, unmet, measure, target, gap):
    search = smallest_order_up_to(SACKS_LAW, target, measure, lead_time, unmet, gap=gap)
    big_s = search.answer
    assert big_s is not None
    assert exact_service(big_s - gap, big_s, lead_time, unmet, measure) >= Fraction(target)
    if big_s - 1 >= gap:
        assert exact_service(big_s - 1 - gap, big_s - 1, lead_time, unmet, measure) < Fraction(target)
    else:
        assert big_s == gap  # the smallest candidate


@pytest.mark.parametrize("lead_time, unmet", SETTINGS)
@pytest.mark.parametrize("measure, target", [("cycle", 0.8), ("fill", 0.9)])
def test_smallest_reorder_level_meets_the_target_and_one_less_does_not(lead_time, unmet, measure, target):
    big_s = 7
    search = smallest_reorder_level(SACKS_LAW, big_s, target, measure, lead_time, unmet)
    s = search.answer
    assert s is not None
    assert exact_service(s, big_s, lead_time, unmet, measure) >= Fraction(target)
    if s > 0:
        assert exact_service(s - 1, big_s, lead_time, unmet, measure) < Fraction(target)


@pytest.mark.parametrize("lead_time, unmet", [(0, "lost"), (2, "backorder"), (1, "lost")])
def test_shared_curves_equal_one_policy_at_a_time(lead_time, unmet):
    # The curve comes from one drop law and convolutions; each point must equal a separate policy solve.
    demand = wm.StepLaw.poisson(mean=1.7)
    search = smallest_order_up_to(demand, 0.99, "fill", lead_time, unmet, gap=4, top=16)
    for level, fill, stockout in zip(search.levels, search.fill_rate, search.stockout, strict=True):
        single = PeriodicReview(demand, int(level) - 4, int(level), lead_time, unmet).measures()
        assert fill == pytest.approx(single.fill_rate, rel=1e-12)
        assert stockout == pytest.approx(single.stockout_probability, rel=1e-12)
    by_s = smallest_reorder_level(demand, 12, 0.9, "cycle", lead_time, unmet)
    for s, service in zip(by_s.levels, by_s.service, strict=True):
        single = PeriodicReview(demand, int(s), 12, lead_time, unmet).measures()
        assert service == pytest.approx(single.in_stock_probability, rel=1e-12)


def exact_cost(s, big_s, lead_time, unmet, holding, order_cost, penalty):
    exact = periodic_review_long_run(SACKS, s, big_s, lead_time, unmet)
    return holding * exact["on_hand"] + order_cost * exact["ordered"] + penalty * exact["short"]


@pytest.mark.parametrize("lead_time, unmet", [(0, "lost"), (1, "backorder"), (1, "lost")])
@pytest.mark.parametrize("target", [None, 0.97])
def test_best_policy_is_the_cheapest_pair_by_exact_enumeration(lead_time, unmet, target):
    # Brute force over the whole grid with the literal fraction chain (tests/walkmath/exact.py).
    # Prices chosen so that the cheapest pair is unique on every case (checked below): a rational tie
    # would let rounding pick either pair.
    holding, order_cost, penalty = Fraction(1), Fraction(5), Fraction(11)
    top, largest_gap = 7, 7
    choice = best_policy(
        SACKS_LAW,
        holding=1.0,
        order_cost=5.0,
        shortage_penalty=11.0,
        lead_time=lead_time,
        unmet=unmet,
        target=target,
        top=top,
        largest_gap=largest_gap,
    )
    candidates = []
    for big_s in range(1, top + 1):
        for s in range(max(0, big_s - largest_gap), big_s):
            if target is not None and exact_service(s, big_s, lead_time, unmet, "cycle") < Fraction(target):
                continue
            candidates.append((exact_cost(s, big_s, lead_time, unmet, holding, order_cost, penalty), big_s, s))
    candidates.sort()
    cost, big_s, s = candidates[0]
    assert candidates[1][0] > cost * (1 + Fraction(1, 10**6))
    assert (choice.reorder_level, choice.order_up_to) == (s, big_s)
    assert choice.cost == pytest.approx(float(cost), rel=1e-13)
    assert choice.feasible.sum() == len(candidates)
    best_by_level = dict(zip(choice.curve_order_up_to.tolist(), choice.curve_cost.tolist(), strict=True))
    assert best_by_level[big_s] == pytest.approx(float(cost), rel=1e-13)
    # the cost curve: for every order-up-to level, its cheapest feasible reorder level (exact fractions)
    cheapest = {}
    for level_cost, level, reorder in candidates:  # sorted by cost, then S, then s: the first per S is its best
        cheapest.setdefault(level, (level_cost, reorder))
    assert choice.curve_order_up_to.tolist() == sorted(cheapest)
    for level, reorder, level_cost in zip(
        choice.curve_order_up_to, choice.curve_reorder_level, choice.curve_cost, strict=True
    ):
        assert level_cost == pytest.approx(float(cheapest[level][0]), rel=1e-13)
        if sum(1 for c, lv, _ in candidates if lv == level and c == cheapest[level][0]) == 1:
            assert reorder == cheapest[level][1]


@settings(max_examples=25, deadline=None)
@given(
    first=st.floats(0.05, 0.9999),
    second=st.floats(0.05, 0.9999),
    lead_time=st.integers(0, 3),
    gap=st.integers(1, 6),
    measure=st.sampled_from(["cycle", "fill"]),
)
def test_answers_grow_with_the_target_and_curves_are_monotone(first, second, lead_time, gap, measure):
    demand = wm.StepLaw.negative_binomial(mean=1.2, variance=3.0)
    low, high = sorted((first, second))
    a = smallest_order_up_to(demand, low, measure, lead_time, "backorder", gap=gap)
    b = smallest_order_up_to(demand, high, measure, lead_time, "backorder", gap=gap)
    assert b.answer - a.answer >= 0
    assert np.all(np.diff(a.service) >= 0) and np.all(np.diff(a.shortfall) <= 0)
    assert np.all(np.diff(a.stockout) <= 0) and np.all(np.diff(a.mean_on_hand) >= 0)
    c = smallest_reorder_level(demand, 12, low, measure, lead_time, "backorder")
    d = smallest_reorder_level(demand, 12, high, measure, lead_time, "backorder")
    if c.answer is not None and d.answer is not None:
        assert d.answer - c.answer >= 0
    assert d.answer is None or c.answer is not None
    assert np.all(np.diff(c.service) >= 0) and np.all(np.diff(c.shortfall) <= 0)


def test_unreachable_target_within_top_gives_no_answer_but_the_curve():
    search = smallest_order_up_to(wm.StepLaw.poisson(mean=4.0), 0.999, top=5)
    assert search.answer is None
    assert search.levels.tolist() == [1, 2, 3, 4, 5]
    assert np.all(search.service < 0.999)


def test_bad_inputs_name_the_parameter():
    demand = wm.StepLaw.poisson(mean=2.0)
    with pytest.raises(ValueError, match="target must be a probability strictly between 0 and 1"):
        smallest_order_up_to(demand, 1.0)
    with pytest.raises(ValueError, match="gap must be a whole number from 1"):
        smallest_order_up_to(demand, 0.9, gap=0)
    with pytest.raises(ValueError, match="top must be a whole number from 3"):
        smallest_order_up_to(demand, 0.9, gap=3, top=2)
    with pytest.raises(ValueError, match="measure must be one of 'cycle', 'fill'"):
        smallest_reorder_level(demand, 5, 0.9, measure="mean")
    with pytest.raises(ValueError, match="holding must be a finite number above 0"):
        best_policy(demand, holding=0.0, order_cost=1.0)
    with pytest.raises(ValueError, match=r"order_cost must be a finite number at least 0 and at most 1e\+12"):
        best_policy(demand, holding=1.0, order_cost=-1.0)
    with pytest.raises(wm.ComputeTooLarge, match="lower top"):
        best_policy(wm.StepLaw.poisson(mean=30.0), holding=1.0, order_cost=50.0, lead_time=3, unmet="lost")


@pytest.mark.parametrize("lead_time, unmet", [(0, "lost"), (2, "backorder"), (1, "lost")])
def test_search_mean_short_is_each_policy_s_own(lead_time, unmet):
    # The curve against one PeriodicReview at a time (its renewal or chain solve, a separate path).
    demand = wm.StepLaw.from_pmf({0: 0.3, 1: 0.4, 3: 0.3})
    search = smallest_order_up_to(demand, 0.9, "fill", lead_time, unmet, gap=2, top=12)
    for level, short in zip(search.levels, search.mean_short, strict=True):
        alone = PeriodicReview(demand, int(level) - 2, int(level), lead_time, unmet).measures().mean_short
        assert short == pytest.approx(alone, rel=1e-12, abs=1e-300), level


@pytest.mark.parametrize(
    "demand, lead_time, unmet",
    [
        (wm.StepLaw.negative_binomial(mean=0.3, variance=1.5), 4, "backorder"),  # slow, lumpy (spare parts)
        (wm.StepLaw.poisson(mean=6.0), 3, "backorder"),
        (wm.StepLaw.poisson(mean=2.5), 0, "lost"),
    ],
)
def test_gap_curves_equal_each_gap_on_its_own(demand, lead_time, unmet):
    # The best-policy grid adds one shifted copy per gap (mixture linearity); each gap's curves must
    # equal the direct convolutions of that gap's own drop law, tails included.
    from walkmath.reviewshared import _Shared

    top, gaps = 160, range(1, 21)
    shared = _Shared(demand, lead_time, unmet, top, max(gaps))
    direct = {gap: shared.curves(drop, np.arange(gap, top + 1)) for gap, drop, _ in shared.drops(gaps)}
    for gap, curves, _ in shared.gap_curves(gaps):
        for name, values in curves.items():
            expected = direct[gap][name]
            assert np.all(values >= 0)
            np.testing.assert_allclose(values, expected, rtol=1e-11, atol=0, err_msg=f"{name} at gap {gap}")
