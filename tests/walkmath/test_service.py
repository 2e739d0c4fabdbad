"""Expected shortage, fill rate, reorder point for a target and the normal rule (walkmath/service.py)."""

from __future__ import annotations

import math
from fractions import Fraction

import mpmath
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats

import walkmath as wm
from walkmath.service import (
    normal_loss,
    normal_loss_inverse,
    protection_demand,
    reorder_point_plan,
    reorder_point_plan_work,
    unfilled_share,
)

# -- the published worked example -------------------------------------------------------------------

# Poisson lead-time demand with mean 4: cumulative probabilities for 0..5 units, a 60 % service
# level needs a reorder point of 4 (Stevenson, Operations Management, Poisson service-level
# example, as quoted in the project's reorder-point plan), and 95 % needs 8 with P(D <= 7) = 0.948866
# and P(D <= 8) = 0.978637 (the same plan's figures). Each figure is also checked against scipy.stats.
WORKED_CUMULATIVE = [0.018, 0.092, 0.238, 0.433, 0.629, 0.785]


def test_worked_example_cumulative_table():
    plan = reorder_point_plan(wm.StepLaw.poisson(mean=4.0), lead_time=1, target=0.6)
    for units, published in enumerate(WORKED_CUMULATIVE):
        assert plan.service[units] == pytest.approx(published, abs=5e-4), units  # the book's 3 decimals
        assert plan.service[units] == pytest.approx(stats.poisson.cdf(units, 4.0), rel=1e-12), units  # scipy.stats


def test_worked_example_reorder_points():
    demand = wm.StepLaw.poisson(mean=4.0)
    plan_60 = reorder_point_plan(demand, lead_time=1, target=0.60)
    plan_95 = reorder_point_plan(demand, lead_time=1, target=0.95)
    assert plan_60.reorder_point == 4  # the book's answer
    assert plan_95.reorder_point == 8  # the plan's 95 % figure
    assert plan_95.service[7] == pytest.approx(0.948866, abs=5e-7)
    assert plan_95.service[8] == pytest.approx(0.978637, abs=5e-7)
    # The same facts from scipy.stats, so the check does not rest on the citation alone.
    assert stats.poisson.cdf(3, 4.0) < 0.6 <= stats.poisson.cdf(4, 4.0)
    assert stats.poisson.cdf(7, 4.0) == pytest.approx(0.948866, abs=5e-7)
    assert stats.poisson.cdf(8, 4.0) == pytest.approx(0.978637, abs=5e-7)
    assert plan_95.safety_stock == pytest.approx(4.0)


# -- lead-time demand against scipy.stats.poisson -------------------------------------------------


@pytest.mark.parametrize("lead_time, review_period, mean", [(5, 0, 10.0), (5, 1, 12.0), (0, 3, 6.0)])
def test_protection_demand_is_poisson(lead_time, review_period, mean):
    # Poisson(2) over L + R periods is Poisson(2 (L + R)) (Poisson closure; scipy.stats reference).
    # Counts up to 25: further out the per-period Poisson cut at 1e-24 (walkmath/steplaw.py) moves a
    # 3-period sum by more than 1e-10 relative (at 37 units, about 1e-7).
    law = protection_demand(wm.StepLaw.poisson(mean=2.0), lead_time, review_period)
    counts = np.arange(0, 26)
    np.testing.assert_allclose([law.prob(k) for k in counts], stats.poisson.pmf(counts, mean), rtol=1e-10)


def test_random_lead_time_is_shifted_by_the_review_period():
    demand = wm.StepLaw.poisson(mean=1.5)
    lead = wm.StepLaw.from_pmf({1: 0.25, 2: 0.75})
    shifted = protection_demand(demand, lead, review_period=2)
    direct = wm.lead_time_demand(demand, wm.StepLaw.from_pmf({3: 0.25, 4: 0.75}))
    np.testing.assert_allclose(shifted.probs, direct.probs, rtol=1e-14)


