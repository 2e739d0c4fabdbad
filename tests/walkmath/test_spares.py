"""Spares pool against the two-state model, exact rational solves and mpmath (matrix exponential, linear solves)."""

import math
from fractions import Fraction

import mpmath
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import optimize

from tests.walkmath.exact import mp_generator
from walkmath.spares import SparesPool


def pool_rates(units, spares, failure_rate, repair_rate, crews):
    """Failure and repair rate with f failed, spelled out from the design notes (section 3)."""
    rows = []
    for failed in range(units + spares + 1):
        operating = min(units, units + spares - failed)  # cold spares do not fail while waiting
        rows.append((failure_rate * operating, repair_rate * min(failed, crews)))
    return rows


def solve(matrix, rhs):
    """Gauss–Jordan elimination in exact rational arithmetic."""
    size = len(rhs)
    rows = [list(row) + [value] for row, value in zip(matrix, rhs, strict=True)]
    for col in range(size):
        pivot = next(r for r in range(col, size) if rows[r][col] != 0)
        rows[col], rows[pivot] = rows[pivot], rows[col]
        for r in range(size):
            if r != col and rows[r][col] != 0:
                factor = rows[r][col] / rows[col][col]
                rows[r] = [a - factor * b for a, b in zip(rows[r], rows[col], strict=True)]
    return [rows[r][size] / rows[r][r] for r in range(size)]


def exact_availability_and_mttf(units, spares, failure_rate, repair_rate, crews):
    rates = pool_rates(units, spares, Fraction(failure_rate), Fraction(repair_rate), crews)
    size = len(rates)
    # steady state: pi Q = 0 with one balance equation replaced by sum pi = 1
    generator = [[Fraction(0)] * size for _ in range(size)]
    for f, (fail, repair) in enumerate(rates):
        if f + 1 < size:
            generator[f][f + 1] = fail
        if f > 0:
            generator[f][f - 1] = repair
        generator[f][f] = -(fail + repair) if f + 1 < size else -repair
    equations = [[generator[i][j] for i in range(size)] for j in range(size - 1)] + [[Fraction(1)] * size]
    law = solve(equations, [Fraction(0)] * (size - 1) + [Fraction(1)])
    # mean time to the first shortage: -Q h = 1 on the states 0..spares (the shortage level absorbs)
    good = spares + 1
    passage = solve([[-generator[i][j] for j in range(good)] for i in range(good)], [Fraction(1)] * good)
    return sum(law[:good]), passage[0]


def mp_shortage(pool: SparesPool, mission_time: float):
    chain = pool.shortage_chain
    return mpmath.expm(mp_generator(chain) * mission_time)[0, chain.top]


def test_one_unit_without_spares_is_the_two_state_model():
    # availability mu / (lambda + mu), MTTF 1 / lambda, P(failure by t) = 1 - e^(-lambda t)
    # (common practice; the two-state repairable-component model of reliability textbooks)
    pool = SparesPool(units=1, spares=0, failure_rate=0.2, repair_rate=3.0, crews=1)
    assert pool.availability() == pytest.approx(3.0 / 3.2, rel=1e-14)
    assert pool.unavailability() == pytest.approx(0.2 / 3.2, rel=1e-14)
    assert pool.mean_time_to_shortage() == pytest.approx(5.0, rel=1e-14)
    for t in (1e-9, 0.5, 10.0, 150.0):
        assert pool.shortage_probability(t) == pytest.approx(-math.expm1(-0.2 * t), rel=1e-13)


@pytest.mark.parametrize(
    ("units", "spares", "failure_rate", "repair_rate", "crews"),
    [(2, 1, 1, 3, 1), (3, 2, 2, 5, 2), (1, 3, 1, 1, 4)],
)
def test_availability_and_mean_time_to_shortage_match_exact_rational_solves(
    units, spares, failure_rate, repair_rate, crews
):
    # reference: the generator built from the design's rules, solved in fractions
    availability, mttf = exact_availability_and_mttf(units, spares, failure_rate, repair_rate, crews)
    pool = SparesPool(units, spares, failure_rate, repair_rate, crews)
    assert pool.availability() == pytest.approx(float(availability), rel=1e-13)
    assert pool.unavailability() == pytest.approx(float(1 - availability), rel=1e-12)
    assert pool.mean_time_to_shortage() == pytest.approx(float(mttf), rel=1e-13)


def test_two_units_one_spare_by_hand():
    # lambda = 1, mu = 3: rates 0 -(2)-> 1 -(2)-> 2 -(1)-> 3, repairs 3 each (one crew). Hand solve:
    # pi ∝ 1, 2/3, 4/9, 4/27, so availability = (27 + 18) / (27 + 18 + 12 + 4) = 45/61;
    # h0 = 1/2 + h1, h1 = 1/5 + (3/5) h0, so h0 = 7/4
    pool = SparesPool(units=2, spares=1, failure_rate=1.0, repair_rate=3.0)
    assert pool.availability() == pytest.approx(45 / 61, rel=1e-14)
    assert pool.mean_time_to_shortage() == pytest.approx(7 / 4, rel=1e-14)


