"""The fit page's computations (planner/history/fit.py) against outside references.

- The risk from the fitted laws against a slow, obviously correct chain over every stock level, its
  change law the direct convolution of two scipy.stats.poisson pmfs (the difference of two Poisson
  counts), with the rules written out by hand. Not scipy.stats.skellam: its survival function, through
  the noncentral chi-square, came out 1.2 % off at 1e-14 here, where mpmath's 40-digit sum agrees with
  the engine to 2e-11.
- The draws chosen against walkmath's own price of them (risk_band_work, the engine's cost model).
- The observed change law against exact fractions (add-one-half smoothing as its docstring states it).
- Weekday factors against per-weekday means computed with numpy.
"""

import datetime
import math
from fractions import Fraction

import numpy as np
import pytest
from scipy import stats

import walkmath as wm
from planner.history.fit import (
    MAX_DRAWS,
    MIN_DRAWS,
    PILOT_MARGIN,
    RangeInputs,
    RangeJob,
    fit_history,
    fitted_laws,
    weekday_factors,
)
from tests.planner.history.conftest import levels_csv, movements_csv, parse

CAP = 1_200_000_000


def brute_force_risk(arrivals_mean, demand_mean, *, start, high, horizon):
    """Stock-out and overflow by each period, lost sales at 0 and spill at ``high``: a dense loop over
    levels 0..high. Each curve adds the mass leaving its own chain (sums of non-negative terms)."""
    counts = np.arange(400)  # Poisson(12) beyond 400: below 1e-300
    chances = np.convolve(stats.poisson.pmf(counts, arrivals_mean), stats.poisson.pmf(counts, demand_mean)[::-1])
    changes = np.arange(-counts[-1], counts[-1] + 1)
    levels = np.arange(high + 1)
    # Each tail a sum of non-negative terms: P(change < -level) and P(change > high - level).
    below = np.array([math.fsum(chances[changes < -level]) for level in levels])  # a stock-out from this level
    above = np.array([math.fsum(chances[changes > high - level]) for level in levels])  # an overflow
    move = np.zeros((high + 1, high + 1))  # move[l, m]: from l to m without leaving 0..high
    for level in levels:
        inside = (level + changes >= 0) & (level + changes <= high)
        np.add.at(move[level], level + changes[inside], chances[inside])
    no_stockout = np.zeros(high + 1)
    no_overflow = np.zeros(high + 1)
    no_stockout[start] = no_overflow[start] = 1.0
    stockout, overflow = [0.0], [0.0]
    for _ in range(horizon):
        stockout.append(stockout[-1] + float(no_stockout @ below))
        overflow.append(overflow[-1] + float(no_overflow @ above))
        # Without a stock-out yet, an overflow spills to high; without an overflow yet, a stock-out is lost at 0.
        no_stockout, no_overflow = (
            no_stockout @ move + np.eye(high + 1)[high] * float(no_stockout @ above),
            no_overflow @ move + np.eye(high + 1)[0] * float(no_overflow @ below),
        )
    return np.array(stockout), np.array(overflow)


@pytest.fixture(scope="module")
def fit():
    found = fit_history(parse(movements_csv()))
    assert [side.choice for side in found.sides] == ["poisson", "poisson"]  # the shape these checks assume
    return found


def test_the_risk_from_the_fitted_laws_against_a_dense_chain(fit):
    result = RangeJob(fit, RangeInputs(start=20, high=60, horizon=30)).run(CAP)
    arrivals, demand = fit.history.arrivals.mean(), fit.history.demand.mean()
    stockout, overflow = brute_force_risk(arrivals, demand, start=20, high=60, horizon=30)
    np.testing.assert_allclose(result.outlook.stockout[1:], stockout[1:], rtol=1e-9)
    np.testing.assert_allclose(result.outlook.overflow[1:], overflow[1:], rtol=1e-9)
    assert result.stockout > 1e-4 and result.overflow > 1e-4  # both curves carry real mass here


def test_without_a_capacity_the_stockout_curve_is_the_same_first_stockout(fit):
    # A stock-out curve counts the first stock-out only (DESIGN.md section 3), so stopping the path there
    # gives the same curve as lost sales; against the dense chain with a capacity too high to be reached.
    result = RangeJob(fit, RangeInputs(start=10, high=None, horizon=12)).run(CAP)
    stockout, _ = brute_force_risk(
        fit.history.arrivals.mean(), fit.history.demand.mean(), start=10, high=400, horizon=12
    )
    np.testing.assert_allclose(result.outlook.stockout[1:], stockout[1:], rtol=1e-9)
    assert result.overflow is None


