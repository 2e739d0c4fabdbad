"""Spares pool against the two-state model, machine-repair examples, hand-worked warm standby in exact
fractions, exact rational solves, mpmath (matrix exponential, linear solves) and a seeded Monte Carlo run."""

import math
from fractions import Fraction

import mpmath
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import linalg, optimize

import walkmath as wm
from tests.walkmath.exact import mp_generator
from walkmath import wilson_interval
from walkmath.spares import SparesPool


def pool_rates(units, spares, failure_rate, repair_rate, crews, warm_failure_rate=0):
    """Failure and repair rate with f failed, spelled out from the design notes (section 3)."""
    rows = []
    for failed in range(units + spares + 1):
        operating = min(units, units + spares - failed)
        waiting = max(0, spares - failed)  # cold spares (warm rate 0) do not fail while waiting
        rows.append((failure_rate * operating + warm_failure_rate * waiting, repair_rate * min(failed, crews)))
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


def exact_availability_and_mttf(units, spares, failure_rate, repair_rate, crews, warm_failure_rate=0):
    rates = pool_rates(units, spares, Fraction(failure_rate), Fraction(repair_rate), crews, Fraction(warm_failure_rate))
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
    ("units", "spares", "failure_rate", "repair_rate", "crews", "warm"),
    [(2, 1, 1, 3, 1, 0), (3, 2, 2, 5, 2, 0), (1, 3, 1, 1, 4, 0), (3, 2, 2, 5, 2, 1), (2, 3, 1, 4, 1, 1)],
)
def test_availability_and_mean_time_to_shortage_match_exact_rational_solves(
    units, spares, failure_rate, repair_rate, crews, warm
):
    # reference: the generator built from the design's rules, solved in fractions (balance equations
    # and first-step equations: no product form)
    availability, mttf = exact_availability_and_mttf(units, spares, failure_rate, repair_rate, crews, warm)
    pool = SparesPool(units, spares, failure_rate, repair_rate, crews, warm)
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


def test_machine_repair_three_machines_two_repairers():
    # mean up-time 10 h, mean repair 8 h: P0..P3 = 0.164258, 0.394218, 0.315375, 0.126150 (classic
    # textbook exercise, finite-source queue; values from the product form, as given in the issue)
    pool = SparesPool(units=3, spares=0, failure_rate=1 / 10, repair_rate=1 / 8, crews=2)
    law = pool.chain.steady_state()
    assert np.round(law, 6).tolist() == [0.164258, 0.394218, 0.315375, 0.126150]
    assert law == pytest.approx([1 / 6.088, 2.4 / 6.088, 1.92 / 6.088, 0.768 / 6.088], rel=1e-13)


def test_machine_repair_two_machines_one_repairer_in_fractions():
    # mean up-time 12 h, mean repair 8 h: 9/29, 12/29, 8/29 (classic textbook exercise, as given in the
    # issue); both machines must run, so the pool is available only with none down
    pool = SparesPool(units=2, spares=0, failure_rate=1 / 12, repair_rate=1 / 8, crews=1)
    assert pool.chain.steady_state() == pytest.approx([9 / 29, 12 / 29, 8 / 29], rel=1e-14)
    assert pool.availability() == pytest.approx(9 / 29, rel=1e-14)
    assert pool.expected_operating() == pytest.approx(2 * 9 / 29 + 12 / 29, rel=1e-14)
    assert pool.expected_units_short() == pytest.approx(12 / 29 + 2 * 8 / 29, rel=1e-14)


