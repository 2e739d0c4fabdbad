"""Order-up-to search with lost sales and a lead time: the bisection and its curve (walkmath/reviewdesign.py).

The search rests on two facts proved in walkmath/reviewlevels.py's docstring (service grows with S; lost sales serve at
least as well as backorders at the same S). Both are checked here on the literal chain in exact fractions
(tests/walkmath/exact.py, built independently of the engine), as are the answers and every point of the curve.
"""

from __future__ import annotations

import math
from fractions import Fraction

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import walkmath as wm
from tests.walkmath.exact import periodic_review_long_run
from tests.walkmath.test_policy import simulate
from walkmath.reviewcost import order_up_to_work
from walkmath.reviewdesign import GRID_POINTS, smallest_order_up_to

# Delivery-van tyres asked for at the co-operative's yard in a week: usually none, a set of two now and then.
TYRES = {0: Fraction(3, 5), 1: Fraction(1, 5), 2: Fraction(1, 5)}
TYRES_LAW = wm.StepLaw.from_pmf({k: float(v) for k, v in TYRES.items()})
# Flour sacks from the silo's day bin: none, one, or a baking day's three.
SACKS = {0: Fraction(1, 2), 1: Fraction(1, 4), 3: Fraction(1, 4)}
SACKS_LAW = wm.StepLaw.from_pmf({k: float(v) for k, v in SACKS.items()})
LAWS = [(TYRES, TYRES_LAW), (SACKS, SACKS_LAW)]


def exact_service(pmf, big_s, lead_time, unmet, measure):
    exact = periodic_review_long_run(pmf, big_s - 1, big_s, lead_time, unmet)
    return 1 - exact["stockout"] if measure == "cycle" else exact["fill_rate"]


@pytest.mark.parametrize("pmf, law", LAWS, ids=["tyres", "sacks"])
@pytest.mark.parametrize("lead_time", [1, 2, 3])
def test_the_two_facts_the_bisection_rests_on_hold_in_exact_fractions(pmf, law, lead_time):
    # Fact 1 (coupling): service and mean on hand do not fall, units short do not grow, as S grows.
    # Fact 2: at the same S, lost sales serve at least as well as backorders. Exact rationals: no tolerance.
    previous = None
    for big_s in range(1, 8 if lead_time < 3 else 6):  # the fraction chain grows fast with the lead time
        lost = periodic_review_long_run(pmf, big_s - 1, big_s, lead_time, "lost")
        back = periodic_review_long_run(pmf, big_s - 1, big_s, lead_time, "backorder")
        assert lost["stockout"] <= back["stockout"] and lost["fill_rate"] >= back["fill_rate"]
        if previous is not None:
            assert lost["stockout"] <= previous["stockout"] and lost["fill_rate"] >= previous["fill_rate"]
            assert lost["on_hand"] >= previous["on_hand"] and lost["short"] <= previous["short"]
        previous = lost


@pytest.mark.parametrize("pmf, law", LAWS, ids=["tyres", "sacks"])
@pytest.mark.parametrize("lead_time", [1, 2])
@pytest.mark.parametrize("measure, target", [("cycle", 0.8), ("cycle", 0.97), ("fill", 0.9), ("fill", 0.995)])
def test_answer_meets_the_target_and_one_less_does_not(pmf, law, lead_time, measure, target):
    search = smallest_order_up_to(law, target, measure, lead_time, "lost")
    big_s = search.answer
    assert exact_service(pmf, big_s, lead_time, "lost", measure) >= Fraction(target)
    if big_s > 1:
        assert exact_service(pmf, big_s - 1, lead_time, "lost", measure) < Fraction(target)
    # the backorder answer bounds it (fact 2)
    assert smallest_order_up_to(law, target, measure, lead_time, "backorder").answer - big_s >= 0


