"""Pools from a table of rates by level, against queueing tables, textbook formulas, exact fractions and mpmath."""

import math
from fractions import Fraction

import mpmath
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import linalg, optimize

from tests.walkmath.exact import mp_generator
from walkmath import ComputeTooLarge, RatePool
from walkmath.cost import WORK_CAP


def loss_pool(channels: int, load: float) -> RatePool:
    """Erlang's loss system as a pool: level = channels busy, short when all are (service rate 1)."""
    return RatePool([load] * (channels + 1), list(range(channels + 1)), shortage_at=channels)


def erlang_b(channels: int, load):
    # B(0) = 1, B(c) = A B(c-1) / (c + A B(c-1)) (common practice; the standard Erlang B recursion)
    blocking = load**0
    for c in range(1, channels + 1):
        blocking = load * blocking / (c + load * blocking)
    return blocking


def product_form(failure, repair):
    """pi_k proportional to prod_{i<k} failure_i / repair_{i+1}, in exact Fractions (Kleinrock §3.1)."""
    weights = [Fraction(1)]
    for k in range(1, len(failure)):
        weights.append(weights[-1] * Fraction(failure[k - 1]) / Fraction(repair[k]))
    total = sum(weights)
    return [w / total for w in weights]


def van_loan_occupation(pool: RatePool, start: int, time: float, dps: int = 40):
    """Integral over [0, t] of P(level(s) in the shortage levels), by mpmath.expm of the block matrix
    [[Q, I], [0, 0]] t, whose top-right block is the integral of exp(Q s) over [0, t] (Van Loan,
    "Computing integrals involving the matrix exponential", IEEE TAC 23(3), 1978)."""
    mpmath.mp.dps = dps
    generator = mp_generator(pool.chain)
    size = pool.chain.top + 1
    block = mpmath.zeros(2 * size, 2 * size)
    for i in range(size):
        block[i, size + i] = 1
        for j in range(size):
            block[i, j] = generator[i, j]
    integral = mpmath.expm(block * mpmath.mpf(time))
    short = mpmath.fsum(integral[start, size + k] for k in range(pool.shortage_at, size))
    covered = mpmath.fsum(integral[start, size + k] for k in range(pool.shortage_at))
    return float(short), float(covered)


# -- long run: queueing special cases -------------------------------------------------------------


@pytest.mark.parametrize(
    ("channels", "load"),
    # Erlang B table, 1 % blocking (from memory: the 5-, 10- and 20-channel entries of the usual
    # Erlang B traffic tables: 1.361, 4.461 and 12.031 Erlangs)
    [(5, 1.361), (10, 4.461), (20, 12.031)],
)
def test_erlang_b_table_loads_give_one_percent_blocking(channels, load):
    blocking = loss_pool(channels, load).unavailability()
    assert blocking == pytest.approx(float(erlang_b(channels, mpmath.mpf(load))), rel=1e-12)
    # and back: the load meeting exactly 1 % agrees with the table to its printed precision
    found = optimize.brentq(lambda a: loss_pool(channels, a).unavailability() - 0.01, 0.1, 50.0, xtol=1e-12)
    assert round(found, 3) == load


def test_erlang_b_in_exact_fractions():
    # Erlang's loss formula (A^c / c!) / sum_k A^k / k! (common practice) in Fractions, 8 channels, 3 Erlangs
    exact = Fraction(3**8, math.factorial(8)) / sum(Fraction(3**k, math.factorial(k)) for k in range(9))
    pool = loss_pool(8, 3.0)
    assert pool.unavailability() == pytest.approx(float(exact), rel=1e-13)
    assert pool.availability() == pytest.approx(float(1 - exact), rel=1e-14)
    # carried traffic A (1 - B) = mean channels busy (common practice)
    assert pool.expected_failed() == pytest.approx(float(3 * (1 - exact)), rel=1e-13)


