"""walkmath.repairlog: failure and repair rates from a repair log, their intervals and posteriors, and the
availability's credible range.

Outside references, named beside each check: scipy.stats (Poisson cdf and survival function, gamma and
exponential densities, binomial test), scipy.integrate.quad and scipy.optimize, exact rational arithmetic
(fractions) for the time in service, and the published forms cited where they are used.
"""

import math
from fractions import Fraction

import numpy as np
import pytest
from scipy import integrate, optimize, stats

import walkmath as wm
from walkmath.cost import ComputeTooLarge


def simulate_log(rng, *, units, failure_rate, repair_rate, span):
    """A log with plenty of spares: ``units`` always in service, so failures are a Poisson process of rate
    units x failure_rate over [0, span] (given their number, uniform order statistics), each followed by an
    exponential repair, open (NaN) past the record's end."""
    count = rng.poisson(units * failure_rate * span)
    failed = np.sort(rng.uniform(0.0, span, count))
    back = failed + rng.exponential(1.0 / repair_rate, count)
    returned = np.where(back <= span, back, np.nan)
    return failed, returned


def fit_simulated(seed, *, units=5, failure_rate=0.02, repair_rate=0.25, span=1000.0):
    rng = np.random.default_rng(seed)
    failed, returned = simulate_log(rng, units=units, failure_rate=failure_rate, repair_rate=repair_rate, span=span)
    # spares enough that a unit is never missing: exposure = units x span exactly
    return wm.fit_repair_log(failed, returned, start=0.0, end=span, units=units, spares=max(failed.size, 1))


# -- the exact Poisson interval -------------------------------------------------------------------------------


@pytest.mark.parametrize(("events", "exposure"), [(1, 10.0), (7, 350.0), (40, 2186.3), (500, 9.5)])
def test_interval_ends_are_where_the_poisson_tails_equal_half_the_miss(events, exposure):
    """Garwood (1936): the lower end makes P(N >= n) = alpha/2, the upper end P(N <= n) = alpha/2,
    N Poisson with mean rate x exposure; checked with scipy.stats.poisson's own tails."""
    estimate = wm.poisson_rate(events, exposure, confidence=0.9)
    assert estimate.value == events / exposure
    assert stats.poisson.sf(events - 1, estimate.low * exposure) == pytest.approx(0.05, rel=1e-10)
    assert stats.poisson.cdf(events, estimate.high * exposure) == pytest.approx(0.05, rel=1e-10)
    assert estimate.low < estimate.value < estimate.high


def test_no_event_gives_zero_and_the_rule_of_three():
    """With no event the interval starts at 0 and ends at -ln(alpha/2) / T: the chi-square with 2 degrees of
    freedom is an exponential (the 'rule of three' for 95 % one-sided, Hanley and Lippman-Hand 1983, from
    memory: -ln 0.05 = 2.9957)."""
    estimate = wm.poisson_rate(0, 200.0, confidence=0.9)
    assert estimate.low == 0.0 and estimate.value == 0.0
    assert estimate.high == pytest.approx(-math.log(0.05) / 200.0, rel=1e-12)
    assert estimate.mean_time == math.inf and estimate.mean_time_interval[1] == math.inf


def test_gamma_posterior_is_the_conjugate_closed_form():
    """Posterior density = prior x likelihood, normalised by quadrature, against gamma(a + n, b + T)
    (Gelman et al., Bayesian Data Analysis, 3rd ed., 2013, section 2.6, the Poisson model with a gamma prior;
    section number from memory). Likelihood from scipy.stats.poisson.pmf, prior from scipy.stats.gamma."""
    events, exposure, prior_shape, prior_rate = 12, 480.0, 2.0, 30.0
    estimate = wm.poisson_rate(events, exposure, prior_shape=prior_shape, prior_rate=prior_rate)

    def unnormalised(rate):
        return stats.gamma.pdf(rate, prior_shape, scale=1 / prior_rate) * stats.poisson.pmf(events, rate * exposure)

    total, _ = integrate.quad(unnormalised, 0, 1, points=[0.02, 0.03], epsabs=0, epsrel=1e-12, limit=200)
    posterior = estimate.posterior
    assert (posterior.shape, posterior.rate) == (prior_shape + events, prior_rate + exposure)
    for rate in (0.005, 0.02, 0.025, 0.05):
        expected = stats.gamma.pdf(rate, posterior.shape, scale=1 / posterior.rate)
        assert unnormalised(rate) / total == pytest.approx(expected, rel=1e-8)