def test_expected_shortage_matches_the_poisson_loss_closed_form():
    # Poisson loss E[(D - r)+] = mu P(D >= r) - r P(D > r) (Hadley and Whitin 1963, Poisson lead-time
    # demand, from memory), evaluated with scipy.stats where it has no cancellation (r near the mean).
    demand = wm.StepLaw.poisson(mean=2.0)
    for point in range(0, 16):
        closed = 10.0 * stats.poisson.sf(point - 1, 10.0) - point * stats.poisson.sf(point, 10.0)
        assert wm.expected_shortage(demand, 5, point) == pytest.approx(closed, rel=1e-11), point


def test_expected_shortage_far_tail_keeps_relative_accuracy():
    # Reference: sum_{k > r} (k - r) e^-10 10^k / k! at 40 digits (mpmath); the closed form above would
    # return noise here, as 1 - cdf would.
    point = 45
    with mpmath.workdps(40):
        exact = mpmath.nsum(
            lambda k: (k - point) * mpmath.exp(-10) * mpmath.mpf(10) ** k / mpmath.factorial(k), [point + 1, mpmath.inf]
        )
    assert float(exact) < 1e-14
    assert wm.expected_shortage(wm.StepLaw.poisson(mean=2.0), 5, point) == pytest.approx(float(exact), rel=1e-9)


def test_negative_reorder_point_adds_certain_shortage():
    demand = wm.StepLaw.poisson(mean=2.0)
    # (D - r)+ = D - r when r < 0 <= D: B(-3) = E[D] + 3 exactly (definition).
    assert wm.expected_shortage(demand, 3, -3) == pytest.approx(6.0 + 3.0, rel=1e-13)


# -- standard normal loss -----------------------------------------------------------------------------


@pytest.mark.parametrize("z, table", [(0.0, 0.3989), (1.0, 0.0833), (2.0, 0.0085)])
def test_normal_loss_table_values(z, table):
    # Published unit normal loss tables, four decimals (from memory).
    assert normal_loss(z) == pytest.approx(table, abs=5e-5)


@pytest.mark.parametrize("z", [-3.0, -0.7, 0.0, 0.4, 1.0, 2.0, 2.49, 2.51, 3.3, 5.0, 8.0, 12.0, 20.0, 30.0])
def test_normal_loss_against_direct_integration(z):
    # G(z) = integral_z^inf (t - z) phi(t) dt, by mpmath quadrature at 40 digits (definition).
    with mpmath.workdps(40):
        exact = mpmath.quad(lambda t: (t - z) * mpmath.npdf(t), [z, z + 1, z + 4, mpmath.inf])
    assert normal_loss(z) == pytest.approx(float(exact), rel=1e-13)


@pytest.mark.parametrize("z", [float("nan"), float("inf"), "one", [0.0, float("nan")]])
def test_normal_loss_refuses_non_finite_input(z):
    with pytest.raises(ValueError, match="z must be a finite number"):
        normal_loss(z)


def test_normal_loss_symmetry_and_inverse():
    # G(z) - G(-z) = -z (definition: E[(Z - z)+] - E[(z - Z)+] = -z).
    for z in (0.3, 1.7, 4.0):
        assert normal_loss(-z) - normal_loss(z) == pytest.approx(z, rel=1e-14)
    for loss in (2.5, 0.3989, 0.05, 1e-6, 1e-40):
        assert normal_loss(normal_loss_inverse(loss)) == pytest.approx(loss, rel=1e-10)


# -- fill rate against Hadley and Whitin's formula, brute force in exact fractions -------------------

TABLE = {0: Fraction(1, 2), 1: Fraction(1, 4), 3: Fraction(1, 4)}


def fraction_power(pmf: dict[int, Fraction], times: int) -> dict[int, Fraction]:
    law = {0: Fraction(1)}
    for _ in range(times):
        nxt: dict[int, Fraction] = {}
        for a, p in law.items():
            for b, q in pmf.items():
                nxt[a + b] = nxt.get(a + b, Fraction(0)) + p * q
        law = nxt
    return law


def fraction_loss(law: dict[int, Fraction], x: int) -> Fraction:
    """B(x) = E[(D - x)+] by direct summation over the law."""
    return sum(((d - x) * p for d, p in law.items() if d > x), Fraction(0))