@pytest.mark.parametrize("lead_time", [1, 2])
def test_every_point_of_the_curve_is_its_own_exact_policy(lead_time):
    search = smallest_order_up_to(SACKS_LAW, 0.9, "fill", lead_time, "lost", include=(6,))
    assert 6 in search.levels.tolist() and search.answer in search.levels.tolist()
    assert search.levels.size <= math.ceil(math.log2(search.levels.max() + 1)) + 2 + GRID_POINTS + 1
    for index, level in enumerate(search.levels.tolist()):
        exact = periodic_review_long_run(SACKS, level - 1, level, lead_time, "lost")
        assert search.fill_rate[index] == pytest.approx(float(exact["fill_rate"]), rel=1e-12)
        assert search.shortfall[index] == pytest.approx(float(1 - exact["fill_rate"]), rel=1e-12)
        assert search.stockout[index] == pytest.approx(float(exact["stockout"]), rel=1e-12)
        assert search.mean_on_hand[index] == pytest.approx(float(exact["on_hand"]), rel=1e-12)
        assert search.mean_short[index] == pytest.approx(float(exact["short"]), rel=1e-12)
        assert search.orders_per_period[index] == pytest.approx(float(exact["ordered"]), rel=1e-12)


def test_answer_within_a_seeded_monte_carlo_interval():
    # 40,000 paths of the rules run 80 periods (tests/walkmath/test_policy.py's simulation); the last
    # period's stock-out indicator samples the long-run probability. Wilson 99.9 % interval.
    search = smallest_order_up_to(TYRES_LAW, 0.95, "cycle", 2, "lost")
    big_s = search.answer
    stockout, _, _ = simulate(TYRES, big_s - 1, big_s, 2, "lost", 40_000, 80, np.random.default_rng(8))
    low, high = wm.wilson_interval(int(stockout.sum()), stockout.size, confidence=0.999)
    at = search.levels.tolist().index(big_s)
    assert low <= search.stockout[at] <= high


def test_lead_time_zero_lost_sales_and_backorders_differ_only_in_the_shortage_accounting():
    # Common practice: with deliveries at once, a backorder is filled at the next review by the order up to
    # S, so the shelf, the service and the orders are the same; only the end-of-period backorders differ.
    demand = wm.StepLaw.negative_binomial(mean=2.0, variance=6.0)
    lost = wm.PeriodicReview(demand, 4, 11, 0, "lost").measures()
    back = wm.PeriodicReview(demand, 4, 11, 0, "backorder").measures()
    for name in ("stockout_probability", "fill_rate", "orders_per_period", "mean_short"):
        assert getattr(lost, name) == pytest.approx(getattr(back, name), rel=1e-12)
    assert lost.mean_backorders == 0 and back.mean_backorders > 0


@settings(max_examples=20, deadline=None)
@given(
    first=st.floats(0.05, 0.999),
    second=st.floats(0.05, 0.999),
    lead_time=st.integers(1, 2),
    measure=st.sampled_from(["cycle", "fill"]),
    mean=st.floats(0.2, 1.5),
)
def test_answers_grow_with_the_target_and_curves_are_monotone(first, second, lead_time, measure, mean):
    demand = wm.StepLaw.poisson(mean=mean)
    low, high = sorted((first, second))
    a = smallest_order_up_to(demand, low, measure, lead_time, "lost")
    b = smallest_order_up_to(demand, high, measure, lead_time, "lost")
    assert b.answer - a.answer >= 0
    for search in (a, b):
        assert np.all(np.diff(search.levels) > 0)
        assert np.all(np.diff(search.service) >= 0) and np.all(np.diff(search.shortfall) <= 0)
        assert np.all(np.diff(search.stockout) <= 0) and np.all(np.diff(search.fill_rate) >= 0)
        assert np.all(np.diff(search.mean_on_hand) >= 0) and np.all(np.diff(search.mean_short) <= 0)
        assert np.all(search.service >= 0) and np.all(search.shortfall >= 0)