def test_jeffreys_prior_is_the_default():
    """Jeffreys prior for a Poisson rate: gamma(1/2, 0) (Gelman et al., section 2.8, from memory)."""
    posterior = wm.poisson_rate(3, 10.0).posterior
    assert (posterior.shape, posterior.rate) == (3.5, 10.0)


# -- the log's rates -------------------------------------------------------------------------------------------


def test_censored_repairs_follow_the_exponential_mle_with_censoring():
    """Exponential times with right censoring: the MLE is completed / total time on test (Lawless, Statistical
    Models and Methods for Lifetime Data, 2nd ed., 2003, the exponential model with censoring; from memory).
    Repairs of 2, 3 and 5 days completed and one open for 4 days at the record's end: 3 / 14 a day. Checked
    also by maximising the censored log-likelihood built from scipy.stats.expon (logpdf of completed times,
    logsf of open ones)."""
    failed = np.array([1.0, 10.0, 20.0, 26.0])
    returned = np.array([3.0, 13.0, 25.0, np.nan])
    fit = wm.fit_repair_log(failed, returned, start=0.0, end=30.0, units=2, spares=2)
    assert fit.repair.events == 3 and fit.repair.exposure == 14.0 and fit.still_in_repair == 1
    assert fit.repair.value == pytest.approx(3 / 14, rel=1e-15)

    def minus_loglik(rate):
        scale = 1 / rate
        done = stats.expon.logpdf([2.0, 3.0, 5.0], scale=scale).sum()
        return -(done + stats.expon.logsf(4.0, scale=scale))

    best = optimize.minimize_scalar(minus_loglik, bounds=(1e-3, 5), method="bounded", options={"xatol": 1e-10})
    assert best.x == pytest.approx(3 / 14, rel=1e-6)


def test_time_in_service_counts_only_working_units_exactly():
    """Exposure = the integral of min(units, units + spares - in the shop): checked against a slow sum in exact
    rational arithmetic (fractions) over every interval between two moments of the log."""
    failed = np.array([0.5, 1.0, 1.25, 2.0, 6.0, 6.5])
    returned = np.array([4.0, 3.0, 5.5, np.nan, 7.0, np.nan])
    units, spares, end = 3, 1, 8.0
    fit = wm.fit_repair_log(failed, returned, start=0.0, end=end, units=units, spares=spares)
    back = [Fraction(b) if not math.isnan(b) else Fraction(end) for b in returned]
    starts = [Fraction(f) for f in failed]
    moments = sorted({Fraction(0), Fraction(end), *starts, *back})
    exposure = Fraction(0)
    for left, right in zip(moments, moments[1:], strict=False):
        middle = (left + right) / 2
        in_shop = sum(1 for f, b in zip(starts, back, strict=True) if f <= middle < b)
        exposure += (right - left) * min(units, units + spares - in_shop)
    assert Fraction(fit.failure.exposure) == exposure
    assert fit.most_in_shop == 4 and fit.failure.events == 6  # at 2.0 all four are in the shop


def test_known_rates_are_recovered_within_their_intervals():
    """A seeded simulated log (true failure rate 0.02 per unit a day, repair rate 0.25 a day): both true rates lie
    in their 90 % intervals and the estimates are close (about 110 failures: standard error about 10 %)."""
    fit = fit_simulated(11)
    assert fit.failure.low <= 0.02 <= fit.failure.high
    assert fit.repair.low <= 0.25 <= fit.repair.high
    assert fit.failure.value == pytest.approx(0.02, rel=0.25)
    assert fit.repair.value == pytest.approx(0.25, rel=0.25)