@pytest.mark.parametrize("point", [-2, 0, 1, 3, 5, 8])
@pytest.mark.parametrize("quantity", [1, 2, 5])
def test_fill_rate_matches_hadley_whitin_in_exact_fractions(point, quantity):
    # Fill rate 1 - (B(r) - B(r + Q)) / Q (Hadley and Whitin, Analysis of Inventory Systems, 1963),
    # with B by direct summation of (d - x) P(D = d) in exact rational arithmetic.
    law = fraction_power(TABLE, 3)
    exact = 1 - (fraction_loss(law, point) - fraction_loss(law, point + quantity)) / quantity
    demand = wm.StepLaw.from_pmf({k: float(v) for k, v in TABLE.items()})
    assert wm.fill_rate(demand, 3, point, quantity) == pytest.approx(float(exact), rel=1e-14, abs=1e-300)
    assert unfilled_share(demand, 3, point, quantity) == pytest.approx(float(1 - exact), rel=1e-13, abs=1e-300)
    assert wm.expected_shortage(demand, 3, point) == pytest.approx(float(fraction_loss(law, point)), rel=1e-14)


def test_fill_rate_reaches_one_beyond_the_largest_demand():
    demand = wm.StepLaw.from_pmf({k: float(v) for k, v in TABLE.items()})
    assert wm.fill_rate(demand, 3, 9, 4) == 1.0  # largest 3-period demand is 9
    assert unfilled_share(demand, 3, 9, 4) == 0.0


# -- reorder point for a target: minimality and monotonicity ---------------------------------------


@pytest.mark.parametrize("target", [0.3, 0.5, 0.9, 0.99, 0.999999, 1 - 1e-10])
def test_cycle_service_point_meets_the_target_and_one_less_does_not(target):
    plan = reorder_point_plan(wm.StepLaw.poisson(mean=2.5), lead_time=4, target=target)
    r = plan.reorder_point
    # scipy.stats.poisson(10) on the side that keeps the digits (sf above 1/2).
    if target > 0.5:
        assert stats.poisson.sf(r, 10.0) <= 1 - target < stats.poisson.sf(r - 1, 10.0)
    else:
        assert stats.poisson.cdf(r - 1, 10.0) < target <= stats.poisson.cdf(r, 10.0)


@pytest.mark.parametrize("target, quantity", [(0.5, 3), (0.9, 5), (0.99, 1), (0.999, 12), (0.9999999, 4)])
def test_fill_rate_point_meets_the_target_and_one_less_does_not(target, quantity):
    law = fraction_power(TABLE, 3)
    demand = wm.StepLaw.from_pmf({k: float(v) for k, v in TABLE.items()})
    plan = reorder_point_plan(demand, 3, target, measure="fill", order_quantity=quantity)
    r = plan.reorder_point

    def exact_fill(point):  # Hadley and Whitin's formula in exact fractions (as above)
        return 1 - (fraction_loss(law, point) - fraction_loss(law, point + quantity)) / quantity

    assert exact_fill(r) >= Fraction(target) > exact_fill(r - 1)


@settings(max_examples=40, deadline=None)
@given(st.floats(0.01, 0.99999), st.floats(0.01, 0.99999), st.integers(1, 30))
def test_reorder_point_grows_with_the_target_and_falls_with_the_quantity(first, second, quantity):
    demand = wm.StepLaw.negative_binomial(mean=1.5, variance=4.0)
    low, high = sorted((first, second))
    for measure in ("cycle", "fill"):
        a = reorder_point_plan(demand, 3, low, measure, order_quantity=quantity, review_period=1)
        b = reorder_point_plan(demand, 3, high, measure, order_quantity=quantity, review_period=1)
        assert b.reorder_point - a.reorder_point >= 0
        assert np.all(np.diff(a.service) >= 0) and np.all(np.diff(a.shortfall) <= 0)
        assert np.all((a.service >= 0) & (a.service <= 1) & (a.shortfall >= 0) & (a.shortfall <= 1))
    small = reorder_point_plan(demand, 3, high, "fill", order_quantity=quantity)
    large = reorder_point_plan(demand, 3, high, "fill", order_quantity=quantity + 5)
    assert small.reorder_point - large.reorder_point >= 0


