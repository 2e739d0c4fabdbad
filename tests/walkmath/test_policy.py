"""Periodic review (s, S): long-run measures, stock law and stock-out risk (walkmath/policy.py)."""

from __future__ import annotations

import math
from fractions import Fraction

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats

import walkmath as wm
from tests.walkmath.exact import periodic_review_long_run, periodic_review_risk
from walkmath.policy import PeriodicReview, _chain_steady_state, _pipeline, position_law

# Bread crates asked for in a day at the co-operative's harbour shop: often none, sometimes a
# delivery round of three.
CRATES = {0: Fraction(1, 2), 1: Fraction(1, 4), 3: Fraction(1, 4)}
CRATES_LAW = wm.StepLaw.from_pmf({k: float(v) for k, v in CRATES.items()})

# A crate round of one or two, never none: the demand law starts above 0.
ROUNDS = {1: Fraction(1, 3), 2: Fraction(2, 3)}
ROUNDS_LAW = wm.StepLaw.from_pmf({k: float(v) for k, v in ROUNDS.items()})

CASES = [
    (1, 4, 0, "lost"),
    (1, 4, 0, "backorder"),
    (3, 4, 0, "lost"),  # order-up-to policy: s = S - 1
    (2, 5, 1, "lost"),
    (2, 5, 1, "backorder"),
    (2, 5, 2, "backorder"),
    (1, 4, 2, "lost"),
    (0, 6, 2, "lost"),
    (4, 5, 3, "backorder"),
]


# -- long run against exact rational results ----------------------------------------------------------


@pytest.mark.parametrize("s, big_s, lead_time, unmet", CASES)
@pytest.mark.parametrize("pmf, law", [(CRATES, CRATES_LAW), (ROUNDS, ROUNDS_LAW)], ids=["crates", "rounds"])
def test_long_run_measures_match_the_exact_fraction_chain(s, big_s, lead_time, unmet, pmf, law):
    # Reference: tests/walkmath/exact.py, the rules read literally and the chain solved in fractions.
    exact = periodic_review_long_run(pmf, s, big_s, lead_time, unmet)
    measures = PeriodicReview(law, s, big_s, lead_time, unmet).measures()
    assert measures.stockout_probability == pytest.approx(float(exact["stockout"]), rel=1e-13)
    assert measures.in_stock_probability == pytest.approx(float(1 - exact["stockout"]), rel=1e-13)
    assert measures.fill_rate == pytest.approx(float(exact["fill_rate"]), rel=1e-13)
    assert measures.unfilled_share == pytest.approx(float(1 - exact["fill_rate"]), rel=1e-13)
    assert measures.mean_on_hand == pytest.approx(float(exact["on_hand"]), rel=1e-13)
    assert measures.mean_backorders == pytest.approx(float(exact["backorders"]), rel=1e-13, abs=0)
    assert measures.mean_short == pytest.approx(float(exact["short"]), rel=1e-13)
    assert measures.orders_per_period == pytest.approx(float(exact["ordered"]), rel=1e-13)


@pytest.mark.parametrize("s, big_s, lead_time, unmet", CASES)
@pytest.mark.parametrize("pmf, demand", [(CRATES, CRATES_LAW), (ROUNDS, ROUNDS_LAW)], ids=["crates", "rounds"])
def test_steady_state_is_the_exact_end_of_period_stock_law(s, big_s, lead_time, unmet, pmf, demand):
    exact = periodic_review_long_run(pmf, s, big_s, lead_time, unmet)["end_law"]
    law = PeriodicReview(demand, s, big_s, lead_time, unmet).steady_state()
    for level, p in exact.items():
        assert law.prob(level) == pytest.approx(float(p), rel=1e-13), level
    assert {int(v) for v in law.levels[law.probs > 0]} == {k for k, p in exact.items() if p > 0}
    assert math.fsum(law.probs) == pytest.approx(1.0, abs=1e-14)
    assert PeriodicReview(demand, s, big_s, lead_time, unmet).mean_on_hand() == pytest.approx(
        math.fsum(np.maximum(law.levels, 0) * law.probs), rel=1e-13
    )