@pytest.mark.parametrize(("arrival", "service", "capacity"), [(3, 4, 6), (5, 4, 10), (1, 1, 4)])
def test_mm1k_queue_length_and_blocking(arrival, service, capacity):
    # M/M/1/K: p_n = (1 - rho) rho^n / (1 - rho^(K+1)), L = rho / (1 - rho) - (K+1) rho^(K+1) / (1 - rho^(K+1))
    # (Schaum's Outline of Probability, Random Variables, and Random Processes, §9.6, M/M/1/K; formulas
    # from memory), evaluated in Fractions; rho = 1 gives p_n = 1 / (K + 1), L = K / 2
    rho = Fraction(arrival, service)
    pool = RatePool([arrival] * (capacity + 1), [service] * (capacity + 1), shortage_at=capacity)
    if rho == 1:
        blocking, length = Fraction(1, capacity + 1), Fraction(capacity, 2)
    else:
        blocking = (1 - rho) * rho**capacity / (1 - rho ** (capacity + 1))
        length = rho / (1 - rho) - (capacity + 1) * rho ** (capacity + 1) / (1 - rho ** (capacity + 1))
    assert pool.unavailability() == pytest.approx(float(blocking), rel=1e-13)
    assert pool.expected_failed() == pytest.approx(float(length), rel=1e-13)


def test_mmck_matches_the_product_form_in_fractions():
    # M/M/c/K as a birth–death chain (Schaum's Outline of Probability, Random Variables, and Random
    # Processes, §9.7, from memory): c = 3 servers, room for K = 7, arrivals 5, service 2 each
    failure = [5] * 8
    repair = [2 * min(k, 3) for k in range(8)]
    law = product_form(failure, repair)
    pool = RatePool(failure, repair, shortage_at=7)
    assert pool.long_run_law() == pytest.approx([float(p) for p in law], rel=1e-13)
    assert pool.unavailability() == pytest.approx(float(law[7]), rel=1e-13)


# -- long-run shortage frequency and spells ---------------------------------------------------------


def test_shortage_frequency_of_two_machines_one_repairer_by_hand():
    # up 12 h, repair 8 h, short as soon as one is down: pi_0 = 9/29 (the worked example),
    # so shortages begin at pi_0 x 2/12 = 3/58 per hour. A shortage ends when none is down: from one
    # down, m = 1 / (5/24) + (2/5)(8 + m) (the other fails first with chance (1/12)/(5/24) = 2/5, then
    # one repair of 8 h), so m = 40/3 h, and indeed 3/58 x 40/3 = 20/29 = 1 - 9/29
    pool = RatePool([2 / 12, 1 / 12, 0.0], [0.0, 1 / 8, 1 / 8], shortage_at=1)
    assert pool.availability() == pytest.approx(9 / 29, rel=1e-14)
    assert pool.shortage_frequency() == pytest.approx(3 / 58, rel=1e-14)
    assert pool.mean_shortage_duration() == pytest.approx(40 / 3, rel=1e-14)


@settings(max_examples=60, deadline=None)
@given(
    rates=st.lists(st.tuples(st.floats(0.01, 20.0), st.floats(0.01, 20.0)), min_size=2, max_size=9),
    data=st.data(),
)
def test_shortage_frequency_is_one_over_a_full_cycle(rates, data):
    # renewal–reward (common practice): in the long run a shortage starts once per up spell + down
    # spell, each a mean passage time; and unavailability = frequency x mean shortage length
    pool = RatePool([f for f, _ in rates], [r for _, r in rates], shortage_at=data.draw(st.integers(1, len(rates) - 1)))
    short = pool.shortage_at
    cycle = pool.chain.mean_first_passage(short - 1, short) + pool.mean_shortage_duration()
    assert pool.shortage_frequency() == pytest.approx(1 / cycle, rel=1e-10)
    assert pool.unavailability() == pytest.approx(pool.shortage_frequency() * pool.mean_shortage_duration(), rel=1e-10)


# -- missions: time short, shortage risk, law over time ---------------------------------------------


