"""The rate-table pool's job (RateTableJob.run) against the spares pool, closed forms in exact fractions and mpmath."""

from fractions import Fraction
from math import factorial

import mpmath
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from planner.kinds.rate_table.compute import REPAIR_SPEEDS, RateTableJob
from planner.kinds.rate_table.forms import parse_rate_table
from planner.kinds.rate_table.params import RateTableParams
from tests.planner.kinds.rate_table.examples import MIXERS
from tests.walkmath.exact import mp_generator, solve_exact, spares_pool_law
from walkmath import ComputeTooLarge, SparesPool


def run_all(params, risk_target):
    """Every part of the page, as the read service runs it when the budget allows all of them."""
    job = RateTableJob(params, risk_target)
    return job.run({part.name: part.units for part in job.parts()})


def exact_mean_times(failure, repair, shortage_at):
    """E[time to reach ``shortage_at``] from each level below it: the first-step equations
    (b_k + d_k) m_k - b_k m_(k+1) - d_k m_(k-1) = 1, m_(shortage_at) = 0, solved in Fractions
    (independent of the engine's passage recursion)."""
    rows = [[Fraction(0)] * (shortage_at + 1) for _ in range(shortage_at)]
    for k in range(shortage_at):
        up, down = Fraction(failure[k]), Fraction(repair[k]) if k > 0 else Fraction(0)
        rows[k][k] = up + down
        if k + 1 < shortage_at:
            rows[k][k + 1] = -up
        if k > 0:
            rows[k][k - 1] = -down
        rows[k][shortage_at] = Fraction(1)
    return solve_exact(rows)


def mp_mission_risk(pool, start, mission, dps=40):
    """P(a shortage by ``mission``) from ``start``: mpmath.expm of the chain stopped at the first shortage."""
    mpmath.mp.dps = dps
    chain = pool.shortage_chain
    return float(mpmath.expm(mp_generator(chain) * mpmath.mpf(mission))[start, chain.top])


# -- a rate table that reproduces a spares pool ----------------------------------------------------

# 4 units needed, 2 warm spares (MTBF 500 h in service, 2,000 h on standby), 2 crews of mean repair
# 40 h: the rates of each row spelled out from the design notes (section 3) and typed as an
# engineer would, in decimals.
SPARES_TABLE = """
0: 0.009, 0
1: 0.0085, 0.025
2: 0.008, 0.05
3: 0.006, 0.05
4: 0.004, 0.05
5: 0.002, 0.05
6: 0, 0.05
"""


def test_a_table_typed_from_a_spares_pool_gives_the_spares_pools_figures():
    failure, repair = parse_rate_table(SPARES_TABLE)
    params = RateTableParams(failure_rates=failure, repair_rates=repair, shortage_at=3, mission=300.0)
    result = run_all(params, 0.05)
    spares = SparesPool(
        units=4, spares=2, failure_rate=1 / 500, repair_rate=1 / 40, crews=2, warm_failure_rate=1 / 2000
    )
    # the same chain up to the last bit of the typed decimals (cross-check against walkmath.SparesPool)
    assert np.allclose(result.pool.chain.birth, spares.chain.birth, rtol=1e-15, atol=0)
    assert np.allclose(result.pool.chain.death, spares.chain.death, rtol=1e-15, atol=0)
    same = {"rel": 1e-12}
    assert result.availability == pytest.approx(spares.availability(), **same)
    assert result.unavailability == pytest.approx(spares.unavailability(), **same)
    assert result.mean_time_to_shortage == pytest.approx(spares.mean_time_to_shortage(), **same)
    assert result.shortage_frequency == pytest.approx(spares.shortage_frequency(), **same)
    assert result.mean_shortage_duration == pytest.approx(spares.mean_shortage_duration(), **same)
    assert result.mission_risk == pytest.approx(spares.shortage_probability(300.0), **same)
    assert result.mission_safe == pytest.approx(spares.no_shortage_probability(300.0), **same)
    assert result.time_split.short == pytest.approx(spares.shortage_time(300.0).short, **same)
    assert result.expected_failed == pytest.approx(spares.rates.expected_failed(), **same)
    # and both against the product form in exact Fractions (tests/walkmath/exact.py, Kleinrock §3.1)
    exact = spares_pool_law(4, 2, Fraction(1, 500), Fraction(1, 40), 2, Fraction(1, 2000))
    assert result.unavailability == pytest.approx(float(sum(exact[3:])), rel=1e-10)
    law = spares.failed_law(result.times)
    assert np.allclose(result.failed_law.probs, law.probs, rtol=1e-12, atol=1e-300)
    for failed in result.by_start["failed"].tolist():
        assert result.by_start["risk"][failed] == pytest.approx(spares.shortage_probability(300.0, failed), **same)
        assert result.by_start["mean_time"][failed] == pytest.approx(spares.mean_time_to_shortage(failed), **same)


