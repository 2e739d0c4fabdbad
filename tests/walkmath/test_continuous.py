"""Birth–death chains against closed forms in exact Fractions, mpmath and linear solves."""

import math
import re
from fractions import Fraction

import mpmath
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import linalg, optimize, special

from tests.walkmath.exact import mp_generator
from walkmath import uniformization
from walkmath.continuous import BirthDeath


def erlang_b(channels: int, load):
    # B(0) = 1, B(c) = A B(c-1) / (c + A B(c-1)) (common practice; the standard Erlang B recursion).
    # Works on floats, Fractions and mpmath numbers alike.
    blocking = load**0
    for c in range(1, channels + 1):
        blocking = load * blocking / (c + load * blocking)
    return blocking


def loss_system(channels: int, load: float) -> BirthDeath:
    """M/M/c/c: arrivals at rate A (service rate 1), k busy channels finish at rate k."""
    return BirthDeath([load] * (channels + 1), list(range(channels + 1)))


def mm1k(arrival: float, service: float, capacity: int) -> BirthDeath:
    return BirthDeath([arrival] * (capacity + 1), [service] * (capacity + 1))


# -- steady state ---------------------------------------------------------------------------------


def test_erlang_b_five_channels_two_erlangs():
    # 0.0367 for c = 5, A = 2 (from memory); exactly 4/109 by the recursion in Fractions
    exact = erlang_b(5, Fraction(2))
    assert exact == Fraction(4, 109) and round(float(exact), 4) == 0.0367
    blocking = loss_system(5, 2.0).steady_state()[-1]
    assert blocking == pytest.approx(float(exact), rel=1e-13)
    # (A^c / c!) / sum_k A^k / k! (Erlang's loss formula, common practice), also in Fractions
    assert exact == Fraction(2**5, 120) / sum(Fraction(2**k, math.factorial(k)) for k in range(6))


def test_fifteen_channels_at_one_percent_blocking_carry_8_108_erlangs():
    # A = 8.108 Erlangs for 15 channels at 1% blocking (from memory: the 15-channel, 1% entry of
    # Erlang B traffic tables); reference: the recursion solved for A in mpmath at 30 digits
    mpmath.mp.dps = 30
    expected = mpmath.findroot(lambda a: erlang_b(15, a) - mpmath.mpf("0.01"), 8)
    assert round(float(expected), 3) == 8.108
    load = optimize.brentq(lambda a: loss_system(15, a).steady_state()[-1] - 0.01, 1.0, 15.0, xtol=1e-12)
    assert load == pytest.approx(float(expected), rel=1e-10)


def test_mm1k_blocking_probability():
    # P_K = (1 - rho) rho^K / (1 - rho^(K+1)) for M/M/1/K (Kleinrock, Queueing Systems vol. 1,
    # section 3.6, from memory); 0.0145434 for lambda 8, mu 10, K 12 is that formula evaluated
    # here in Fractions, not a printed value
    law = mm1k(8.0, 10.0, 12).steady_state()
    rho = Fraction(4, 5)
    exact = (1 - rho) * rho**12 / (1 - rho**13)
    assert law[-1] == pytest.approx(float(exact), rel=1e-13)
    assert round(float(exact), 7) == 0.0145434


def test_steady_state_split_sums_each_small_side_directly():
    # reference: the balance equations solved by mpmath.lu_solve at 50 digits. The top level holds
    # about 1e-40 of the long-run mass, so 1 - P(level < K) would give 0
    chain = mm1k(1.0, 1e4, 10)
    mpmath.mp.dps = 50
    generator = mp_generator(chain)
    system = mpmath.matrix(11, 11)
    for i in range(11):
        for j in range(11):
            system[i, j] = generator[j, i] if i < 10 else 1
    law = mpmath.lu_solve(system, mpmath.matrix([0] * 10 + [1]))
    below, above = chain.steady_state_split(10)
    assert above == pytest.approx(float(law[10]), rel=1e-8) and 1e-41 < above < 1e-39
    assert below == 1.0 - above
    # the sides switch at 1/2: here the small side is below the boundary
    low, high = chain.steady_state_split(1)
    assert low == pytest.approx(float(law[0]), rel=1e-12) and high == pytest.approx(1 - float(law[0]), rel=1e-12)
    assert low + high == 1.0
    assert chain.steady_state_split(0) == (0.0, 1.0) and chain.steady_state_split(11) == (1.0, 0.0)
    with pytest.raises(ValueError, match="boundary must be a whole number from 0 to 11"):
        chain.steady_state_split(12)