def test_cold_spares_do_not_fail_and_crews_repair_in_parallel():
    pool = SparesPool(units=3, spares=2, failure_rate=0.5, repair_rate=2.0, crews=2)
    assert pool.chain.birth.tolist() == [1.5, 1.5, 1.5, 1.0, 0.5, 0.0]
    assert pool.chain.death.tolist() == [0.0, 2.0, 4.0, 4.0, 4.0, 4.0]
    assert pool.shortage_chain.top == 3 and pool.shortage_chain.death[-1] == 0.0


@pytest.mark.parametrize("mission_time", [0.05, 2.0, 30.0])
def test_shortage_probability_matches_mpmath_down_to_rare_risks(mission_time):
    # reference: mpmath.expm of the stopped chain at 50 digits; with fast repair the short-mission
    # risk is about 1e-11, where 1 - survival would keep only five digits
    pool = SparesPool(units=2, spares=2, failure_rate=0.01, repair_rate=10.0)
    mpmath.mp.dps = 50
    expected = float(mp_shortage(pool, mission_time))
    assert pool.shortage_probability(mission_time) == pytest.approx(expected, rel=1e-10)


def test_shortage_probability_rises_with_the_mission_to_one():
    pool = SparesPool(units=4, spares=2, failure_rate=0.05, repair_rate=0.5)
    times = np.linspace(0.0, 40 * pool.mean_time_to_shortage(), 401)
    curve, spared = pool.shortage_curve(times), pool.no_shortage_curve(times)
    # monotone by construction, so exactly: no tolerance (it must hold on every BLAS kernel)
    assert curve[0] == 0.0 and np.all(np.diff(curve) >= 0) and np.all(curve <= 1)
    assert spared[0] == 1.0 and np.all(np.diff(spared) <= 0) and np.all(spared >= 0)
    assert np.all(np.diff(curve[curve < 0.5]) > 0)
    assert curve[-1] == pytest.approx(1.0, abs=1e-12)
    assert curve + spared == pytest.approx(np.ones(times.size), abs=2e-16)
    assert curve[57] == pytest.approx(pool.shortage_probability(times[57]), rel=1e-13)
    assert spared[57] == pytest.approx(pool.no_shortage_probability(times[57]), rel=1e-12)
    # E[T] = integral of P(T > t) dt (common practice): trapezoid rule on the curve
    step = times[1] - times[0]
    assert step * (spared.sum() - spared[0] / 2 - spared[-1] / 2) == pytest.approx(
        pool.mean_time_to_shortage(), rel=1e-3
    )


def test_no_shortage_far_out_keeps_relative_accuracy():
    # reference: mpmath.expm of the stopped chain at 60 digits, summing the good states directly; at 40
    # mean lifetimes the chance of no shortage is about 8e-19, where 1 - shortage would give 0
    pool = SparesPool(units=4, spares=2, failure_rate=0.05, repair_rate=0.5)
    times = np.linspace(0.0, 40 * pool.mean_time_to_shortage(), 401)
    spared = pool.no_shortage_curve(times)
    mpmath.mp.dps = 60
    chain = pool.shortage_chain
    for index in (120, 400):
        law = mpmath.expm(mp_generator(chain) * mpmath.mpf(float(times[index])))
        expected = float(mpmath.fsum(law[0, k] for k in range(chain.top)))
        assert spared[index] == pytest.approx(expected, rel=1e-8)
        assert pool.no_shortage_probability(times[index]) == pytest.approx(expected, rel=1e-8)
    assert 1e-19 < spared[-1] < 1e-18


@pytest.mark.parametrize(("units", "spares", "failure_rate", "repair_rate"), [(4, 2, 0.05, 0.5), (2, 1, 1.0, 0.2)])
def test_shortage_curve_is_monotone_across_the_half_way_seam(units, spares, failure_rate, repair_rate):
    # times a few ulps apart around the median time to shortage, where the curve hands over from
    # the shortage side to the no-shortage side: both must still move one way only, exactly
    pool = SparesPool(units=units, spares=spares, failure_rate=failure_rate, repair_rate=repair_rate)
    median = optimize.brentq(lambda t: pool.shortage_probability(t) - 0.5, 1e-3, 1e4, xtol=1e-14)
    times = median * (1 + np.arange(-300, 300) * 2e-16)
    curve, spared = pool.shortage_curve(times), pool.no_shortage_curve(times)
    assert np.all(np.diff(curve) >= 0) and np.all(np.diff(spared) <= 0)
    assert curve.min() < 0.5 < curve.max() or 0.5 in curve
    assert curve + spared == pytest.approx(np.ones(times.size), abs=2e-16)
    coarse = np.linspace(0.0, 2 * median, 7)  # the seam between far-apart times too
    assert np.all(np.diff(pool.shortage_curve(coarse)) > 0) and np.all(np.diff(pool.no_shortage_curve(coarse)) < 0)