# -- queueing special cases as tables ---------------------------------------------------------------


def test_mm1k_queue_as_a_table_matches_its_closed_form_in_exact_fractions():
    # M/M/1/K with arrival rate 3/4 and service rate 5/4 (both exact in binary), K = 6: level = number in
    # the system, "short" = full. Closed forms from memory (the standard M/M/1/K results, e.g. Gross and
    # Harris, Fundamentals of Queueing Theory, §2.5): p_n = (1 - r) r^n / (1 - r^(K+1)), r = lambda / mu;
    # L = r / (1 - r) - (K + 1) r^(K+1) / (1 - r^(K+1)).
    arrival, service, top = Fraction(3, 4), Fraction(5, 4), 6
    r = arrival / service
    p = [(1 - r) * r**n / (1 - r ** (top + 1)) for n in range(top + 1)]
    mean_in_system = r / (1 - r) - (top + 1) * r ** (top + 1) / (1 - r ** (top + 1))
    assert sum(p) == 1 and sum(n * q for n, q in enumerate(p)) == mean_in_system  # the two forms agree
    params = RateTableParams(
        failure_rates=(0.75,) * top + (0.0,), repair_rates=(0.0,) + (1.25,) * top, shortage_at=top, mission=10.0
    )
    result = run_all(params, 0.5)
    assert result.unavailability == pytest.approx(float(p[top]), rel=1e-12)
    assert result.availability == pytest.approx(float(1 - p[top]), rel=1e-12)
    assert result.long_run_law == pytest.approx([float(q) for q in p], rel=1e-12)
    assert result.expected_failed == pytest.approx(float(mean_in_system), rel=1e-12)
    # arrivals that find one place left fill it: lambda p_(K-1) a unit time; a full system empties a place
    # after 1 / mu on average (the only way out of K)
    assert result.shortage_frequency == pytest.approx(float(arrival * p[top - 1]), rel=1e-12)
    assert result.mean_shortage_duration == pytest.approx(float(1 / service), rel=1e-14)
    mean_times = exact_mean_times(params.failure_rates, params.repair_rates, top)
    assert result.mean_time_to_shortage == pytest.approx(float(mean_times[0]), rel=1e-12)
    assert result.by_start["mean_time"] == pytest.approx([float(m) for m in mean_times], rel=1e-12)
    assert result.mission_risk == pytest.approx(mp_mission_risk(result.pool, 0, 10.0), rel=1e-10)


def erlang_loss(channels: int, load: Fraction) -> Fraction:
    """Erlang's loss formula B = (A^c / c!) / sum_(k<=c) A^k / k!, in Fractions (from memory; common practice)."""
    terms = [load**k / factorial(k) for k in range(channels + 1)]
    return terms[-1] / sum(terms)


@pytest.mark.parametrize(("channels", "arrival", "service"), [(8, 2.5, 0.5), (3, 0.125, 0.25), (20, 1.0, 0.125)])
def test_erlang_loss_as_a_table_matches_erlangs_formula(channels, arrival, service):
    # level = lines busy, arrivals at rate lambda while a line is free, each busy line clears at rate mu;
    # "short" = every line busy. Unavailability = B(c, lambda / mu); a spell with every line busy lasts
    # 1 / (c mu) on average (the only way out).
    params = RateTableParams(
        failure_rates=(arrival,) * channels + (0.0,),
        repair_rates=tuple(k * service for k in range(channels + 1)),
        shortage_at=channels,
        mission=24.0,
    )
    result = run_all(params, 0.5)
    blocking = erlang_loss(channels, Fraction(arrival) / Fraction(service))
    assert result.unavailability == pytest.approx(float(blocking), rel=1e-12)
    assert result.availability == pytest.approx(float(1 - blocking), rel=1e-12)
    assert result.mean_shortage_duration == pytest.approx(1 / (channels * service), rel=1e-14)
    mean_times = exact_mean_times(params.failure_rates, params.repair_rates, channels)
    assert result.mean_time_to_shortage == pytest.approx(float(mean_times[0]), rel=1e-12)