def test_interval_coverage_is_near_nominal():
    """Over 400 seeded simulated logs the 90 % intervals hold the true rates about 90 % of the time: a two-sided
    binomial test (scipy.stats.binomtest) on each coverage count does not reject 0.9 at the 0.001 level. The
    Garwood interval is conservative (coverage at least nominal), so the count is also checked from below."""
    runs = 400
    fits = [fit_simulated(1000 + run) for run in range(runs)]
    for which, truth in (("failure", 0.02), ("repair", 0.25)):
        covered = sum(getattr(f, which).low <= truth <= getattr(f, which).high for f in fits)
        assert stats.binomtest(covered, runs, 0.9).pvalue > 1e-3, (which, covered)
        assert stats.binomtest(covered, runs, 0.9, alternative="less").pvalue > 1e-3, (which, covered)


def test_a_malformed_log_is_refused_naming_the_problem():
    with pytest.raises(ValueError, match="end must be after start"):
        wm.fit_repair_log([1.0], [2.0], start=5.0, end=5.0, units=1, spares=0)
    with pytest.raises(ValueError, match="within the record"):
        wm.fit_repair_log([9.0], [np.nan], start=0.0, end=5.0, units=1, spares=0)
    with pytest.raises(ValueError, match="at or after its failure"):
        wm.fit_repair_log([3.0], [2.0], start=0.0, end=5.0, units=1, spares=0)
    with pytest.raises(ValueError, match=r"in the shop at once \(3\)"):
        wm.fit_repair_log([1.0, 1.5, 2.0], [4.0, 4.0, 4.0], start=0.0, end=5.0, units=1, spares=1)
    with pytest.raises(ValueError, match="no time in the shop"):
        wm.fit_repair_log([1.0, 3.0], [1.0, 3.0], start=0.0, end=5.0, units=1, spares=1)
    with pytest.raises(ValueError, match="no time in the shop"):
        wm.fit_repair_log([5.0], [np.nan], start=0.0, end=5.0, units=1, spares=1)
    with pytest.raises(ValueError, match="units must be a whole number"):
        wm.fit_repair_log([1.0], [2.0], start=0.0, end=5.0, units=0, spares=0)


# -- the availability and its range ------------------------------------------------------------------------------


def test_availability_band_is_seeded_and_each_draw_is_the_pools_own():
    fit = fit_simulated(3, units=4)
    one = wm.availability_band(fit, draws=60, seed=7, crews=2)
    again = wm.availability_band(fit, draws=60, seed=7, crews=2)
    assert np.array_equal(one.by_draw, again.by_draw)
    rng = np.random.default_rng(7)  # the documented order: failure rates, then repair rates
    failures = rng.gamma(fit.failure.posterior.shape, 1 / fit.failure.posterior.rate, 60)
    repairs = rng.gamma(fit.repair.posterior.shape, 1 / fit.repair.posterior.rate, 60)
    for index in (0, 17, 59):
        pool = wm.SparesPool(4, fit.spares, failures[index], repairs[index], crews=2)
        assert one.by_draw[index] == pool.availability()
    ordered = np.sort(one.by_draw)
    # numpy's inverted_cdf edges are order statistics: ranks ceil(60 x 0.05) = 3 and ceil(60 x 0.95) = 57
    assert (one.low, one.high) == (ordered[2], ordered[56])
    assert one.availability == fit.pool(crews=2).availability()
    assert 0 <= one.low <= one.median <= one.high <= 1


def test_availability_band_is_priced_before_it_runs():
    fit = fit_simulated(4)
    work = wm.availability_band_work(fit, draws=100)
    assert work.units == 101 * fit.pool().cost("long_run").units
    with pytest.raises(ComputeTooLarge, match="availability over 100 draws"):
        wm.availability_band(fit, draws=100, cap=work.units - 1)


def test_no_completed_repair_makes_no_pool():
    fit = wm.fit_repair_log([1.0, 2.0], [np.nan, np.nan], start=0.0, end=5.0, units=1, spares=2)
    assert fit.repair.events == 0 and fit.repair.exposure == 7.0
    with pytest.raises(ValueError, match="at least one failure and one completed repair"):
        fit.pool()