@pytest.mark.parametrize(("start", "time"), [(0, 3.0), (2, 0.7), (0, 40.0)])
def test_time_short_within_a_mission_matches_van_loans_integral(start, time):
    pool = RatePool([3.0, 2.5, 2.0, 1.0, 0.5], [0.0, 4.0, 4.0, 5.0, 5.0], shortage_at=3)
    short, covered = van_loan_occupation(pool, start, time)
    split = pool.shortage_time(time, failed=start)
    assert split.short == pytest.approx(short, rel=1e-11)
    assert split.covered == pytest.approx(covered, rel=1e-11)
    assert split.short + split.covered == pytest.approx(time, rel=1e-13)


def test_rare_time_short_keeps_relative_accuracy():
    # reference: Van Loan's block exponential in mpmath at 60 digits. About 1e-17 hours short in a
    # ten-hour mission: time - covered would give 0 or rounding noise
    pool = RatePool([1e-5, 1e-5, 1e-5, 0.0], [0.0, 5.0, 10.0, 15.0], shortage_at=3)
    short, covered = van_loan_occupation(pool, 0, 10.0, dps=60)
    assert 1e-18 < short < 1e-16
    assert pool.expected_shortage_time(10.0) == pytest.approx(short, rel=1e-9)
    assert pool.shortage_time(10.0).covered == pytest.approx(covered, rel=1e-14)


def test_failed_law_matches_scipy_expm_in_the_bulk_and_mpmath_in_the_tail():
    pool = RatePool([2.0, 1.5, 1.0, 0.5, 0.1, 0.0], [0.0, 3.0, 3.0, 6.0, 6.0, 6.0], shortage_at=4)
    generator = np.diag(pool.chain.birth[:-1], 1) + np.diag(pool.chain.death[1:], -1)
    generator -= np.diag(generator.sum(axis=1))
    law = pool.failed_law([0.0, 0.25, 2.0, 9.0], failed=1)
    for row, time in enumerate(law.times):
        expected = linalg.expm(generator * time)[1]  # scipy.linalg.expm, values not tiny
        assert law.probs[row] == pytest.approx(expected, rel=1e-10, abs=1e-14)
        assert law.shortage[row] + law.covered[row] == pytest.approx(1.0, abs=4e-15)
    # far tail: five failed within 1e-4 h from one failed, about 1e-17; mpmath.expm at 50 digits
    mpmath.mp.dps = 50
    exact = mpmath.expm(mp_generator(pool.chain) * mpmath.mpf("1e-4"))
    tail = pool.failed_law([1e-4], failed=1)
    assert 1e-20 < float(exact[1, 5]) < 1e-15
    assert tail.probs[0, 5] == pytest.approx(float(exact[1, 5]), rel=1e-10)
    assert tail.shortage[0] == pytest.approx(float(exact[1, 4] + exact[1, 5]), rel=1e-10)


def test_starting_short_is_a_certain_shortage_at_once():
    pool = RatePool([1.0, 1.0, 1.0], [0.0, 2.0, 2.0], shortage_at=1)
    assert pool.shortage_probability(5.0, failed=1) == 1.0 and pool.no_shortage_probability(5.0, failed=2) == 0.0
    assert pool.mean_time_to_shortage(failed=2) == 0.0
    assert pool.shortage_curve([0.0, 1.0], failed=1).tolist() == [1.0, 1.0]


def test_a_shortage_that_cannot_come_has_no_risk_and_no_finite_mean_time():
    # no failures from level 1 up: from 0 failed the pool can lose one unit but never reach 2
    pool = RatePool([1.0, 0.0, 0.0], [0.0, 2.0, 2.0], shortage_at=2)
    assert pool.shortage_probability(100.0) == 0.0 and pool.no_shortage_probability(100.0) == 1.0
    assert pool.mean_time_to_shortage() == math.inf
    assert pool.unavailability() == 0.0 and pool.availability() == 1.0


# -- cost and bad input ---------------------------------------------------------------------------