# One unit, one spare, one crew, by hand. States 0, 1, 2 failed; 0 -> 1 at l + w (the unit or the
# waiting spare fails), 1 -> 2 at l, repairs at m. pi ∝ 1, (l + w)/m, (l + w) l / m^2. First-step
# analysis to two failed: h0 = 1/(l + w) + h1, h1 = 1/(l + m) + m/(l + m) h0, so
# MTTF = (2l + w + m) / (l (l + w)): (2l + m)/l^2 cold and (3l + m)/(2 l^2) hot, the usual two-unit
# standby and parallel results (from memory; reliability textbooks). With l = 1/100, m = 1/10:
# warm w = 1/400: pi = 80/91, 10/91, 1/91; MTTF = 980 h; shortages at pi_1 l = 1/910 per hour.
# cold: pi = 100/111, 10/111, 1/111; MTTF = 1200 h. hot: pi = 50/61, 10/61, 1/61; MTTF = 650 h.
@pytest.mark.parametrize(
    ("warm", "law", "mttf"),
    [
        (Fraction(1, 400), (Fraction(80, 91), Fraction(10, 91), Fraction(1, 91)), 980),
        (Fraction(0), (Fraction(100, 111), Fraction(10, 111), Fraction(1, 111)), 1200),
        (Fraction(1, 100), (Fraction(50, 61), Fraction(10, 61), Fraction(1, 61)), 650),
    ],
)
def test_warm_standby_one_unit_one_spare_by_hand(warm, law, mttf):
    failure, repair = Fraction(1, 100), Fraction(1, 10)
    pool = SparesPool(units=1, spares=1, failure_rate=0.01, repair_rate=0.1, crews=1, warm_failure_rate=float(warm))
    assert pool.standby == {Fraction(0): "cold", failure: "hot"}.get(warm, "warm")
    assert pool.chain.steady_state() == pytest.approx([float(p) for p in law], rel=1e-14)
    assert pool.availability() == pytest.approx(float(law[0] + law[1]), rel=1e-15)
    assert pool.unavailability() == pytest.approx(float(law[2]), rel=1e-14)
    assert pool.mean_time_to_shortage() == pytest.approx(mttf, rel=1e-14)
    assert pool.mean_time_to_shortage(failed=1) == pytest.approx(mttf - float(1 / (failure + warm)), rel=1e-14)
    assert pool.shortage_frequency() == pytest.approx(float(law[1] * failure), rel=1e-14)
    assert pool.mean_shortage_duration() == pytest.approx(float(1 / repair), rel=1e-14)  # one repair
    assert pool.expected_operating() == pytest.approx(float(law[0] + law[1]), rel=1e-15)


def test_warm_spares_fail_while_waiting():
    pool = SparesPool(units=2, spares=3, failure_rate=0.5, repair_rate=2.0, crews=2, warm_failure_rate=0.125)
    assert pool.chain.birth.tolist() == [1.375, 1.25, 1.125, 1.0, 0.5, 0.0]
    hot = SparesPool(units=2, spares=3, failure_rate=0.5, repair_rate=2.0, crews=2, warm_failure_rate=0.5)
    assert hot.chain.birth.tolist() == [2.5, 2.0, 1.5, 1.0, 0.5, 0.0] and hot.standby == "hot"
    # waiting spares that fail make shortages likelier: cold <= warm <= hot, in the long run and per mission
    cold = SparesPool(units=2, spares=3, failure_rate=0.5, repair_rate=2.0, crews=2)
    assert cold.unavailability() < pool.unavailability() < hot.unavailability()
    assert cold.shortage_probability(10.0) < pool.shortage_probability(10.0) < hot.shortage_probability(10.0)


def simulate(pool: SparesPool, mission_time: float, failed: int, paths: int, seed: int):
    """Seeded continuous-time Monte Carlo of the failed count (exponential holding times, one event at a
    time): per path, whether a shortage came within the mission and the time spent short."""
    rng = np.random.default_rng(seed)
    birth, death = pool.chain.birth, pool.chain.death
    level = np.full(paths, failed)
    clock, short = np.zeros(paths), np.zeros(paths)
    reached = level > pool.spares
    alive = np.ones(paths, dtype=bool)
    while alive.any():
        index = np.flatnonzero(alive)
        now = level[index]
        total = birth[now] + death[now]
        end = np.minimum(clock[index] + rng.exponential(1.0 / total), mission_time)
        short[index] += np.where(now > pool.spares, end - clock[index], 0.0)
        clock[index] = end
        moving = end < mission_time
        after = np.where(rng.random(index.size) * total < birth[now], now + 1, now - 1)
        level[index[moving]] = after[moving]
        reached[index[moving]] |= after[moving] > pool.spares
        alive[index[~moving]] = False
    return reached, short


def test_mission_figures_agree_with_a_seeded_monte_carlo_run():
    pool = SparesPool(units=3, spares=1, failure_rate=0.2, repair_rate=0.5, crews=1, warm_failure_rate=0.05)
    reached, short = simulate(pool, 20.0, failed=1, paths=20_000, seed=20240611)
    low, high = wilson_interval(int(reached.sum()), reached.size, confidence=0.999)
    assert low <= pool.shortage_probability(20.0, failed=1) <= high
    # mean time short within four standard errors (normal interval for a mean; common practice)
    error = short.std(ddof=1) / math.sqrt(short.size)
    assert abs(pool.expected_shortage_time(20.0, failed=1) - short.mean()) < 4 * error


def test_failed_law_over_time_runs_to_the_long_run_law():
    pool = SparesPool(units=4, spares=2, failure_rate=0.05, repair_rate=0.5, crews=1, warm_failure_rate=0.01)
    law = pool.failed_law([0.0, 5.0, 2000.0], failed=2)
    assert law.probs[0].tolist() == [0, 0, 1, 0, 0, 0, 0] and law.failed.tolist() == list(range(7))
    assert law.probs[-1] == pytest.approx(pool.chain.steady_state(), rel=1e-10)
    assert law.shortage[-1] == pytest.approx(pool.unavailability(), rel=1e-10)
    assert law.covered[-1] == pytest.approx(pool.availability(), rel=1e-13)
    # a year of missions: the share of time short tends to the unavailability
    split = pool.shortage_time(8760.0)
    assert split.short / 8760.0 == pytest.approx(pool.unavailability(), rel=2e-3)
    assert split.short + split.covered == pytest.approx(8760.0, rel=1e-13)