# -- the normal rule beside the exact answer ------------------------------------------------------


def test_normal_rule_is_z_sigma_root_l():
    # Safety stock z sigma sqrt(L), reorder point = mean + safety stock rounded up (common practice).
    demand = wm.StepLaw.poisson(mean=0.4)  # a slow mover: 0.4 crates a day
    plan = reorder_point_plan(demand, lead_time=5, target=0.95)
    z = stats.norm.ppf(0.95)
    assert plan.normal_safety_stock == pytest.approx(z * math.sqrt(0.4) * math.sqrt(5), rel=1e-12)
    assert plan.normal_reorder_point == math.ceil(2.0 + z * math.sqrt(2.0))
    assert plan.normal_achieved == pytest.approx(stats.poisson.cdf(plan.normal_reorder_point, 2.0), rel=1e-12)
    assert plan.gap_units == plan.normal_reorder_point - plan.reorder_point
    assert plan.gap_service == pytest.approx(plan.normal_achieved - 0.95)


def test_normal_fill_rule_solves_the_loss_equation():
    # sigma G(z) = (1 - target) Q (common practice for a fill-rate target).
    demand = wm.StepLaw.poisson(mean=3.0)
    plan = reorder_point_plan(demand, lead_time=2, target=0.98, measure="fill", order_quantity=10)
    sigma = math.sqrt(6.0)
    assert sigma * normal_loss(plan.normal_z) == pytest.approx(0.02 * 10, rel=1e-10)
    assert plan.normal_achieved == pytest.approx(wm.fill_rate(demand, 2, plan.normal_reorder_point, 10), rel=1e-14)


def test_random_lead_time_normal_sigma_uses_the_compound_variance():
    # sigma_D^2 = E[L] var + var[L] mean^2 (Silver, Pyke and Peterson, Inventory Management, from memory).
    demand = wm.StepLaw.poisson(mean=2.0)
    lead = wm.StepLaw.from_pmf({2: 0.5, 4: 0.5})
    plan = reorder_point_plan(demand, lead, 0.9, review_period=1)
    assert plan.mean_demand == pytest.approx(4.0 * 2.0)
    assert plan.sigma_demand == pytest.approx(math.sqrt(4.0 * 2.0 + 1.0 * 4.0))


# -- bad input --------------------------------------------------------------------------------------


@pytest.mark.parametrize("target", [0, 1, -0.2, 1.5, float("nan"), "high"])
def test_target_outside_the_open_unit_interval_is_refused(target):
    with pytest.raises(ValueError, match="target must be a probability strictly between 0 and 1"):
        reorder_point_plan(wm.StepLaw.poisson(mean=2.0), 2, target)


def test_other_bad_inputs_name_the_parameter():
    demand = wm.StepLaw.poisson(mean=2.0)
    with pytest.raises(ValueError, match="measure must be one of 'cycle', 'fill'"):
        reorder_point_plan(demand, 2, 0.9, measure="ready")
    with pytest.raises(ValueError, match="order_quantity must be a whole number from 1"):
        reorder_point_plan(demand, 2, 0.9, measure="fill")
    with pytest.raises(ValueError, match="order_quantity must be a whole number from 1"):
        wm.fill_rate(demand, 2, 3, 0)
    with pytest.raises(ValueError, match="lead_time \\+ review_period must be at least 1 period"):
        wm.expected_shortage(demand, 0, 3)
    with pytest.raises(ValueError, match="review_period must be a whole number from 0 to"):
        wm.expected_shortage(demand, 2, 3, review_period=-1)
    with pytest.raises(ValueError, match="reorder_point must be a whole number"):
        wm.expected_shortage(demand, 2, 2.5)
    with pytest.raises(ValueError, match="demand must be a StepLaw"):
        wm.expected_shortage({0: 1.0}, 2, 3)
    with pytest.raises(ValueError, match="protection interval x largest demand"):
        wm.expected_shortage(demand, 10**6, 3)


# -- the plan's expected shortage curve and its price ----------------------------------------------------