def test_steady_state_solves_the_global_balance_equations():
    # pi Q = 0, sum pi = 1 by a dense linear solve (common practice; independent of the product form)
    rng = np.random.default_rng(7)
    birth, death = rng.uniform(0.1, 5.0, 9), rng.uniform(0.1, 5.0, 9)
    chain = BirthDeath(birth, death)
    generator = np.diag(chain.birth[:-1], 1) + np.diag(chain.death[1:], -1)
    generator -= np.diag(generator.sum(axis=1))
    system = np.vstack((generator.T, np.ones(9)))
    expected = np.linalg.lstsq(system, np.r_[np.zeros(9), 1.0], rcond=None)[0]
    assert chain.steady_state() == pytest.approx(expected, rel=1e-11)


def test_ten_thousand_levels_with_extreme_rate_ratios_stay_finite():
    # pi_K / pi_0 = 1e60000: far beyond the float range, so only logs can hold the product form
    chain = BirthDeath([1e3] * 10_001, [1e-3] * 10_001)
    law = chain.steady_state()
    assert np.all(np.isfinite(law)) and np.all(law >= 0)
    assert math.fsum(law) == pytest.approx(1.0, abs=1e-14)
    # geometric law pi_k ∝ r^k truncated: pi_{K-j} = (1 - 1/r) r^-j to rounding (common practice)
    assert law[-1] == pytest.approx(1 - 1e-6, rel=1e-14)
    assert law[-4] == pytest.approx((1 - 1e-6) * 1e-18, rel=1e-13)
    assert law[-40] == pytest.approx((1 - 1e-6) * 1e-234, rel=1e-13)
    extreme = BirthDeath([1e300, 1e300, 0.0], [0.0, 1e-300, 1e-300]).steady_state()
    assert extreme[0] == 0.0 and extreme[2] == pytest.approx(1.0)


def test_a_chain_absorbed_at_the_top_has_all_long_run_mass_there():
    # documented behaviour: the long-run law lives on the single closed class
    law = BirthDeath([1.0, 2.0, 0.0], [0.0, 1.0, 0.0]).steady_state()
    assert law.tolist() == [0.0, 0.0, 1.0]


def test_several_closed_classes_raise():
    with pytest.raises(ValueError, match="closed classes"):
        BirthDeath([0.0, 1.0, 0.0], [0.0, 1.0, 0.0]).steady_state()  # levels 0 and 2 both absorb


# -- transient law --------------------------------------------------------------------------------


def test_transient_matches_mpmath_matrix_exponential_down_to_1e_minus_28():
    # reference: mpmath.expm at 50 digits (matches 80 digits to all printed places)
    chain = mm1k(1.0, 10.0, 30)
    mpmath.mp.dps = 50
    exact = mpmath.expm(mp_generator(chain) * 4)
    law = chain.transient(start=0, t=4.0)
    reference = np.array([float(exact[0, k]) for k in range(31)])
    assert 1e-28 < reference[27] < 1e-27
    assert law == pytest.approx(reference, rel=1e-8, abs=0)


def test_transient_at_time_zero_is_the_start_level():
    law = mm1k(1.0, 2.0, 6).transient_with_bound(start=4, t=0.0)
    assert law.probs.tolist() == [0, 0, 0, 0, 1, 0, 0]
    assert law.dropped_mass == 0.0