def test_a_rare_shortage_keeps_its_relative_accuracy():
    # Erlang loss with 40 lines at load 4: B is about 1e-25, far below what 1 - availability could show
    blocking = erlang_loss(40, Fraction(4))
    assert 1e-27 < blocking < 1e-22
    params = RateTableParams(
        failure_rates=(4.0,) * 40 + (0.0,), repair_rates=tuple(float(k) for k in range(41)), shortage_at=40, mission=5.0
    )
    result = run_all(params, 0.01)
    assert result.unavailability == pytest.approx(float(blocking), rel=1e-10)
    assert result.mission_risk == pytest.approx(mp_mission_risk(result.pool, 0, 5.0, dps=60), rel=1e-8)
    assert result.mission_risk > 0 and result.mission_safe == 1.0


# -- the page's own figures -----------------------------------------------------------------------


def test_figures_by_repair_speed_are_monotone_and_the_recommendation_is_the_slowest_meeting_both():
    result = run_all(MIXERS, 0.05)
    curve = result.speeds
    assert curve.complete and curve.speeds.tolist() == list(REPAIR_SPEEDS)
    assert (np.diff(curve.availability) >= 0).all() and (np.diff(curve.unavailability) <= 0).all()
    assert (np.diff(curve.risk) <= 0).all() and (np.diff(curve.safe) >= 0).all()
    assert curve.unavailability[curve.at(1.0)] == result.unavailability
    # each speed against exact Fractions (product form) and mpmath (the stopped chain's expm)
    meets = []
    for speed in REPAIR_SPEEDS:
        weights = [Fraction(1)]
        for k in range(1, 5):
            weights.append(
                weights[-1] * Fraction(MIXERS.failure_rates[k - 1]) / Fraction(MIXERS.repair_rates[k] * speed)
            )
        short = sum(weights[2:]) / sum(weights)
        index = curve.at(speed)
        assert curve.unavailability[index] == pytest.approx(float(short), rel=1e-12)
        risk = mp_mission_risk(MIXERS.pool(repair_speed=speed), 0, 168.0)
        assert curve.risk[index] == pytest.approx(risk, rel=1e-10)
        meets.append(short <= Fraction(5, 1000) and risk <= 0.05)
    slowest = REPAIR_SPEEDS[meets.index(True)]
    assert result.speed_needed == slowest == 1.5
    assert not result.meets_availability and not result.meets_risk
    assert result.recommendation.startswith("As tabled the pool is available 99 % of the time, below the 99.5 % target")
    assert "repairs 1.5 times as fast at every number failed would meet both targets" in result.recommendation


def test_a_pool_meeting_both_targets_says_how_slow_repairs_could_be():
    result = run_all(MIXERS.scaled(repair=2.0), 0.05)
    assert result.meets_availability and result.meets_risk and result.speed_needed == 0.75
    assert result.recommendation.startswith("The pool as tabled meets both targets")
    assert result.recommendation.endswith("repairs at 0.75 of their tabled speed would still meet both.")


def test_a_pool_no_repair_speed_can_save_says_so():
    # the mission target is below the chance that the first failures come before any repair can help
    result = run_all(MIXERS.replace(mission=2000.0), 0.0001)
    assert result.speeds.complete and result.speed_needed is None
    assert "even repairs 10 times as fast would not meet both targets" in result.recommendation


def test_the_mission_starts_with_the_units_stated_failed():
    result = run_all(MIXERS.replace(start_failed=1), 0.05)
    pool = MIXERS.pool()
    assert result.mission_risk == pytest.approx(pool.shortage_probability(168.0, failed=1), rel=1e-13)
    assert result.failed_law.probs[0].tolist() == [0.0, 1.0, 0.0, 0.0, 0.0]
    assert result.mean_time_to_shortage == pool.mean_time_to_shortage(failed=1)
    assert result.start_words == "1 unit already failed"


def test_parts_left_out_for_lack_of_budget_say_so():
    job = RateTableJob(MIXERS, 0.05)
    result = job.run({part.name: part.units for part in job.parts() if part.required})
    assert result.by_start is None and result.speeds is None and result.speed_needed is None
    assert len(result.left_out) == 2 and result.speeds_note.startswith("not worked out")
    assert result.recommendation.endswith("how much faster repairs would need to be was too much work for one request.")
    cheap = job._speed_price(0.25) + job._speed_price(0.5)
    partial = job.run({part.name: part.units for part in job.parts() if part.required} | {"speeds": cheap})
    assert partial.speeds.speeds.tolist() == [0.25, 0.5] and not partial.speeds.complete


