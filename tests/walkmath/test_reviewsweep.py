"""One order-up-to level, many reorder levels, one shared reduction (walkmath/reviewsweep.py).

References: the one-policy path ``PeriodicReview.measures`` (its own state search and GTH, itself
checked against exact fractions in tests/walkmath/test_policy.py) and exact fractions
(tests/walkmath/exact.py).
"""

from __future__ import annotations

from fractions import Fraction

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import walkmath as wm
from tests.walkmath.exact import periodic_review_long_run
from tests.walkmath.test_reviewstack import assert_same_measures
from walkmath.policy import DemandTables
from walkmath.reviewsweep import LevelSweep, lost_policy_measures, lost_policy_work, plan


@settings(max_examples=25, deadline=None)
@given(
    weights=st.lists(st.integers(0, 6), min_size=2, max_size=5),
    zero=st.integers(1, 6),
    lead_time=st.integers(1, 3),
    order_up_to=st.integers(2, 9),
)
def test_every_reorder_level_read_off_the_sweep_equals_its_own_solve(weights, zero, lead_time, order_up_to):
    if sum(weights[1:]) == 0:
        return
    weights = [zero, *weights[1:]]  # demand 0 possible: the sweep's own condition
    demand = wm.StepLaw.from_pmf({k: w / sum(weights) for k, w in enumerate(weights) if w})
    if lead_time == 3:
        order_up_to = min(order_up_to, 6)
    sweep = LevelSweep(demand, order_up_to, 0, lead_time)
    tables = DemandTables(demand, order_up_to)
    for s in range(order_up_to):
        reference = wm.PeriodicReview(demand, s, order_up_to, lead_time, "lost").measures()
        try:
            got = sweep.measures(s, demand, tables)
        except ValueError:  # more than one closed class above s: the caller solves it on its own
            continue
        assert_same_measures(got, reference)


@pytest.mark.parametrize("lead_time", [1, 2])
def test_sweep_matches_exact_fractions(lead_time):
    # Flour sacks from the day bin: none, one, or a baking day's three (tests/walkmath/exact.py, fractions).
    pmf = {0: Fraction(1, 2), 1: Fraction(1, 4), 3: Fraction(1, 4)}
    demand = wm.StepLaw.from_pmf({k: float(v) for k, v in pmf.items()})
    sweep = LevelSweep(demand, 6, 0, lead_time)
    tables = DemandTables(demand, 6)
    for s in range(6):
        got = sweep.measures(s, demand, tables)
        exact = periodic_review_long_run(pmf, s, 6, lead_time, "lost")
        assert got.stockout_probability == pytest.approx(float(exact["stockout"]), rel=1e-12)
        assert got.fill_rate == pytest.approx(float(exact["fill_rate"]), rel=1e-12)
        assert got.mean_on_hand == pytest.approx(float(exact["on_hand"]), rel=1e-12)
        assert got.orders_per_period == pytest.approx(float(exact["ordered"]), rel=1e-12)


def test_a_censored_chain_whose_first_state_is_never_reached_keeps_a_recurrent_one_last():
    # Poisson 2 a day is stored up to a few dozen units, so with S = 30 the shelf is never emptied in one
    # period: the state (0 on hand, 30 due) cannot recur. GTH must keep a state of the closed class last.
    demand = wm.StepLaw.poisson(mean=2.0)
    sweep = LevelSweep(demand, 30, 27, 2)
    tables = DemandTables(demand, 30)
    for s in (27, 29):
        assert_same_measures(sweep.measures(s, demand, tables), wm.PeriodicReview(demand, s, 30, 2, "lost").measures())


def test_plan_leaves_demand_that_is_never_zero_to_the_one_by_one_path():
    demand = wm.StepLaw.from_pmf({1: 0.5, 2: 0.5})
    policies = [(s, 8) for s in range(8)]
    cuts, rest = plan(demand, policies, 2)
    assert cuts == {} and rest == list(range(8))
    for got, (s, top) in zip(lost_policy_measures(demand, policies, 2), policies, strict=True):
        assert_same_measures(got, wm.PeriodicReview(demand, s, top, 2, "lost").measures())


def test_a_sweep_that_fails_hands_its_chains_to_the_one_by_one_path(monkeypatch):
    demand = wm.StepLaw.poisson(mean=3.0)
    policies = [(s, 20) for s in range(20)]
    cuts, _ = plan(demand, policies, 2)
    assert cuts  # the sweep is chosen here (reorder levels 15..19) ...

    def refuse(*args, **kwargs):
        raise ValueError("the shared reduction met a state that never climbs back")

    shared = lost_policy_measures(demand, policies, 2)
    monkeypatch.setattr("walkmath.reviewsweep.LevelSweep", refuse)  # ... and made to fail
    alone = lost_policy_measures(demand, policies, 2)
    for got, want, (s, top) in zip(alone, shared, policies, strict=True):
        assert_same_measures(got, want)
        assert_same_measures(got, wm.PeriodicReview(demand, s, top, 2, "lost").measures())


def test_reorder_level_search_price_covers_what_it_checks(monkeypatch):
    demand = wm.StepLaw.poisson(mean=3.0)
    seen = []
    real = wm.Work.check

    def record(work, cap=wm.WORK_CAP):
        seen.append(work.units)
        return real(work, cap)

    monkeypatch.setattr(wm.Work, "check", record)
    search = wm.smallest_reorder_level(demand, 20, 0.95, "cycle", 2, "lost")  # reorder levels 15..19 swept
    monkeypatch.undo()
    priced = lost_policy_work("smallest_reorder_level", demand, [(s, 20) for s in range(20)], 2, "").units
    assert search.answer is not None and seen and priced >= sum(seen) > 0
