"""Order-up-to search with lost sales and a lead time: the bisection and its curve (walkmath/reviewdesign.py).

The search rests on two facts proved in the module's docstring (service grows with S; lost sales serve at
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