def test_shortage_curve_takes_times_in_any_order():
    pool = SparesPool(units=3, spares=1, failure_rate=0.1, repair_rate=1.0)
    times = [30.0, 0.0, 5.0, 5.0, 12.5]
    curve = pool.shortage_curve(times)
    ordered = pool.shortage_curve(sorted(times))
    assert curve.tolist() == [ordered[4], ordered[0], ordered[1], ordered[2], ordered[3]]
    assert curve[2] == curve[3]  # the same time twice gives the same value


def test_unavailability_near_1e_minus_12_matches_mpmath():
    # reference: the balance equations pi Q = 0, sum pi = 1 solved by mpmath.lu_solve at 50 digits
    # (a linear solve, not the product form walkmath uses)
    pool = SparesPool(units=2, spares=3, failure_rate=0.0005, repair_rate=1.0, crews=1)
    mpmath.mp.dps = 50
    generator = mp_generator(pool.chain)
    size = pool.chain.top + 1
    system = mpmath.matrix(size, size)
    for i in range(size):
        for j in range(size):
            system[i, j] = generator[j, i] if i < size - 1 else 1
    law = mpmath.lu_solve(system, mpmath.matrix([0] * (size - 1) + [1]))
    expected = float(mpmath.fsum(law[k] for k in range(pool.spares + 1, size)))
    assert 1e-13 < expected < 1e-11
    assert pool.unavailability() == pytest.approx(expected, rel=1e-8)
    assert pool.availability() == 1.0 - pool.unavailability()  # the large side is the complement


@settings(max_examples=60, deadline=None)
@given(
    units=st.integers(1, 6),
    spares=st.integers(0, 5),
    failure_rate=st.floats(1e-3, 10.0),
    repair_rate=st.floats(1e-3, 10.0),
    crews=st.integers(1, 4),
    mission_time=st.floats(0.0, 50.0),
)
def test_pool_laws_are_probabilities(units, spares, failure_rate, repair_rate, crews, mission_time):
    pool = SparesPool(units, spares, failure_rate, repair_rate, crews)
    law = pool.chain.steady_state()
    assert np.all(law >= 0) and math.fsum(law) == pytest.approx(1.0, abs=1e-13)
    assert 0 <= pool.availability() <= 1
    assert pool.availability() + pool.unavailability() == pytest.approx(1.0, abs=1e-13)
    risk = pool.shortage_probability(mission_time)
    assert 0 <= risk <= 1 and 0 <= pool.no_shortage_probability(mission_time) <= 1
    times = [mission_time, mission_time * 1.5 + 0.1, mission_time * 3 + 1]
    curve, spared = pool.shortage_curve(times), pool.no_shortage_curve(times)
    assert np.all(np.diff(curve) >= 0) and np.all(np.diff(spared) <= 0)  # monotone by construction
    assert np.all((curve >= 0) & (curve <= 1) & (spared >= 0) & (spared <= 1))
    assert curve[0] == pytest.approx(risk, rel=1e-12, abs=1e-300)
    assert pool.mean_time_to_shortage() > 0


@pytest.mark.parametrize(
    ("field", "value", "words"),
    [
        ("units", 0, "units must be a whole number from 1"),
        ("units", 2.5, "units must be a whole number"),
        ("spares", -1, "spares must be a whole number from 0"),
        ("failure_rate", 0.0, "failure_rate must be a finite number above 0 and at most 1e"),
        ("failure_rate", math.nan, "failure_rate must be a finite number above 0 and at most 1e"),
        ("repair_rate", 1e13, "repair_rate must be a finite number above 0 and at most 1e"),
        ("repair_rate", -2.0, "repair_rate must be a finite number above 0 and at most 1e"),
        ("crews", 0, "crews must be a whole number from 1"),
    ],
)
def test_bad_pool_parameters_name_the_field(field, value, words):
    arguments = {"units": 4, "spares": 2, "failure_rate": 0.05, "repair_rate": 0.5, "crews": 1, field: value}
    with pytest.raises(ValueError, match=words):
        SparesPool(**arguments)


def test_bad_mission_times_name_the_parameter():
    pool = SparesPool(units=4, spares=2, failure_rate=0.05, repair_rate=0.5)
    with pytest.raises(ValueError, match="mission_time must be a finite number from 0.0 to"):
        pool.shortage_probability(-1.0)
    with pytest.raises(ValueError, match="mission_time must be a finite number from 0.0 to"):
        pool.shortage_probability(1e9)  # gamma t beyond the uniformization cap
    with pytest.raises(ValueError, match=r"mission_times\[0\]"):
        pool.shortage_curve([math.nan])
    with pytest.raises(ValueError, match="mission_time must be a finite number from 0.0 to"):
        pool.no_shortage_probability(math.inf)
    with pytest.raises(ValueError, match=r"mission_times\[1\]"):
        pool.no_shortage_curve([1.0, -2.0])
