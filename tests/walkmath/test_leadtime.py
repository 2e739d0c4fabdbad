"""Lead-time demand, reorder point and safety stock (walkmath/leadtime.py)."""

from __future__ import annotations

import math
from fractions import Fraction

import mpmath
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats

from walkmath import StepLaw
from walkmath.leadtime import lead_time_demand, reorder_point, safety_stock


def exact_poisson_pmf(mean: int, count: int) -> float:
    """e^-mean mean^count / count! at 40 digits."""
    with mpmath.workdps(40):
        return float(mpmath.exp(-mean) * mpmath.mpf(mean) ** count / mpmath.factorial(count))


def fraction_convolve(left: list[Fraction], right: list[Fraction]) -> list[Fraction]:
    out = [Fraction(0)] * (len(left) + len(right) - 1)
    for i, a in enumerate(left):
        for j, b in enumerate(right):
            out[i + j] += a * b
    return out


# -- fixed lead time ---------------------------------------------------------------


def test_poisson_demand_over_fixed_lead_time_is_poisson_in_the_bulk():
    # A sum of 50 independent Poisson(1) counts is Poisson(50) (Feller, vol. 1, ch. XI: Poisson closure).
    law = lead_time_demand(StepLaw.poisson(mean=1.0), lead_time=50)
    counts = np.arange(20, 91)
    expected = stats.poisson.pmf(counts, 50)
    got = np.array([law.prob(k) for k in counts])
    np.testing.assert_allclose(got, expected, rtol=1e-10)
    assert law.levels[0] == 0


def test_poisson_demand_deep_tail_keeps_relative_accuracy():
    # Poisson(50) at 150: e^-50 50^150 / 150! = 2.3653e-30 (exact value by mpmath).
    exact = exact_poisson_pmf(50, 150)
    assert exact == pytest.approx(2.3653e-30, rel=1e-4)
    law = lead_time_demand(StepLaw.poisson(mean=1.0), lead_time=50)
    assert law.prob(150) == pytest.approx(exact, rel=1e-8)
    assert law.sf(149) > law.prob(150)  # survival sum, a sum of non-negative terms, holds the tail


def test_fixed_lead_time_matches_exact_fractions():
    # Brute force: L-fold convolution in exact rational arithmetic.
    pmf = [Fraction(1, 5), Fraction(0), Fraction(1, 2), Fraction(3, 10)]
    exact = [Fraction(1)]
    for _ in range(7):
        exact = fraction_convolve(exact, pmf)
    law = lead_time_demand(StepLaw.from_pmf({k: float(p) for k, p in enumerate(pmf)}), lead_time=7)
    assert law.probs.size == len(exact)
    nonzero = [k for k, p in enumerate(exact) if p]
    np.testing.assert_allclose(law.probs[nonzero], [float(exact[k]) for k in nonzero], rtol=1e-13)


def test_demand_starting_above_zero_is_padded_from_zero():
    law = lead_time_demand(StepLaw.from_pmf({2: 0.5, 3: 0.5}), lead_time=3)
    np.testing.assert_array_equal(law.levels, np.arange(10))
    np.testing.assert_allclose(law.probs[:6], 0.0)
    np.testing.assert_allclose(law.probs[6:], [1 / 8, 3 / 8, 3 / 8, 1 / 8], rtol=1e-15)


# -- random lead time --------------------------------------------------------------


def exact_small_compound() -> list[Fraction]:
    """sum_L P(L) demand^{*L} in exact rational arithmetic, demand {0: 1/2, 1: 1/3, 2: 1/6}, L in {1, 2, 3}."""
    demand = [Fraction(1, 2), Fraction(1, 3), Fraction(1, 6)]
    lead = {1: Fraction(1, 4), 2: Fraction(1, 2), 3: Fraction(1, 4)}
    exact = [Fraction(0)] * 7
    power = [Fraction(1)]
    for periods in range(1, 4):
        power = fraction_convolve(power, demand)
        for k, p in enumerate(power):
            exact[k] += lead[periods] * p
    return exact


def test_random_lead_time_matches_exact_fractions():
    # Brute force: sum_L P(L) demand^{*L} in exact rational arithmetic.
    exact = exact_small_compound()
    law = lead_time_demand(
        StepLaw.from_pmf({0: 1 / 2, 1: 1 / 3, 2: 1 / 6}),
        lead_time=StepLaw.from_pmf({1: 0.25, 2: 0.5, 3: 0.25}),
    )
    np.testing.assert_array_equal(law.levels, np.arange(7))
    np.testing.assert_allclose(law.probs, [float(p) for p in exact], rtol=1e-14)