def test_lost_sales_chain_by_gth_agrees_with_the_renewal_form():
    # Two methods in the module: the (on hand, orders due) chain by GTH and the renewal product form,
    # which coincide for lost sales without a lead time.
    demand = wm.StepLaw.negative_binomial(mean=2.0, variance=5.0)
    policy = PeriodicReview(demand, 3, 11, 0, "lost")
    chain = _pipeline(policy, policy.order_up_to)
    weights = _chain_steady_state(chain)
    by_chain = np.bincount(policy.order_up_to - chain.available, weights=weights)[: 11 - 3]
    np.testing.assert_allclose(by_chain, position_law(demand, 8), rtol=1e-12)


# -- published base-stock facts, against scipy.stats.poisson -----------------------------------------


@pytest.mark.parametrize("big_s, lead_time", [(6, 0), (9, 2), (14, 4)])
def test_base_stock_with_backorders_matches_poisson_sums(big_s, lead_time):
    # Order-up-to (base-stock) policy with backorders: end-of-period net stock is S - D over L + 1
    # periods, so E[on hand] = E[(S - D)+] and E[backorders] = E[(D - S)+], D ~ Poisson((L + 1) mu)
    # (Zipkin, Foundations of Inventory Management, 2000, base-stock chapter; from memory).
    mu = 1.5
    policy = PeriodicReview(wm.StepLaw.poisson(mean=mu), big_s - 1, big_s, lead_time, "backorder")
    total = stats.poisson((lead_time + 1) * mu)
    counts = np.arange(0, 200)
    on_hand = math.fsum(np.maximum(big_s - counts, 0) * total.pmf(counts))
    backorders = math.fsum(np.maximum(counts - big_s, 0) * total.pmf(counts))
    assert policy.mean_on_hand() == pytest.approx(on_hand, rel=1e-12)
    assert policy.measures().mean_backorders == pytest.approx(backorders, rel=1e-12)
    assert policy.orders_per_period() == pytest.approx(1 - math.exp(-mu), rel=1e-12)  # P(D > 0) (definition)
    law = policy.steady_state()
    np.testing.assert_allclose([law.prob(big_s - k) for k in range(0, 25)], total.pmf(np.arange(0, 25)), rtol=1e-12)


# -- finite horizon stock-out risk ------------------------------------------------------------------------


@pytest.mark.parametrize("s, big_s, lead_time, unmet", CASES)
@pytest.mark.parametrize("start", [0, 2, 7])
def test_stockout_risk_matches_the_exact_fraction_walk(s, big_s, lead_time, unmet, start):
    horizon = 9
    exact = periodic_review_risk(CRATES, s, big_s, lead_time, start, horizon)
    risk = PeriodicReview(CRATES_LAW, s, big_s, lead_time, unmet).stockout_risk(horizon, start=start)
    np.testing.assert_allclose(risk.stockout, [float(p) for p in exact], rtol=1e-13, atol=0)
    np.testing.assert_allclose(risk.in_stock, [float(1 - p) for p in exact], rtol=1e-13, atol=0)
    assert np.all(np.diff(risk.stockout) >= 0) and np.all(np.diff(risk.in_stock) <= 0)


# -- a seeded Monte Carlo run -------------------------------------------------------------------------------