def test_transient_converges_to_the_steady_state():
    chain = mm1k(1.0, 2.0, 10)  # relaxation time 1 / (sqrt(2) - 1)^2, about 6
    assert chain.transient(start=10, t=300.0) == pytest.approx(chain.steady_state(), rel=1e-10)


def test_a_hundred_thousand_uniformization_steps_neither_underflow_nor_leak_mass():
    chain = mm1k(1.0, 2.0, 10)  # gamma = 3
    result = chain.transient_with_bound(start=0, t=1e5 / 3)
    assert np.all(np.isfinite(result.probs)) and np.all(result.probs >= 0)
    assert math.fsum(result.probs) == pytest.approx(1.0, abs=1e-12)
    assert result.steps > 1e5 and 0 <= result.dropped_mass <= 1e-15


def test_two_level_chain_matches_its_closed_form():
    # P(level 1 at t | level 0) = a / (a + b) (1 - e^-(a+b)t) (common practice; two-state Markov chain)
    chain = BirthDeath([0.3, 0.0], [0.0, 0.7])
    for t in (0.01, 1.0, 25.0):
        law = chain.transient(0, t)
        assert law[1] == pytest.approx(0.3 * -math.expm1(-t), rel=1e-13)
        assert law[0] == pytest.approx(0.7 + 0.3 * math.exp(-t), rel=1e-13)


@pytest.mark.parametrize("mean", [0.5, 40.0, 1e4, 1e7])
def test_poisson_weights_from_the_mode_keep_full_relative_accuracy(mean):
    # reference: mpmath log-gamma at 40 digits; scipy's pmf loses 1e-8 at mean 1e7 to cancellation
    window = uniformization._poisson_window(mean)
    mpmath.mp.dps = 40
    last = window.first + window.weights.size - 1
    for count in {window.first, int(mean), int(mean + 10 * math.sqrt(mean)), last}:
        exact = mpmath.exp(count * mpmath.log(mean) - mean - mpmath.loggamma(count + 1))
        assert window.weights[count - window.first] == pytest.approx(float(exact), rel=1e-12)
    # the reported bound covers the mass actually left out (scipy's regularised gamma tails)
    outside = special.pdtr(window.first - 1, mean) if window.first else 0.0
    outside += special.pdtrc(last, mean)
    assert outside <= window.dropped * (1 + 1e-9) <= 1e-290


def test_transient_curve_rows_equal_single_transients():
    chain = BirthDeath([0.5, 1.5, 2.0, 0.2, 0.0], [0.0, 1.0, 0.4, 3.0, 1.0])
    times = [0.0, 0.3, 2.0, 7.5]
    curve = chain.transient_curve(start=2, times=times)
    for row, t in zip(curve, times, strict=True):
        assert row == pytest.approx(chain.transient(2, t), rel=1e-13, abs=0)


@settings(max_examples=60, deadline=None)
@given(
    rates=st.lists(st.tuples(st.floats(0.0, 50.0), st.floats(0.0, 50.0)), min_size=1, max_size=8),
    start=st.integers(0, 7),
    t=st.floats(0.0, 20.0),
)
def test_transient_law_is_a_probability_vector(rates, start, t):
    chain = BirthDeath([b for b, _ in rates], [d for _, d in rates])
    law = chain.transient(min(start, chain.top), t)
    assert np.all(law >= 0) and np.all(law <= 1)
    assert math.fsum(law) == pytest.approx(1.0, abs=1e-12)


@settings(max_examples=80, deadline=None)
@given(rates=st.lists(st.tuples(st.floats(1e-3, 1e3), st.floats(1e-3, 1e3)), min_size=1, max_size=12))
def test_steady_state_is_a_probability_vector_in_detailed_balance(rates):
    chain = BirthDeath([b for b, _ in rates], [d for _, d in rates])
    law = chain.steady_state()
    assert np.all(law >= 0)
    assert math.fsum(law) == pytest.approx(1.0, abs=1e-13)
    # pi_k b_k = pi_{k+1} d_{k+1} (Kleinrock, Queueing Systems vol. 1, section 3.1)
    assert law[:-1] * chain.birth[:-1] == pytest.approx(law[1:] * chain.death[1:], rel=1e-10)