def test_forty_units_a_year_of_days_stays_consistent():
    # realistic size: 40 units, one failure in 50 days each, repairs of 4 days, 3 crews, a year
    pool = SparesPool(units=40, spares=6, failure_rate=0.02, repair_rate=0.25, crews=3, warm_failure_rate=0.002)
    risk, safe = pool.shortage_split(365.0)
    assert 0 < risk < 1 and risk + safe == pytest.approx(1.0, abs=1e-15)
    generator = np.diag(pool.shortage_chain.birth[:-1], 1) + np.diag(pool.shortage_chain.death[1:], -1)
    generator -= np.diag(generator.sum(axis=1))
    assert risk == pytest.approx(linalg.expm(generator * 365.0)[0, -1], rel=1e-9)  # scipy.linalg.expm
    assert pool.expected_operating() <= 40 and pool.expected_units_short() >= 0
    assert pool.expected_operating() + pool.expected_units_short() == pytest.approx(40.0, rel=1e-14)


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
    warm_share=st.sampled_from([0.0, 0.3, 1.0]),
    mission_time=st.floats(0.0, 50.0),
)
def test_pool_laws_are_probabilities(units, spares, failure_rate, repair_rate, crews, warm_share, mission_time):
    pool = SparesPool(units, spares, failure_rate, repair_rate, crews, warm_share * failure_rate)
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
    split = pool.shortage_time(mission_time)
    assert split.short >= 0 and split.covered >= 0
    assert split.short + split.covered == pytest.approx(mission_time, rel=1e-12, abs=1e-300)
    assert 0 <= pool.expected_operating() <= units and pool.shortage_frequency() >= 0


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
        (
            "warm_failure_rate",
            -0.01,
            r"warm_failure_rate must be a finite number from 0 \(cold spares\) to failure_rate",
        ),
        ("warm_failure_rate", 0.06, r"to failure_rate \(0.05, hot spares\); got 0.06"),
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


def test_hot_spares_with_one_busy_crew_leave_a_poisson_number_in_working_order():
    # 10,000 hot spares, one crew always busy: the units in working order form an M/M/inf queue
    # (repairs arrive at rate 2, each unit leaves at rate 1), so their number is Poisson(2) and the
    # pool is short only when none works: 1 - e^-2 available (common practice: M/M/inf is Poisson)
    pool = SparesPool(units=1, spares=10_000, failure_rate=1.0, repair_rate=2.0, crews=1, warm_failure_rate=1.0)
    assert pool.availability() == pytest.approx(-math.expm1(-2.0), rel=1e-13)
    assert pool.unavailability() == pytest.approx(math.exp(-2.0), rel=1e-13)
    cold = SparesPool(units=1, spares=10_000, failure_rate=1.0, repair_rate=2.0, crews=1)
    # cold: one unit fails at rate 1, the crew repairs at 2: short only with all 10,001 down, about 2^-10001
    assert cold.unavailability() == 0.0 and cold.availability() == 1.0  # below the float range, not NaN
    assert cold.mean_time_to_shortage() == math.inf  # past the float range


def test_rates_at_their_limits_keep_the_tiny_side():
    # 100,000 units failing once in 1e12 h, repaired in 1e-12 h: pi_k / pi_0 = (1e5 x 1e-12 / 1e12)^k
    # for k <= 6 (one crew), so six spares give an unavailability of about 1e-114.
    # Reference: the product form in mpmath at 50 digits over the first 30 levels (the rest is below 1e-500)
    pool = SparesPool(units=100_000, spares=5, failure_rate=1e-12, repair_rate=1e12, crews=1)
    mpmath.mp.dps = 50
    weights = [mpmath.mpf(1)]
    for k in range(1, 30):
        weights.append(
            weights[-1] * mpmath.mpf(float(pool.chain.birth[k - 1])) / mpmath.mpf(float(pool.chain.death[k]))
        )
    expected = mpmath.fsum(weights[6:]) / mpmath.fsum(weights)
    assert pool.unavailability() == pytest.approx(float(expected), rel=1e-12)
    assert pool.expected_units_short() == pytest.approx(
        float(mpmath.fsum((k - 5) * w for k, w in enumerate(weights) if k > 5) / mpmath.fsum(weights)), rel=1e-12
    )
    # the mission is priced before any work: ten million repairs on 100,006 levels are refused, naming the knob
    with pytest.raises(wm.ComputeTooLarge, match="shorten the mission"):
        pool.shortage_time(1e-5)