def test_each_figure_is_priced_before_it_runs():
    pool = RatePool([1.0] * 5, [2.0] * 5, shortage_at=3)
    one, many = pool.cost("shortage_curve", times=[10.0]), pool.cost("shortage_curve", times=np.linspace(0, 10, 11))
    assert one.levels == 4 and many.periods > one.periods  # a window per gap between the times
    law, time = pool.cost("failed_law", times=[1.0, 10.0]), pool.cost("shortage_time", times=10.0)
    assert law.levels == 5 and law.periods == time.periods  # one sweep to the last time, steps counted alike
    # a small chain's sweep runs from its step ladder when that is cheaper, and is priced that way
    assert law.units < time.periods * (5 * 10 + 50_000)
    # millions of steps on 200 levels (too many for the step ladder): refused before any work
    fast = RatePool([1e6] * 200, [1e6] * 200, shortage_at=3)
    with pytest.raises(ComputeTooLarge, match="shorten the mission"):
        fast.shortage_time(4.0)
    with pytest.raises(ComputeTooLarge, match="shorten the mission"):
        fast.failed_law([4.0])


@pytest.mark.parametrize("method", ["shortage_curve", "shortage_time", "failed_law"])
def test_a_mission_past_the_uniformization_cap_is_priced_over_the_cap_without_building_its_window(method):
    # gamma t = 2e6 x 5e5 = 1e12 events: counting the steps from the Poisson window would build about
    # 8e6 weights (and 1e9 rates over a 1e7-hour mission, gigabytes), so the price is counted directly
    pool = RatePool([1e6] * 3, [1e6] * 3, shortage_at=2)
    work = pool.cost(method, times=[1.0, 5e5])
    assert work.units > WORK_CAP and work.periods >= 1e12
    with pytest.raises(ComputeTooLarge, match="shorten the mission"):
        work.check()
    # 8e6 events, within what the methods accept: priced from the window as before, far below it
    assert 0 < pool.cost(method, times=[1.0, 4.0]).units < WORK_CAP


@pytest.mark.parametrize(
    ("arguments", "words"),
    [
        ({"failure_rates": [1.0, -1.0]}, r"failure_rates\[1\] must be a finite number from 0"),
        ({"repair_rates": [1.0, math.nan]}, r"repair_rates\[1\] must be a finite number from 0"),
        ({"repair_rates": [1.0, 2.0, 3.0]}, "birth and death must have the same length"),
        ({"shortage_at": 0}, "shortage_at must be a whole number from 1 to 1"),
        ({"shortage_at": 2}, "shortage_at must be a whole number from 1 to 1"),
        ({"failure_rates": "fast"}, "failure_rates must be a list of rates"),
    ],
)
def test_bad_tables_name_the_input(arguments, words):
    values = {"failure_rates": [1.0, 1.0], "repair_rates": [1.0, 1.0], "shortage_at": 1} | arguments
    with pytest.raises(ValueError, match=words):
        RatePool(**values)


def test_bad_starts_and_times_name_the_input():
    pool = RatePool([1.0, 1.0, 1.0], [1.0, 1.0, 1.0], shortage_at=2)
    with pytest.raises(ValueError, match="failed must be a whole number from 0 to 2"):
        pool.shortage_probability(1.0, failed=3)
    with pytest.raises(ValueError, match="mission_time must be a finite number from 0.0 to"):
        pool.shortage_time(-1.0)
    with pytest.raises(ValueError, match=r"times\[1\] must be a finite number"):
        pool.failed_law([1.0, math.inf])
    with pytest.raises(ValueError, match="method must be one of"):
        pool.cost("everything")


def test_both_mission_curves_come_from_one_sweep():
    pool = RatePool([1.0, 1.0, 0.5, 0.0], [0.0, 2.0, 2.0, 2.0], shortage_at=2)
    times = [0.0, 0.5, 3.0, 9.0]
    curves = pool.mission_curves(times, failed=1)
    assert curves.reached.tolist() == pool.shortage_curve(times, failed=1).tolist()
    assert curves.not_reached.tolist() == pool.no_shortage_curve(times, failed=1).tolist()