# -- passage curves -------------------------------------------------------------------------------


def stopped_reference(birth, death, start, target, t):
    """P(target reached by t) from mpmath.expm at 50 digits of the generator with the target made
    absorbing (all levels kept; the levels beyond the target are simply never reached)."""
    birth, death = list(birth), list(death)
    birth[target] = death[target] = 0.0
    mpmath.mp.dps = 50
    law = mpmath.expm(mp_generator(BirthDeath(birth, death)) * mpmath.mpf(t))
    return law[start, target]


@pytest.mark.parametrize(("start", "target"), [(0, 6), (2, 5), (7, 1), (5, 0)])
def test_passage_curve_matches_mpmath_both_ways(start, target):
    # reference: mpmath.expm of the chain with the target absorbing; each side is checked where it
    # is tiny: reached at t = 0.05, not reached at t = 1500
    rng = np.random.default_rng(5)
    birth, death = rng.uniform(0.3, 2.0, 8), rng.uniform(0.3, 2.0, 8)
    chain = BirthDeath(birth, death)
    times = [0.05, 1.0, 8.0, 1500.0]
    curve = chain.passage_curve(start, target, times)
    for i, t in enumerate(times):
        reached = stopped_reference(chain.birth, chain.death, start, target, t)
        assert curve.reached[i] == pytest.approx(float(reached), rel=1e-8)
        assert curve.not_reached[i] == pytest.approx(float(1 - reached), rel=1e-8)
    assert curve.reached[0] < 1e-5 and curve.not_reached[-1] < 1e-12
    assert curve.dropped_mass <= 1e-290 and curve.steps > 0


def test_passage_curve_to_the_start_level_is_certain_at_once():
    curve = mm1k(1.0, 2.0, 5).passage_curve(3, 3, [0.0, 2.0])
    assert curve.reached.tolist() == [1.0, 1.0] and curve.not_reached.tolist() == [0.0, 0.0]


@settings(max_examples=60, deadline=None)
@given(
    rates=st.lists(st.tuples(st.floats(1e-3, 50.0), st.floats(1e-3, 50.0)), min_size=2, max_size=8),
    ends=st.tuples(st.integers(0, 7), st.integers(0, 7)),
    times=st.lists(st.floats(0.0, 30.0), min_size=1, max_size=12),
)
def test_passage_curves_are_monotone_probabilities(rates, ends, times):
    chain = BirthDeath([b for b, _ in rates], [d for _, d in rates])
    start, target = (min(end, chain.top) for end in ends)
    curve = chain.passage_curve(start, target, times)
    order = np.argsort(times, kind="stable")
    # monotone by construction: exact comparisons, no tolerance
    assert np.all(np.diff(curve.reached[order]) >= 0) and np.all(np.diff(curve.not_reached[order]) <= 0)
    assert np.all((curve.reached >= 0) & (curve.reached <= 1))
    assert np.all((curve.not_reached >= 0) & (curve.not_reached <= 1))
    assert curve.reached + curve.not_reached == pytest.approx(np.ones(len(times)), abs=2e-16)


# -- mean first passage ---------------------------------------------------------------------------


def banded_passage(chain: BirthDeath, start: int, target: int) -> float:
    """Solve -Q_restricted h = 1 on the levels the chain can visit before the target (solve_banded)."""
    low, high = (0, target - 1) if target > start else (target + 1, chain.top)
    birth, death = chain.birth[low : high + 1].copy(), chain.death[low : high + 1].copy()
    bands = np.zeros((3, high - low + 1))
    bands[0, 1:] = -birth[:-1]  # superdiagonal: -b_k
    bands[1] = birth + death  # diagonal: total outflow, including into the target
    bands[2, :-1] = -death[1:]  # subdiagonal: -d_k
    return float(linalg.solve_banded((1, 1), bands, np.ones(high - low + 1))[start - low])