def simulate(pmf, s, big_s, lead_time, unmet, paths, periods, rng):
    """Vectorised simulation of the rules: returns the last period's facts and any-stock-out flags."""
    values = np.array(list(pmf))
    weights = np.array([float(p) for p in pmf.values()])
    stock = np.full(paths, big_s)
    due = np.zeros((paths, lead_time), dtype=int)  # due[:, k] arrives k periods from now
    any_stockout = np.zeros(paths, dtype=bool)
    for _ in range(periods):
        if lead_time:
            stock = stock + due[:, 0]
            due = np.roll(due, -1, axis=1)
            due[:, -1] = 0
        position = stock + due.sum(axis=1)
        order = np.where(position <= s, big_s - position, 0)
        if lead_time:
            due[:, -1] += order
        else:
            stock = stock + order
        demand = rng.choice(values, size=paths, p=weights)
        available = np.maximum(stock, 0)
        stockout = demand > available
        any_stockout |= stockout
        stock = stock - demand
        if unmet == "lost":
            stock = np.maximum(stock, 0)
    return stockout, np.maximum(stock, 0), any_stockout


@pytest.mark.parametrize("s, big_s, lead_time, unmet", [(2, 7, 1, "lost"), (3, 9, 3, "backorder"), (1, 6, 2, "lost")])
def test_long_run_within_a_seeded_monte_carlo_interval(s, big_s, lead_time, unmet):
    # 40,000 independent paths run 80 periods from S (far past the chain's mixing); the last period's
    # stock-out indicator is a Bernoulli sample of the long-run probability. Wilson 99.9 % interval.
    rng = np.random.default_rng(20261202)
    stockout, on_hand, _ = simulate(CRATES, s, big_s, lead_time, unmet, 40_000, 80, rng)
    measures = PeriodicReview(CRATES_LAW, s, big_s, lead_time, unmet).measures()
    low, high = wm.wilson_interval(int(stockout.sum()), stockout.size, confidence=0.999)
    assert low <= measures.stockout_probability <= high
    spread = 3.3 * on_hand.std() / math.sqrt(on_hand.size)  # 99.9 % normal interval for the mean
    assert abs(on_hand.mean() - measures.mean_on_hand) <= spread


def test_stockout_risk_within_a_seeded_monte_carlo_interval():
    rng = np.random.default_rng(7)
    horizon = 12
    _, _, any_stockout = simulate(CRATES, 2, 8, 2, "lost", 40_000, horizon, rng)
    risk = PeriodicReview(CRATES_LAW, 2, 8, 2, "lost").stockout_risk(horizon).stockout[-1]
    low, high = wm.wilson_interval(int(any_stockout.sum()), any_stockout.size, confidence=0.999)
    assert low <= risk <= high


# -- properties --------------------------------------------------------------------------------------------


@settings(max_examples=40, deadline=None)
@given(
    weights=st.lists(st.integers(0, 9), min_size=2, max_size=5).filter(lambda w: sum(w[1:]) > 0),
    big_s=st.integers(1, 9),
    gap=st.integers(1, 9),
    lead_time=st.integers(0, 2),
    unmet=st.sampled_from(["lost", "backorder"]),
)
def test_measures_are_probabilities_with_complements_from_both_sides(weights, big_s, gap, lead_time, unmet):
    demand = wm.StepLaw.from_pmf({k: w / sum(weights) for k, w in enumerate(weights) if w})
    policy = PeriodicReview(demand, max(big_s - gap, 0), big_s, lead_time, unmet)
    m = policy.measures()
    for value in (m.stockout_probability, m.in_stock_probability, m.fill_rate, m.unfilled_share, m.orders_per_period):
        assert 0.0 <= value <= 1.0
    assert m.stockout_probability + m.in_stock_probability == pytest.approx(1.0, abs=1e-13)
    assert m.fill_rate + m.unfilled_share == pytest.approx(1.0, abs=1e-13)
    assert m.mean_on_hand >= 0 and m.mean_backorders >= 0 and m.mean_short >= 0
    law = policy.steady_state()
    assert np.all(law.probs >= 0) and math.fsum(law.probs) == pytest.approx(1.0, abs=1e-13)
    risk = policy.stockout_risk(6, start=big_s)
    assert np.all(np.diff(risk.stockout) >= 0)


