"""Many lost-sales chains at once (walkmath/reviewstack.py): states, stacked GTH, measures.

References: brute-force enumeration of the state tuples (itertools), the one-policy path
``PeriodicReview.measures`` (its own state search and GTH, tested against exact fractions in
tests/walkmath/test_policy.py), exact fractions (tests/walkmath/exact.py) and numpy least squares.
"""

from __future__ import annotations

import itertools
from fractions import Fraction

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import walkmath as wm
from tests.walkmath.exact import periodic_review_long_run
from walkmath.policy import _pipeline
from walkmath.reviewchain import closed_class, gth_steady_state, gth_work
from walkmath.reviewstack import (
    lost_sales_measures,
    pipeline_count,
    pipeline_states,
    size_class,
    stack_work,
    stacked_gth,
)

FIELDS = list(wm.PolicyMeasures.__dataclass_fields__)


def assert_same_measures(got, want, rel=1e-10):
    for name in FIELDS:
        value, reference = getattr(got, name), getattr(want, name)
        assert value >= 0, name
        assert value == pytest.approx(reference, rel=rel, abs=0 if reference else 1e-300), name


@settings(max_examples=40, deadline=None)
@given(order_up_to=st.integers(1, 12), gap=st.integers(1, 12), lead_time=st.integers(0, 4))
def test_state_sets_match_a_brute_force_enumeration(order_up_to, gap, lead_time):
    gap = min(gap, order_up_to)
    # Every tuple (on hand 0..S, orders due in {0} or gap..S) whose sum is at most S, by itertools.
    sizes = [0, *range(gap, order_up_to + 1)]
    brute = sorted(
        (on_hand, *due)
        for on_hand in range(order_up_to + 1)
        for due in itertools.product(sizes, repeat=max(lead_time - 1, 0))
        if on_hand + sum(due) <= order_up_to
    )
    states = pipeline_states(order_up_to, gap, lead_time)
    assert [tuple(row) for row in states.tolist()] == brute
    assert pipeline_count(order_up_to, gap, lead_time) == len(brute)