def geometric_lead_time(stay: float, longest: int) -> tuple[StepLaw, np.ndarray]:
    """P(L = k) proportional to (1 - stay) stay^(k - 1), k = 1..longest."""
    periods = np.arange(1, longest + 1)
    weights = (1 - stay) * stay ** (periods - 1.0)
    weights /= math.fsum(weights)
    return StepLaw.from_pmf(dict(zip(periods.tolist(), weights.tolist(), strict=True))), weights


def test_poisson_demand_with_geometric_lead_time_is_a_poisson_mixture():
    # Given L = k the demand is Poisson(2k) (Poisson closure, Feller vol. 1, ch. XI), so
    # P(D = d) = sum_k P(L = k) e^{-2k} (2k)^d / d!, evaluated here at 40 digits.
    lead, weights = geometric_lead_time(stay=0.5, longest=60)  # dropped geometric tail 2^-60
    law = lead_time_demand(StepLaw.poisson(mean=2.0), lead_time=lead)
    for count in (0, 1, 5, 20, 60, 120):
        with mpmath.workdps(40):
            exact = mpmath.fsum(
                mpmath.mpf(float(w)) * mpmath.exp(-2 * k) * mpmath.mpf(2 * k) ** count / mpmath.factorial(count)
                for k, w in enumerate(weights, start=1)
            )
        assert law.prob(count) == pytest.approx(float(exact), rel=1e-9), count


def test_geometric_lead_time_zero_demand_closed_form():
    # P(D = 0) = E[e^{-lambda L}] = (1 - q) e^{-lambda} / (1 - q e^{-lambda}): the geometric
    # generating function at e^{-lambda} (Feller vol. 1, ch. XI); the cut at 60 periods moves it < 1e-18.
    rate, stay = 2.0, 0.5
    lead, _ = geometric_lead_time(stay=stay, longest=60)
    law = lead_time_demand(StepLaw.poisson(mean=rate), lead_time=lead)
    closed = (1 - stay) * math.exp(-rate) / (1 - stay * math.exp(-rate))
    assert law.prob(0) == pytest.approx(closed, rel=1e-12)


def test_random_lead_time_mean_and_variance():
    # Compound sum: E[D] = E[L] E[d], Var[D] = E[L] Var[d] + Var[L] E[d]^2 (law of total
    # variance; the lead-time demand variance of Silver, Pyke & Peterson, Inventory Management, from memory).
    demand = StepLaw.negative_binomial(mean=3.0, variance=7.0)
    lead = StepLaw.from_pmf({2: 0.2, 3: 0.5, 5: 0.3})
    law = lead_time_demand(demand, lead)
    mean = law.mean
    variance = math.fsum((law.levels - mean) ** 2 * law.probs)
    assert mean == pytest.approx(lead.mean * demand.mean, rel=1e-12)
    assert variance == pytest.approx(lead.mean * demand.variance + lead.variance * demand.mean**2, rel=1e-10)


def test_degenerate_lead_time_law_equals_fixed_lead_time():
    demand = StepLaw.poisson(mean=1.5)
    fixed = lead_time_demand(demand, 4)
    random = lead_time_demand(demand, StepLaw.fixed(4))
    np.testing.assert_allclose(random.probs, fixed.probs, rtol=1e-13)


@settings(max_examples=40, deadline=None)
@given(
    demand=st.lists(st.floats(0.0, 1.0), min_size=1, max_size=5).filter(lambda w: sum(w) > 0.1),
    lead=st.lists(st.floats(0.0, 1.0), min_size=1, max_size=6).filter(lambda w: sum(w) > 0.1),
)
def test_lead_time_demand_is_a_probability_law(demand, lead):
    demand_law = StepLaw.from_pmf({k: w / sum(demand) for k, w in enumerate(demand)})
    lead_law = StepLaw.from_pmf({k + 1: w / sum(lead) for k, w in enumerate(lead)})
    law = lead_time_demand(demand_law, lead_law)
    assert np.all(law.probs >= 0) and np.all(law.probs <= 1)
    assert math.fsum(law.probs) == pytest.approx(1.0, abs=1e-12)
    assert law.mean == pytest.approx(lead_law.mean * demand_law.mean, rel=1e-9, abs=1e-12)


# -- reorder point and safety stock --------------------------------------------------