@pytest.mark.parametrize("measure, quantity", [("cycle", None), ("fill", 6)])
def test_plan_expected_shortage_curve_is_the_loss_at_every_point(measure, quantity):
    # Poisson loss E[(D - r)+] = mu P(D >= r) - r P(D > r) (Hadley and Whitin 1963, from memory) with
    # scipy.stats near the mean, where it has no cancellation; below 0 the shortage is D - r (definition).
    demand = wm.StepLaw.poisson(mean=2.0)
    plan = reorder_point_plan(demand, 3, 0.9, measure=measure, order_quantity=quantity)
    for point, short in zip(plan.points, plan.expected_short, strict=True):
        if point < 0:
            assert short == pytest.approx(6.0 - point, rel=1e-13)
        elif point <= 14:
            closed = 6.0 * stats.poisson.sf(point - 1, 6.0) - point * stats.poisson.sf(point, 6.0)
            assert short == pytest.approx(closed, rel=1e-11), point
    assert np.all(plan.expected_short >= 0) and np.all(np.diff(plan.expected_short) <= 0)
    far = plan.points.size - 40  # deep in the tail: the separate survival sum of expected_shortage agrees
    assert plan.expected_short[far] == pytest.approx(wm.expected_shortage(demand, 3, int(plan.points[far])), rel=1e-12)


def _checked_units(monkeypatch, call) -> int:
    """Units of every Work the call checks against the cap (as the engine prices it on the way)."""
    seen = []
    real = wm.Work.check

    def record(work, cap=wm.WORK_CAP):
        seen.append(work.units)
        return real(work, cap)

    monkeypatch.setattr(wm.Work, "check", record)
    call()
    monkeypatch.undo()
    return sum(seen)


@pytest.mark.parametrize(
    "lead_time, review_period, measure, quantity",
    [(4, 0, "cycle", None), (3, 2, "fill", 25), ("table", 1, "cycle", None), ("table", 0, "fill", 40)],
)
def test_plan_price_covers_every_priced_step_of_the_plan(monkeypatch, lead_time, review_period, measure, quantity):
    demand = wm.StepLaw.negative_binomial(mean=3.0, variance=7.0)
    if lead_time == "table":
        lead_time = wm.StepLaw.from_pmf({2: 0.5, 5: 0.3, 9: 0.2})
    priced = reorder_point_plan_work(demand, lead_time, measure, quantity, review_period).units
    spent = _checked_units(
        monkeypatch, lambda: reorder_point_plan(demand, lead_time, 0.95, measure, quantity, review_period)
    )
    assert spent > 0 and priced >= spent


def test_plan_price_refuses_what_the_plan_refuses():
    demand = wm.StepLaw.poisson(mean=2.0)
    with pytest.raises(ValueError, match="order_quantity must be a whole number from 1"):
        reorder_point_plan_work(demand, 2, "fill")
    with pytest.raises(ValueError, match="lead_time \\+ review_period must be at least 1 period"):
        reorder_point_plan_work(demand, 0)


def test_plan_keeps_the_protection_law_its_curves_come_from():
    demand = wm.StepLaw.negative_binomial(mean=0.3, variance=1.5)
    plan = reorder_point_plan(demand, 4, 0.99, review_period=1)
    direct = protection_demand(demand, 4, 1)
    np.testing.assert_array_equal(plan.protection.probs, direct.probs)
    np.testing.assert_array_equal(plan.protection.levels, direct.levels)


@pytest.mark.parametrize("measure, quantity", [("cycle", None), ("fill", 10), ("fill", 1)])
@pytest.mark.parametrize("target", [0.6, 0.95, 0.999])
def test_normal_reorder_point_alone_is_the_plan_s_normal_rule(measure, quantity, target):
    # The same common-practice rule read two ways: alone (moments only) and inside the full plan.
    demand = wm.StepLaw.negative_binomial(mean=0.3, variance=1.5)
    alone = wm.normal_reorder_point(demand, 4, target, measure, quantity, review_period=2)
    plan = wm.reorder_point_plan(demand, 4, target, measure, quantity, review_period=2)
    assert alone == plan.normal_reorder_point