def test_size_classes_pad_by_at_most_an_eighth_or_seven_states():
    for states in range(1, 5000):
        padded = size_class(states)
        assert padded >= states and padded % 8 == 0
        assert padded - states <= max(7, states // 8)


def random_chains(rng, sizes):
    chains = []
    for size in sizes:
        matrix = rng.random((size, size)) * (rng.random((size, size)) < 0.3)
        matrix[np.arange(size), (np.arange(size) + 1) % size] += 0.05  # a cycle through all: irreducible
        chains.append(matrix / matrix.sum(axis=1, keepdims=True))
    return chains


@pytest.mark.parametrize("block", [4, 64])
def test_stacked_gth_matches_one_chain_at_a_time_with_padding(block):
    # Chains of 5..40 states padded to 40, block 4 (so most blocks take the product path) and 64.
    # Reference: gth_steady_state one chain at a time, itself checked against least squares and exact
    # fractions in tests/walkmath/test_reviewchain.py; and numpy least squares directly.
    rng = np.random.default_rng(5)
    sizes = [5, 17, 33, 40, 1]
    chains = random_chains(rng, sizes)
    work = np.zeros((len(sizes), 40, 40))
    for i, matrix in enumerate(chains):
        work[i, : sizes[i], : sizes[i]] = matrix
        work[i, sizes[i] :, 0] = 1.0
    laws = stacked_gth(work, block=block)
    for i, matrix in enumerate(chains):
        n = sizes[i]
        np.testing.assert_allclose(laws[i, :n], gth_steady_state(matrix), rtol=1e-12)
        assert np.all(laws[i, n:] == 0)
        system = np.vstack([(matrix - np.eye(n)).T, np.ones(n)])
        reference, *_ = np.linalg.lstsq(system, np.append(np.zeros(n), 1.0), rcond=None)
        np.testing.assert_allclose(laws[i, :n], reference, rtol=1e-10)


def test_stacked_gth_keeps_relative_accuracy_where_one_minus_p_kk_rounds_to_zero():
    # The chain of tests/walkmath/test_reviewchain.py (detailed balance in exact fractions), repeated in
    # blocks of 1 so that its last states go through the product path too.
    matrix = np.array([[1.0 - 1e-20, 1e-20, 0.0], [0.5, 0.25, 0.25], [0.0, 1e-3, 1.0 - 1e-3]])
    ratios = [Fraction(1, 10**20) / Fraction(1, 2), Fraction(1, 4) / Fraction(1, 1000)]
    weights = [Fraction(1), ratios[0], ratios[0] * ratios[1]]
    exact = [float(w / sum(weights)) for w in weights]
    for block in (1, 64):
        np.testing.assert_allclose(stacked_gth(matrix[None].copy(), block=block)[0], exact, rtol=1e-14)


def test_stacked_gth_refuses_a_chain_that_is_not_irreducible():
    matrix = np.array([[[0.0, 1.0], [0.0, 1.0]]])  # state 1 never leaves
    with pytest.raises(ValueError, match="not irreducible"):
        stacked_gth(matrix)


demand_tables = st.lists(st.integers(0, 6), min_size=2, max_size=5).filter(lambda weights: sum(weights[1:]) > 0)


@settings(max_examples=25, deadline=None)
@given(
    weights=demand_tables,
    lead_time=st.integers(1, 3),
    levels=st.lists(st.tuples(st.integers(1, 9), st.integers(1, 9)), min_size=1, max_size=12),
)
def test_every_policy_equals_its_own_one_policy_solve(weights, lead_time, levels):
    # Reference: PeriodicReview.measures, one state search and one GTH per policy.
    if sum(weights) == 0 or sum(weights[1:]) == 0:
        return
    demand = wm.StepLaw.from_pmf({k: w / sum(weights) for k, w in enumerate(weights) if w})
    if demand.highest < 1:
        return
    if lead_time == 3:
        levels = [(gap, min(top, 6)) for gap, top in levels]  # keep the three-slot chains small
    policies = [(max(top - gap, 0), top) for gap, top in levels if top >= 1]
    policies = [(min(s, top - 1), top) for s, top in policies]
    for got, (s, top) in zip(lost_sales_measures(demand, policies, lead_time), policies, strict=True):
        assert_same_measures(got, wm.PeriodicReview(demand, s, top, lead_time, "lost").measures())


@pytest.mark.parametrize("lead_time", [1, 2])
def test_measures_match_exact_fractions(lead_time):
    # Flour sacks from the day bin: none, one, or a baking day's three (tests/walkmath/exact.py, fractions).
    pmf = {0: Fraction(1, 2), 1: Fraction(1, 4), 3: Fraction(1, 4)}
    demand = wm.StepLaw.from_pmf({k: float(v) for k, v in pmf.items()})
    policies = [(2, 5), (0, 4), (4, 5), (1, 6)]
    for got, (s, top) in zip(lost_sales_measures(demand, policies, lead_time), policies, strict=True):
        exact = periodic_review_long_run(pmf, s, top, lead_time, "lost")
        assert got.stockout_probability == pytest.approx(float(exact["stockout"]), rel=1e-12)
        assert got.fill_rate == pytest.approx(float(exact["fill_rate"]), rel=1e-12)
        assert got.mean_on_hand == pytest.approx(float(exact["on_hand"]), rel=1e-12)
        assert got.mean_short == pytest.approx(float(exact["short"]), rel=1e-12)
        assert got.orders_per_period == pytest.approx(float(exact["ordered"]), rel=1e-12)


def test_a_closed_class_the_start_never_reaches_is_left_out_as_the_one_policy_path_does():
    # Fixed demand of 3 a period, S = 10, s = 7, lead time 2: from (10 on hand, nothing due) the stock
    # settles at (4 on hand, 3 due); the states (5, 0), (2, 5), (5, 3) cycle among themselves but are
    # never reached from the start (worked by hand from the rules). Both paths keep the start's class.
    demand = wm.StepLaw.fixed(3)
    got = lost_sales_measures(demand, [(7, 10)], 2)[0]
    assert_same_measures(got, wm.PeriodicReview(demand, 7, 10, 2, "lost").measures())
    assert got.stockout_probability == 0 and got.mean_on_hand == 1.0  # 4 on hand less 3 each period


def test_families_and_stacks_split_without_changing_any_answer(monkeypatch):
    # Tiny families and stacks force the splitting paths; the answers must not move.
    demand = wm.StepLaw.poisson(mean=1.2)
    policies = [(top - gap, top) for gap in range(1, 5) for top in range(gap, 12)]
    whole = lost_sales_measures(demand, policies, 2)
    monkeypatch.setattr("walkmath.reviewstack.FAMILY_MOVES", 500)
    monkeypatch.setattr("walkmath.reviewstack.STACK_BYTES", 8 * 64 * 64)
    split = lost_sales_measures(demand, policies, 2)
    for got, want in zip(split, whole, strict=True):
        assert_same_measures(got, want, rel=1e-13)


def test_price_grows_with_the_policies_and_covers_each_closed_class_solve():
    # The one-policy path's GTH price (gth_work, from measured times) on each closed class actually found
    # by the one-policy state search must be covered by the stacked price, which is set before any chain
    # is built.
    demand = wm.StepLaw.poisson(mean=2.0)
    policies = [(9, 10), (8, 10), (5, 12), (0, 7)]
    one = stack_work("steady_state", demand, policies[:1], 2).units
    many = stack_work("steady_state", demand, policies, 2).units
    assert many > one > 0
    solves = 0
    for s, top in policies:
        chain = _pipeline(wm.PeriodicReview(demand, s, top, 2, "lost"), top)
        solves += gth_work(closed_class((chain.transitions + chain.shortage_transitions).tocsr()).size).units
    assert many >= solves


def test_many_orders_due_are_numbered_by_rank_when_their_digits_do_not_fit():
    # Lead time 30 with S = 12: 13^30 passes 62 bits, so the states are numbered by their lexicographic
    # rank (np.unique); orders are 0 or 10..12, so at most one is due and the chains stay small.
    demand = wm.StepLaw.poisson(mean=0.3)
    policies = [(2, 12), (1, 11), (0, 10)]
    for got, (s, top) in zip(lost_sales_measures(demand, policies, 30), policies, strict=True):
        assert_same_measures(got, wm.PeriodicReview(demand, s, top, 30, "lost").measures())
