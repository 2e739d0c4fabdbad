"""Weekday profiles of daily counts and their likelihood-ratio test (walkmath/profile.py)."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import optimize, stats

import walkmath as wm

DAYS = 728  # 104 whole weeks
WEEKDAYS = np.arange(DAYS) % 7  # the history starts on a Monday
# Bread crates sent out per day: the Saturday market is busy, Sunday quiet
MARKET_WEEK = np.array([20.0, 20.0, 21.0, 22.0, 26.0, 38.0, 6.0])


def test_poisson_profile_test_against_scipy_likelihoods():
    counts = np.random.default_rng(71).poisson(MARKET_WEEK[WEEKDAYS])
    profile = wm.weekday_profile(counts, WEEKDAYS)
    means = np.array([counts[day::7].mean() for day in range(7)])  # day 0 is a Monday
    np.testing.assert_allclose(profile.means, means, rtol=1e-15)
    # both maximised log-likelihoods from scipy.stats.poisson.logpmf; statistic and p-value from chi2(6)
    weekly = stats.poisson.logpmf(counts, means[WEEKDAYS]).sum()
    flat = stats.poisson.logpmf(counts, counts.mean()).sum()
    assert profile.loglik == pytest.approx(weekly, rel=1e-12)
    assert profile.flat_loglik == pytest.approx(flat, rel=1e-12)
    assert profile.statistic == pytest.approx(2 * (weekly - flat), rel=1e-9)
    assert profile.p_value == pytest.approx(stats.chi2.sf(2 * (weekly - flat), 6), rel=1e-6, abs=1e-300)
    assert profile.supported and profile.degrees_of_freedom == 6 and profile.days == (104,) * 7


def test_negative_binomial_profile_against_a_full_numerical_maximisation():
    rng = np.random.default_rng(72)
    size = 6.0
    means = MARKET_WEEK[WEEKDAYS]
    counts = rng.negative_binomial(size, size / (size + means))
    profile = wm.weekday_profile(counts, WEEKDAYS, family="negative_binomial")

    # scipy.optimize over all eight parameters (seven log means, one log size) of scipy's nbinom.logpmf
    def minus_loglik(theta):
        day_means, shared = np.exp(theta[:7])[WEEKDAYS], math.exp(theta[7])
        return -stats.nbinom.logpmf(counts, shared, shared / (shared + day_means)).sum()

    start = np.append(np.log(MARKET_WEEK), math.log(4.0))
    best = optimize.minimize(minus_loglik, start, method="L-BFGS-B", options={"ftol": 1e-15, "gtol": 1e-10})
    assert profile.loglik >= -best.fun - 1e-7  # ours is the maximum
    assert profile.loglik == pytest.approx(-best.fun, abs=1e-5)
    assert profile.size == pytest.approx(math.exp(best.x[7]), rel=1e-3)
    flat = wm.fit_count_law(counts, family="negative_binomial")
    assert profile.flat_loglik == pytest.approx(flat.loglik, rel=1e-14)
    assert profile.supported


def test_no_profile_in_a_flat_week_at_about_the_tests_level():
    # Under one law for every day the test rejects at 5 % about 5 % of the time (Wilks 1938), exact
    # binomial test on the rejection count.
    rng = np.random.default_rng(73)
    trials = 200
    rejected = sum(wm.weekday_profile(rng.poisson(22.0, DAYS), WEEKDAYS).p_value < 0.05 for _ in range(trials))
    assert stats.binomtest(rejected, trials, 0.05).pvalue > 0.001, rejected


def test_cycle_lines_the_laws_up_with_the_first_day_and_a_closed_day_is_zero():
    counts = np.random.default_rng(74).poisson(MARKET_WEEK[WEEKDAYS] * (WEEKDAYS != 6))  # closed Sundays
    profile = wm.weekday_profile(counts, WEEKDAYS)
    assert profile.means[6] == 0.0 and profile.laws[6].probs.tolist() == [1.0]
    cycle = profile.cycle(first_weekday=5)  # a plan starting on a Saturday
    assert cycle[0] is profile.laws[5] and cycle[1] is profile.laws[6] and cycle[2] is profile.laws[0]
    # the cycle drives a walk as a list of laws used in turn, one per day
    walk = wm.BandedWalk(cycle, start=200, low=0)
    assert walk.outlook(14).stockout[-1] >= 0.0


def test_profile_refusals():
    counts = np.ones(20, dtype=int)
    with pytest.raises(ValueError, match="at least 4 of each weekday; the history has 2 Sunday"):
        wm.weekday_profile(counts, np.arange(20) % 7)
    with pytest.raises(ValueError, match="weekdays must name one weekday per count"):
        wm.weekday_profile(counts, np.arange(19) % 7)
    with pytest.raises(ValueError, match=r"weekdays must be whole numbers from 0 \(Monday\) to 6 \(Sunday\)"):
        wm.weekday_profile(counts, np.arange(20) % 8)
    with pytest.raises(ValueError, match="first_weekday must be a whole number from 0 to 6"):
        wm.weekday_profile(np.ones(28, dtype=int), np.arange(28) % 7).cycle(7)