def test_the_draws_are_what_the_budget_affords_by_the_engines_own_price(fit):
    job = RangeJob(fit, RangeInputs(start=20, high=60, horizon=30))
    result = job.run(CAP)
    band = result.band
    assert MIN_DRAWS <= band.draws <= MAX_DRAWS and band.draws == min(result.affordable, MAX_DRAWS)
    price = wm.risk_band_work(**job._band_args(band.draws)).units
    headline = job.walk().cost(30, "outlook").units
    assert headline + price <= CAP  # the whole request within the page's cap
    assert result.budget == CAP - headline
    # The margin is not waste: the chosen draws cost at least 1 / margin of the budget unless capped at the most.
    assert band.draws == MAX_DRAWS or price * PILOT_MARGIN * 1.2 >= result.budget
    assert band.seed == 1 and 0 <= band.stockout_interval[0] <= band.stockout_interval[1] <= 1


def test_the_same_seed_gives_the_same_range(fit):
    inputs = RangeInputs(start=20, high=60, horizon=30)
    first, second = RangeJob(fit, inputs).run(CAP).band, RangeJob(fit, inputs).run(CAP).band
    assert first.draws == second.draws
    np.testing.assert_array_equal(first.stockout_high, second.stockout_high)


def test_too_small_a_budget_for_the_draws_leaves_the_range_out_and_says_why(fit):
    job = RangeJob(fit, RangeInputs(start=20, high=60, horizon=30))
    headline = job.walk().cost(30, "outlook").units
    result = job.run(headline + 5 * result_unit(job))
    assert result.band is None and result.affordable < MIN_DRAWS
    assert result.refusal.startswith("A credible range needs at least 20 draws")
    assert result.refusal.endswith("shorten the horizon or lower the capacity.")


def result_unit(job) -> int:
    """A draw's price as the job learns it: the growth from 10 to 20 draws (batched sweeps have a fixed part)."""
    growth = wm.risk_band_work(**job._band_args(20)).units - wm.risk_band_work(**job._band_args(10)).units
    return math.ceil(growth / 10 * PILOT_MARGIN)


def test_too_small_a_budget_for_the_risk_itself_is_refused_before_any_sweep(fit, monkeypatch):
    def never(*args, **kwargs):
        raise AssertionError("a sweep ran before the refusal")

    monkeypatch.setattr(wm.BandedWalk, "outlook", never)
    with pytest.raises(wm.ComputeTooLarge, match="set a capacity, shorten the horizon or lower the start stock"):
        RangeJob(fit, RangeInputs(start=20, high=None, horizon=30)).run(1000)


def test_a_cheap_range_uses_the_most_draws():
    found = fit_history(parse(levels_csv()))
    result = RangeJob(found, RangeInputs(start=10, high=20, horizon=5)).run(CAP)
    assert result.affordable > MAX_DRAWS and result.band.draws == MAX_DRAWS


def test_the_observed_change_law_against_exact_fractions():
    history = parse(levels_csv())
    laws = fitted_laws(fit_history(history), source="Oat flour bin")
    changes = np.diff(history.levels)
    span = range(int(changes.min()), int(changes.max()) + 1)
    counts = {step: int(np.count_nonzero(changes == step)) for step in span}
    total = Fraction(len(changes)) + Fraction(1, 2) * len(span)
    exact = {step: (counts[step] + Fraction(1, 2)) / total for step in span}  # add one half to every change seen
    assert [step for step, _ in laws.change_table] == list(span)
    for step, chance in laws.change_table:
        assert chance == pytest.approx(float(exact[step]), rel=1e-12)
    assert laws.arrivals is None and laws.demand is None and laws.shape == "levels"


def test_weekday_factors_against_numpy_means_from_the_plans_first_day():
    rng = np.random.default_rng(11)
    days = 70
    start = datetime.date(2025, 3, 3)  # a Monday
    weekdays = np.array([(start + datetime.timedelta(days=i)).weekday() for i in range(days)])
    out = rng.poisson(np.where(weekdays == 5, 30.0, 12.0))  # Saturdays busy
    data = "date,in,out\n" + "".join(f"{start + datetime.timedelta(days=i)},10,{v}\n" for i, v in enumerate(out))
    found = fit_history(parse(data.encode()))
    assert found.profile.supported
    means = np.array([out[weekdays == d].mean() for d in range(7)])
    first = (start + datetime.timedelta(days=days)).weekday()  # the day after the history ends
    assert first == found.first_plan_weekday == 0
    expected = [round(means[(first + i) % 7] / out.mean(), 3) for i in range(7)]
    assert weekday_factors(found.profile, first) == pytest.approx(expected, abs=1e-12)
    laws = fitted_laws(found, source="x", weekday_pattern=True)
    assert laws.weekday_factors == weekday_factors(found.profile, first) and laws.first_weekday == "Monday"
    assert laws.demand["mean"] == pytest.approx(out.mean(), rel=1e-12)
    assert fitted_laws(found, source="x").weekday_factors == ()  # only when asked for


def test_weekly_rows_and_short_histories_have_no_weekday_test():
    weekly = fit_history(parse(b"date,in,out\n2025-03-03,30,29\n2025-03-10,31,28\n2025-03-17,29,30\n", "week"))
    assert weekly.profile is None and weekly.profile_note.startswith("Weekly rows")
    short = fit_history(parse(movements_csv(days=20)))
    assert short.profile is None and "at least 4 of each weekday" in short.profile_note