def scipy_search(mean: float, service: float) -> int:
    """Smallest r with P(Poisson(mean) <= r) >= service by scanning scipy's cdf (sf near 1)."""
    r = 0
    while not (stats.poisson.sf(r, mean) <= 1 - service if service > 0.5 else stats.poisson.cdf(r, mean) >= service):
        r += 1
    return r


def test_reorder_point_poisson_95_percent():
    demand = StepLaw.poisson(mean=20.0)
    point = reorder_point(demand, lead_time=1, service=0.95)
    assert point == scipy_search(20.0, 0.95)
    assert point == 28  # Poisson(20) 95th percentile, from memory (cdf(27) = 0.948, cdf(28) = 0.966)
    assert safety_stock(demand, lead_time=1, service=0.95) == pytest.approx(8.0)


def test_reorder_point_at_one_in_a_million_shortfall():
    # 1 - cdf would lose digits here; both sides use survival sums.
    demand = StepLaw.poisson(mean=20.0)
    point = reorder_point(demand, lead_time=1, service=0.999999)
    assert point == scipy_search(20.0, 0.999999)
    assert stats.poisson.sf(point, 20.0) <= 1e-6 < stats.poisson.sf(point - 1, 20.0)


@pytest.mark.parametrize("service", [0.05, 0.5, 0.9, 0.99, 0.9999, 1 - 1e-9])
def test_reorder_point_over_several_periods_matches_poisson(service):
    # Poisson(2) over 10 periods is Poisson(20) (Poisson closure).
    assert reorder_point(StepLaw.poisson(mean=2.0), lead_time=10, service=service) == scipy_search(20.0, service)


def test_reorder_point_with_random_lead_time_matches_exact_fractions():
    exact = exact_small_compound()
    demand_law = StepLaw.from_pmf({0: 1 / 2, 1: 1 / 3, 2: 1 / 6})
    lead_law = StepLaw.from_pmf({1: 0.25, 2: 0.5, 3: 0.25})
    for service in (0.3, 0.6, 0.9, 0.99, 0.9999):
        cumulative = [sum(exact[: r + 1]) for r in range(7)]
        expected = next(r for r, c in enumerate(cumulative) if c >= Fraction(service))
        assert reorder_point(demand_law, lead_law, service) == expected, service


def test_safety_stock_with_random_lead_time_uses_mean_lead_time():
    demand = StepLaw.poisson(mean=4.0)
    lead = StepLaw.from_pmf({2: 0.5, 4: 0.5})
    point = reorder_point(demand, lead, 0.9)
    assert safety_stock(demand, lead, 0.9) == pytest.approx(point - 3 * 4.0)


@settings(max_examples=30, deadline=None)
@given(st.floats(0.001, 0.999), st.floats(0.001, 0.999))
def test_reorder_point_grows_with_service(first, second):
    demand = StepLaw.negative_binomial(mean=3.0, variance=9.0)
    low, high = sorted((first, second))
    assert reorder_point(demand, 3, low) <= reorder_point(demand, 3, high)


# -- bad inputs ------------------------------------------------------------------------


@pytest.mark.parametrize("service", [0, 1, 1.5, -0.1, float("nan"), "high", None])
def test_service_outside_open_unit_interval_is_refused(service):
    with pytest.raises(ValueError, match="service must be a probability strictly between 0 and 1"):
        reorder_point(StepLaw.poisson(mean=2.0), 3, service)


def test_demand_must_be_a_count_law():
    with pytest.raises(ValueError, match="demand must be a count law"):
        lead_time_demand(StepLaw.nearest(up=0.2, down=0.3), 3)
    with pytest.raises(ValueError, match="demand must be a StepLaw"):
        lead_time_demand({0: 0.5, 1: 0.5}, 3)


@pytest.mark.parametrize("lead_time", [0, -2, 2.5, True, "5"])
def test_fixed_lead_time_must_be_a_positive_whole_number(lead_time):
    with pytest.raises(ValueError, match="lead_time"):
        lead_time_demand(StepLaw.poisson(mean=2.0), lead_time)


def test_random_lead_time_must_be_at_least_one_period():
    with pytest.raises(ValueError, match="lead_time must be at least 1 period"):
        lead_time_demand(StepLaw.poisson(mean=2.0), StepLaw.from_pmf({0: 0.2, 1: 0.8}))


def test_oversized_lead_time_support_is_refused():
    with pytest.raises(ValueError, match="lead_time x largest demand"):
        lead_time_demand(StepLaw.poisson(mean=2.0), 10**6)