@pytest.mark.parametrize(("start", "target"), [(0, 9), (3, 7), (9, 0), (6, 2), (4, 4)])
def test_mean_first_passage_matches_a_banded_linear_solve(start, target):
    rng = np.random.default_rng(11)
    chain = BirthDeath(rng.uniform(0.2, 3.0, 10), rng.uniform(0.2, 3.0, 10))
    expected = 0.0 if start == target else banded_passage(chain, start, target)
    assert chain.mean_first_passage(start, target) == pytest.approx(expected, rel=1e-12)


def test_mm1_mean_time_to_empty_is_n_busy_periods():
    # E[busy period] = 1 / (mu - lambda) for M/M/1 (Kleinrock, Queueing Systems vol. 1, ch. 5, M/G/1
    # busy period E[Y] = x / (1 - rho); from memory). From level n the time to empty is n of them; the
    # capacity 400 changes it by about rho^400, far below rounding.
    chain = mm1k(1.0, 2.0, 400)
    assert chain.mean_first_passage(5, 0) == pytest.approx(5.0, rel=1e-12)


def test_mean_first_passage_is_infinite_when_the_target_may_never_be_reached():
    chain = BirthDeath([1.0, 0.0, 1.0, 0.0], [0.0, 1.0, 1.0, 1.0])
    assert chain.mean_first_passage(0, 3) == math.inf  # birth[1] = 0 blocks the way up
    assert chain.mean_first_passage(2, 3) == math.inf  # the chain can fall to level 1 and stay below
    # down from 3: h3 = 1 + h2, h2 = 1/2 + (h3 + h1) / 2, h1 = 1 (hand first-step solve): h3 = 4
    assert chain.mean_first_passage(3, 0) == pytest.approx(4.0, rel=1e-14)
    # a zero death rate at level 2 is a floor: from 2 the time to 3 is just 1 / b_2
    walled = BirthDeath([1.0, 1.0, 1.0, 0.0], [0.0, 1.0, 0.0, 1.0])
    assert walled.mean_first_passage(2, 3) == pytest.approx(1.0)


# -- bad input ------------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("birth", "death", "words"),
    [
        ([1.0, -1.0], [0.0, 1.0], "birth[1]"),
        ([1.0, 1.0], [0.0, math.nan], "death[1] must be a finite number from 0 to 1e+300"),
        ([1.0, 1e308], [0.0, 1e308], "birth[1]"),
        ([1.0, 1.0], [0.0, 1.0, 2.0], "same length"),
        ([], [], "birth must be a list of 1 to"),
        (["fast", 1.0], [0.0, 1.0], "birth must be a list of rates"),
        ([[1.0]], [[1.0]], "birth must be a list of 1 to"),
    ],
)
def test_bad_rates_name_the_parameter(birth, death, words):
    with pytest.raises(ValueError, match=re.escape(words)):
        BirthDeath(birth, death)


def test_bad_times_and_levels_name_the_parameter():
    chain = mm1k(1.0, 2.0, 4)
    with pytest.raises(ValueError, match="start must be a whole number from 0 to 4"):
        chain.transient(5, 1.0)
    with pytest.raises(ValueError, match="t must be a finite number"):
        chain.transient(0, -1.0)
    with pytest.raises(ValueError, match=r"t must be a finite number from 0.0 to 3333333\.33"):
        chain.transient(0, 1e7)  # gamma t = 3e7 is beyond the uniformization cap
    with pytest.raises(ValueError, match=r"times\[1\]"):
        chain.transient_curve(0, [1.0, math.inf])
    with pytest.raises(ValueError, match="target must be a whole number from 0 to 4"):
        chain.mean_first_passage(0, 9)
    with pytest.raises(ValueError, match="target must be a whole number from 0 to 4"):
        chain.passage_curve(0, 9, [1.0])
    with pytest.raises(ValueError, match=r"times\[0\] must be a finite number from 0"):
        chain.passage_curve(0, 4, [-1.0])