def test_rare_stockout_keeps_its_digits():
    # With S far above the demand over L + 1 periods the stock-out probability is tiny; it comes from
    # its own side (never 1 - in stock). Reference: backorders, base stock, Poisson demand, so
    # P(stock-out) = sum_n P(N = n) P(D > n+), N = S - Poisson(L mu), in scipy.stats sums.
    mu, big_s, lead_time = 1.0, 30, 2
    policy = PeriodicReview(wm.StepLaw.poisson(mean=mu), big_s - 1, big_s, lead_time, "backorder")
    drop = stats.poisson.pmf(np.arange(0, 120), lead_time * mu)
    available = np.maximum(big_s - np.arange(0, 120), 0)
    reference = math.fsum(drop * stats.poisson.sf(available, mu))
    assert reference < 1e-14
    assert policy.stockout_probability() == pytest.approx(reference, rel=1e-9)


# -- bad input ------------------------------------------------------------------------------------------------


def test_bad_parameters_name_the_parameter_and_range():
    demand = wm.StepLaw.poisson(mean=2.0)
    cases = [
        (dict(reorder_level=5, order_up_to=5), "reorder_level must be a whole number from 0 to 4"),
        (dict(reorder_level=-1, order_up_to=5), "reorder_level must be a whole number from 0 to 4"),
        (dict(reorder_level=0, order_up_to=0), "order_up_to must be a whole number from 1"),
        (dict(reorder_level=1, order_up_to=5, lead_time=-1), "lead_time must be a whole number from 0"),
        (dict(reorder_level=1, order_up_to=5, unmet="spill"), "unmet must be one of 'lost', 'backorder'"),
    ]
    for kwargs, message in cases:
        with pytest.raises(ValueError, match=message):
            PeriodicReview(demand=demand, **kwargs)
    with pytest.raises(ValueError, match="demand must be a count law"):
        PeriodicReview(wm.StepLaw.nearest(up=0.2, down=0.3), 1, 5)
    with pytest.raises(ValueError, match="demand must have a positive probability"):
        PeriodicReview(wm.StepLaw.fixed(0), 1, 5)
    with pytest.raises(ValueError, match="horizon must be a whole number"):
        PeriodicReview(demand, 1, 5).stockout_risk(-1)
    with pytest.raises(ValueError, match="start must be a whole number"):
        PeriodicReview(demand, 1, 5).stockout_risk(3, start=-2)


def test_oversized_pipeline_chain_is_refused_before_any_work():
    policy = PeriodicReview(wm.StepLaw.poisson(mean=20.0), 100, 400, lead_time=4, unmet="lost")
    with pytest.raises(wm.ComputeTooLarge, match="lower the order-up-to level"):
        policy.steady_state()
    with pytest.raises(wm.ComputeTooLarge):
        policy.stockout_risk(1000)


# A rare big order among small ones: a stock-out needs two of them close together.
RARE = {0: Fraction(9, 10), 1: Fraction(1, 10) - Fraction(1, 10**7), 4: Fraction(1, 10**7)}
RARE_LAW = wm.StepLaw.from_pmf({k: float(v) for k, v in RARE.items()})


@pytest.mark.parametrize("s, big_s, lead_time, unmet", [(2, 5, 0, "lost"), (4, 8, 1, "lost"), (5, 9, 2, "backorder")])
def test_rare_stockout_probability_keeps_relative_accuracy(s, big_s, lead_time, unmet):
    # Exact fraction chain (tests/walkmath/exact.py): the stock-out probability is below 1e-6 (far
    # below with a lead time), where 1 - P(in stock) would keep few or no digits.
    exact = periodic_review_long_run(RARE, s, big_s, lead_time, unmet)
    measures = PeriodicReview(RARE_LAW, s, big_s, lead_time, unmet).measures()
    assert 0 < exact["stockout"] < Fraction(1, 10**6)
    assert measures.stockout_probability == pytest.approx(float(exact["stockout"]), rel=1e-9)
    assert measures.unfilled_share == pytest.approx(float(1 - exact["fill_rate"]), rel=1e-9)