def test_price_covers_what_the_search_solves():
    # The search solves one policy per level on its curve; the price must cover each one's own price
    # (state search and GTH on its state bound) and the backorder search that bounds the bisection.
    demand = wm.StepLaw.poisson(mean=1.5)
    priced = order_up_to_work(demand, 2, "lost", target=0.99, measure="fill", include=(14,)).units
    search = smallest_order_up_to(demand, 0.99, "fill", 2, "lost", include=(14,))
    levels = search.levels.tolist()
    spent = sum(wm.PeriodicReview(demand, level - 1, level, 2, "lost").cost().units for level in levels)
    spent += order_up_to_work(demand, 2, "backorder", top=int(search.levels.max())).units
    assert spent > 0 and priced >= spent


def test_too_large_a_search_is_refused_before_any_chain_is_solved():
    with pytest.raises(wm.ComputeTooLarge, match="lower top"):
        smallest_order_up_to(wm.StepLaw.poisson(mean=6.0), 0.99, "fill", 4, "lost")


# -- every candidate solved in one stacked pass (walkmath/reviewstack.py) equals its own solve ----------------


def reference_measures(demand, policies, lead_time):
    """The per-candidate path: one PeriodicReview (state search and GTH) per (s, S)."""
    return [wm.PeriodicReview(demand, s, top, lead_time, "lost").measures() for s, top in policies]


def close(got, want):
    # 1e-10 relative (the project's exactness rule); exact zeros stay exact zeros.
    return np.all(got >= 0) and np.allclose(got, want, rtol=1e-10, atol=0)


@settings(max_examples=12, deadline=None)
@given(
    mean=st.floats(0.3, 1.5),
    lead_time=st.integers(1, 2),
    top=st.integers(2, 9),
    largest_gap=st.integers(1, 5),
    order_cost=st.floats(0.0, 20.0),
    penalty=st.floats(0.0, 30.0),
    target=st.none() | st.floats(0.5, 0.99),
)
def test_cheapest_policy_grid_equals_one_solve_per_cell(mean, lead_time, top, largest_gap, order_cost, penalty, target):
    demand = wm.StepLaw.poisson(mean=mean)
    choice = wm.best_policy(
        demand,
        holding=1.0,
        order_cost=order_cost,
        shortage_penalty=penalty,
        lead_time=lead_time,
        unmet="lost",
        target=target,
        top=top,
        largest_gap=largest_gap,
    )
    cells = list(zip(choice.reorder_levels.tolist(), choice.order_up_to_levels.tolist(), strict=True))
    rows = reference_measures(demand, cells, lead_time)
    cost = np.array([row.mean_on_hand + order_cost * row.orders_per_period + penalty * row.mean_short for row in rows])
    service = np.array([row.in_stock_probability for row in rows])
    shortfall = np.array([row.stockout_probability for row in rows])
    assert close(choice.costs, cost) and close(choice.service, service) and close(choice.shortfall, shortfall)
    feasible = np.ones(len(cells), dtype=bool) if target is None else shortfall <= 1 - target
    if not feasible.any():
        assert choice.order_up_to is None
        return
    best = min(cost[feasible])
    # The chosen cell is a cheapest feasible one (to 1e-10: a near-tie may fall either way).
    assert choice.cost == pytest.approx(best, rel=1e-10)
    assert (choice.reorder_level, choice.order_up_to) in [cells[i] for i in np.flatnonzero(feasible)]


@settings(max_examples=12, deadline=None)
@given(
    mean=st.floats(0.3, 2.0),
    lead_time=st.integers(1, 2),
    order_up_to=st.integers(1, 10),
    target=st.floats(0.3, 0.99),
    measure=st.sampled_from(["cycle", "fill"]),
)
def test_reorder_level_curve_equals_one_solve_per_level(mean, lead_time, order_up_to, target, measure):
    demand = wm.StepLaw.poisson(mean=mean)
    search = wm.smallest_reorder_level(demand, order_up_to, target, measure, lead_time, "lost")
    assert search.levels.tolist() == list(range(order_up_to))
    rows = reference_measures(demand, [(s, order_up_to) for s in range(order_up_to)], lead_time)
    assert close(search.stockout, np.array([row.stockout_probability for row in rows]))
    assert close(search.fill_rate, np.array([row.fill_rate for row in rows]))
    assert close(search.mean_on_hand, np.array([row.mean_on_hand for row in rows]))
    assert close(search.mean_short, np.array([row.mean_short for row in rows]))
    assert close(search.orders_per_period, np.array([row.orders_per_period for row in rows]))
    good, bad = (
        ("in_stock_probability", "stockout_probability") if measure == "cycle" else ("fill_rate", "unfilled_share")
    )
    meets = [getattr(row, bad) <= 1 - target for row in rows]
    assert search.answer == (meets.index(True) if any(meets) else None)
    assert close(search.service, np.array([getattr(row, good) for row in rows]))