def test_a_realistic_pool_fits_one_request():
    # 60 delivery bikes, short with 8 or more off the road, a workshop whose two fitters are joined by a
    # third once 5 are waiting; failures once in 200 days per bike; a year's mission, counted in days
    failure = tuple(float((60 - k) / 200) for k in range(60)) + (0.0,)
    repair = (0.0,) + tuple(0.5 * min(k, 2 if k < 5 else 3) for k in range(1, 61))
    params = RateTableParams(failure_rates=failure, repair_rates=repair, shortage_at=8, mission=365.0, time_unit="day")
    job = RateTableJob(params, 0.05)
    assert sum(part.units for part in job.parts() if part.required) < 5_000_000_000  # the server's default cap
    result = run_all(params, 0.05)
    assert result.availability + result.unavailability == 1.0
    assert (np.diff(result.mission.reached) >= 0).all() and (np.diff(result.mission.not_reached) <= 0).all()
    assert 0 < result.mission_risk < 1 and result.speeds.complete
    assert result.failed_law.probs.sum(axis=1) == pytest.approx(1.0, abs=1e-12)


def test_a_pool_too_large_for_one_request_is_refused_in_the_planners_words():
    params = RateTableParams(
        failure_rates=(1e6,) * 1000 + (0.0,), repair_rates=(0.0,) + (1e6,) * 1000, shortage_at=900, mission=1e7
    )
    job = RateTableJob(params, 0.05)
    with pytest.raises(ComputeTooLarge):
        params.pool().cost("failed_law", times=[1e7]).check()
    units = sum(part.units for part in job.parts() if part.required)
    assert units > 5_000_000_000  # priced over the server's default cap, so the read service refuses it
    message = job.refusal(units, 5_000_000_000)
    assert "too large to work out in one request: 1,001 rows, with up to about 2 × 10¹³ failures" in message
    assert "shorten the mission" in message


rates = st.floats(min_value=0.01, max_value=10.0, allow_nan=False)


def columns(size: int):
    return st.lists(rates, min_size=size, max_size=size)


@settings(max_examples=40, deadline=None)
@given(
    table=st.integers(min_value=2, max_value=7).flatmap(lambda rows: st.tuples(*[columns(rows - 1)] * 2)),
    data=st.data(),
    mission=st.floats(min_value=0.01, max_value=50.0),
)
def test_any_small_table_gives_probabilities_and_monotone_curves(table, data, mission):
    failure, repair = table
    params = RateTableParams(
        failure_rates=(*failure, 0.0),
        repair_rates=(0.0, *repair),
        shortage_at=data.draw(st.integers(min_value=1, max_value=len(failure))),
        mission=mission,
    )
    result = run_all(params, 0.05)
    for value in (result.availability, result.unavailability, result.mission_risk, result.mission_safe):
        assert 0.0 <= value <= 1.0
    assert abs(result.availability + result.unavailability - 1.0) <= 2**-52
    assert (np.diff(result.mission.reached) >= 0).all() and (np.diff(result.mission.not_reached) <= 0).all()
    by_start = result.by_start
    assert (np.diff(by_start["risk"]) >= 0).all() and (np.diff(by_start["safe"]) <= 0).all()
    assert (np.diff(by_start["mean_time"]) <= 0).all()
    curve = result.speeds
    assert (np.diff(curve.unavailability) <= 0).all() and (np.diff(curve.risk) <= 0).all()
    assert result.failed_law.probs.min() >= 0 and result.time_split.short >= 0


def test_the_longest_table_works_out_and_one_row_more_is_refused():
    # 1,001 rows (0 to 1,000 failed), the most the form and the parameters take, on a short mission
    failure = tuple(float(1000 - k) * 1e-3 for k in range(1000)) + (0.0,)
    repair = (0.0,) + (0.5,) * 1000
    result = run_all(RateTableParams(failure_rates=failure, repair_rates=repair, shortage_at=5, mission=2.0), 0.05)
    assert result.long_run_law.size == 1001 and 0 < result.mission_risk < 1
    with pytest.raises(ValueError, match="rate table must have from 2 to 1,001 rows"):
        RateTableParams(failure_rates=(1.0, *failure), repair_rates=(0.0, *repair), shortage_at=5, mission=2.0)
