"""The spares pool's job (SparesJob.run) against textbook values, exact fractions and mpmath."""

from fractions import Fraction

import mpmath
import pytest

from planner.kinds.spares_pool.compute import SparesJob
from planner.kinds.spares_pool.params import SparesPoolParams
from tests.walkmath.exact import mp_generator, spares_pool_law
from walkmath import ComputeTooLarge, SparesPool


def run_all(params, risk_target):
    """Every part of the page, as the read service runs it when the budget allows all of them."""
    job = SparesJob(params, risk_target)
    return job.run({part.name: part.units for part in job.parts()})


def test_two_machines_one_repairer_on_the_page():
    # mean up-time 12 h, mean repair 8 h, both machines needed: P0, P1, P2 = 9/29, 12/29, 8/29
    # (classic textbook exercise, as given in the issue), so the pool is available 9/29 of the time
    params = SparesPoolParams(units=2, spares=0, failure=12.0, repair=8.0, mission=24.0)
    result = run_all(params, 0.5)
    assert result.availability == pytest.approx(9 / 29, rel=1e-14)
    assert result.unavailability == pytest.approx(20 / 29, rel=1e-14)
    assert result.expected_operating == pytest.approx((2 * 9 + 12) / 29, rel=1e-14)
    # shortages start at P0 x 2/12 an hour = 3/58 (hand-worked: level-crossing balance), 8760 h a year
    assert result.shortages_per_year == pytest.approx(8760 * 3 / 58, rel=1e-13)
    assert result.failed_law.probs[0].tolist() == [1.0, 0.0, 0.0]


def exact_needed(units, failure, repair, crews, availability, risk, mission):
    """Smallest spares meeting both targets: availability from the product form in Fractions, the
    mission risk from mpmath.expm of the stopped chain at 40 digits."""
    mpmath.mp.dps = 40
    for spares in range(30):
        law = spares_pool_law(units, spares, failure, repair, crews)
        if 1 - sum(law[spares + 1 :]) < availability:
            continue
        chain = SparesPool(units, spares, float(failure), float(repair), crews).shortage_chain
        if float(mpmath.expm(mp_generator(chain) * mission)[0, chain.top]) <= risk:
            return spares
    raise AssertionError("no spares count up to 29 meets the targets")


@pytest.mark.parametrize(
    ("units", "mtbf", "mean_repair", "crews", "availability", "risk", "mission"),
    [
        (3, 400, 24, 1, Fraction(999, 1000), 0.05, 200),  # the availability target decides
        (6, 2000, 48, 1, Fraction(99, 100), 0.001, 720),  # the mission target decides
        (4, 100, 10, 2, Fraction(9999, 10000), 0.01, 50),
    ],
)
def test_the_recommended_spares_are_the_fewest_meeting_both_targets(
    units, mtbf, mean_repair, crews, availability, risk, mission
):
    expected = exact_needed(units, Fraction(1, mtbf), Fraction(1, mean_repair), crews, availability, risk, mission)
    params = SparesPoolParams(
        units=units,
        spares=0,
        failure=mtbf,
        repair=mean_repair,
        crews=crews,
        mission=mission,
        availability_target=float(availability),
    )
    result = run_all(params, risk)
    assert result.spares_needed == expected
    assert result.recommendation.startswith(f"Keep {expected} spares ({expected} more than planned)")
    planned = run_all(params.replace(spares=expected + 2), risk)
    assert planned.meets_availability and planned.meets_risk and planned.spares_needed == expected
    assert planned.recommendation.startswith(f"The {expected + 2} spares planned meet both targets")


def test_crews_are_recommended_when_spares_alone_cannot_do_it():
    # hot spares with one slow crew: more spares only add failures for the crew to repair, so the
    # long-run availability levels off near 80 % whatever the spares (see tests/walkmath/test_sparesizing.py);
    # a second crew reaches 90 % with the 4 spares planned (exact fractions)
    params = SparesPoolParams(
        units=2, spares=4, failure=10.0, repair=1 / 0.3, standby="hot", mission=1.0, availability_target=0.9
    )
    result = run_all(params, 0.99)
    assert result.spares_for_availability is None and result.spares_needed is None
    exact = [1 - sum(spares_pool_law(2, 4, Fraction(1, 10), Fraction(3, 10), c, Fraction(1, 10))[5:]) for c in (1, 2)]
    assert exact[0] < Fraction(9, 10) <= exact[1]
    assert result.crews_needed == 2
    assert result.recommendation == (
        "No number of spares up to 1,000 meets both targets (availability of at least 90 % and at most 99 % risk "
        "of a shortage during a mission of 1 hour) with 1 repair crew; 2 repair crews with the 4 spares planned "
        "would."
    )


def test_figures_match_the_engine_and_each_other():
    params = SparesPoolParams(
        units=4, spares=2, failure=500.0, repair=40.0, crews=1, mission=300.0, standby="warm", standby_failure=2000.0
    )
    result = run_all(params, 0.05)
    pool = params.pool()
    # the page carries one sweep across 40 steps of the mission; a single sweep agrees to rounding
    assert result.mission_risk == pytest.approx(pool.shortage_probability(300.0), rel=1e-13)
    assert result.mission_safe == pytest.approx(pool.no_shortage_probability(300.0), rel=1e-13)
    assert result.time_split.short + result.time_split.covered == pytest.approx(300.0, rel=1e-13)
    assert result.by_start["failed"].tolist() == [0, 1, 2]
    assert result.by_start["risk"][2] == pool.shortage_probability(300.0, failed=2)
    assert result.by_start["mean_time"][1] == pool.mean_time_to_shortage(failed=1)
    own = result.spares_long_run[1]
    assert own.availability[2] == result.availability and set(result.spares_long_run) == {1, 2}
    assert result.failed_law.shortage[-1] == pytest.approx(float(sum(pool.failed_law([300.0]).probs[0][3:])))


def test_searches_left_out_for_lack_of_budget_say_so():
    params = SparesPoolParams(units=3, spares=1, failure=400.0, repair=24.0, mission=200.0)
    job = SparesJob(params, 0.05)
    required = {part.name: part.units for part in job.parts() if part.required}
    result = job.run(required)
    assert result.spares_risk is None and result.crews_risk is None and result.by_start is None
    assert any("mission risk by number of spares" in note for note in result.left_out)
    assert result.spares_note == "not worked out in this request (too much work)"
    assert result.spares_needed is None and "this request could work out" in result.recommendation


def test_a_pool_too_large_for_one_request_is_refused_in_the_planners_words():
    params = SparesPoolParams(units=4000, spares=100, failure=10.0, repair=1.0, crews=50, mission=100_000.0)
    job = SparesJob(params, 0.05)
    with pytest.raises(ComputeTooLarge):
        params.pool().cost("failed_law", times=[100_000.0]).check()
    units = sum(part.units for part in job.parts() if part.required)
    message = job.refusal(units, 1_200_000_000)
    assert "too large to work out in one request" in message and "shorten the mission" in message
    assert "within a mission of 100,000 hours" in message