@settings(max_examples=12, deadline=None)
@given(
    mean=st.floats(0.3, 2.0),
    lead_time=st.integers(1, 2),
    gap=st.integers(2, 5),
    extra=st.integers(0, 6),
    target=st.floats(0.3, 0.99),
)
def test_order_up_to_curve_with_a_larger_gap_equals_one_solve_per_level(mean, lead_time, gap, extra, target):
    demand = wm.StepLaw.poisson(mean=mean)
    top = gap + extra
    search = smallest_order_up_to(demand, target, "fill", lead_time, "lost", gap=gap, top=top)
    assert search.levels.tolist() == list(range(gap, top + 1))
    rows = reference_measures(demand, [(level - gap, level) for level in range(gap, top + 1)], lead_time)
    assert close(search.fill_rate, np.array([row.fill_rate for row in rows]))
    assert close(search.shortfall, np.array([row.unfilled_share for row in rows]))
    assert close(search.stockout, np.array([row.stockout_probability for row in rows]))
    assert close(search.mean_on_hand, np.array([row.mean_on_hand for row in rows]))
    meets = [row.unfilled_share <= 1 - target for row in rows]
    assert search.answer == (gap + meets.index(True) if any(meets) else None)


@settings(max_examples=10, deadline=None)
@given(mean=st.floats(0.3, 2.0), lead_time=st.integers(1, 2), top=st.integers(2, 12))
def test_order_up_to_curve_from_the_stack_is_monotone_in_the_level(mean, lead_time, top):
    # Fact 1 of walkmath/reviewlevels.py's docstring (service grows with S for an order-up-to policy),
    # checked on the raw stacked solves, with no running max or min applied: differences >= 0. Read on
    # the quantities kept with relative accuracy (stock-out, unfilled share, units short), whose true
    # values fall by a clear factor per unit of Poisson demand, and the mean on hand (about a unit apart).
    from walkmath.reviewstack import lost_sales_measures

    demand = wm.StepLaw.poisson(mean=mean)
    rows = lost_sales_measures(demand, [(level - 1, level) for level in range(1, top + 1)], lead_time)
    for name in ("stockout_probability", "unfilled_share", "mean_short"):
        assert np.all(-np.diff([getattr(row, name) for row in rows]) >= 0), name
    assert np.all(np.diff([row.mean_on_hand for row in rows]) >= 0)


def test_reorder_level_curve_from_the_shared_reduction_equals_one_solve_per_level():
    # Poisson 3 a period, S = 20, lead time 2: the price gives reorder levels 15..19 to the shared
    # reduction (walkmath/reviewsweep.py), the rest to the stacked pass; every level against its own solve.
    from walkmath.reviewsweep import plan

    demand = wm.StepLaw.poisson(mean=3.0)
    assert plan(demand, [(s, 20) for s in range(20)], 2)[0] == {20: 15}
    search = wm.smallest_reorder_level(demand, 20, 0.97, "fill", 2, "lost")
    rows = reference_measures(demand, [(s, 20) for s in range(20)], 2)
    assert close(search.fill_rate, np.array([row.fill_rate for row in rows]))
    assert close(search.shortfall, np.array([row.unfilled_share for row in rows]))
    assert close(search.stockout, np.array([row.stockout_probability for row in rows]))
    assert close(search.mean_on_hand, np.array([row.mean_on_hand for row in rows]))
    assert close(search.orders_per_period, np.array([row.orders_per_period for row in rows]))
    meets = [row.unfilled_share <= 1 - 0.97 for row in rows]
    assert search.answer == meets.index(True)
