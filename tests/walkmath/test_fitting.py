"""Count laws fitted by maximum likelihood, and the observed change law (walkmath/fitting.py).

Histories are two years of daily counts (730 days) of tens of units a day, simulated with seeded numpy
Generators: the bakery's flour sacks used per day, say.
"""

from __future__ import annotations

import math
from fractions import Fraction

import numpy as np
import pytest
from scipy import optimize, stats

import walkmath as wm
from walkmath.fitting import COUNT_LIMIT

DAYS = 730


def nb_history(rng, mean: float, size: float, days: int = DAYS) -> np.ndarray:
    """numpy's negative_binomial(n, p) counts failures before n successes: mean n (1 - p) / p."""
    return rng.negative_binomial(size, size / (size + mean), days)


# -- Poisson --------------------------------------------------------------------------------------


def test_poisson_fit_is_the_average_with_its_log_likelihood():
    counts = np.random.default_rng(1).poisson(24.0, DAYS)
    fit = wm.fit_count_law(counts, family="poisson")
    assert fit.mean == pytest.approx(counts.mean(), rel=1e-15)
    # log-likelihood against scipy.stats.poisson.logpmf summed over the history
    assert fit.loglik == pytest.approx(stats.poisson.logpmf(counts, counts.mean()).sum(), rel=1e-12)
    # the MLE of a Poisson mean is the sample mean (a standard result, from memory): scipy's
    # likelihood at a nearby mean is lower
    for other in (counts.mean() * 0.999, counts.mean() * 1.001):
        assert stats.poisson.logpmf(counts, other).sum() < fit.loglik
    assert fit.law.mean == pytest.approx(counts.mean(), rel=1e-12)
    assert fit.law.lowest == 0 and fit.periods == DAYS and fit.parameters == 1


def test_poisson_interval_is_garwoods_exact_interval():
    # Garwood (1936): for a total S over n periods, [chi2(a/2; 2S) / 2n, chi2(1 - a/2; 2S + 2) / 2n].
    # Cross-checked against the Poisson tails themselves: at each end the total S is just as likely
    # as a/2 (scipy.stats.poisson.sf and cdf at the interval's ends times n).
    counts = np.random.default_rng(2).poisson(3.0, 40)
    fit = wm.fit_count_law(counts, confidence=0.9)
    total, n = int(counts.sum()), counts.size
    mean = fit.estimate("mean")
    assert stats.poisson.sf(total - 1, mean.low * n) == pytest.approx(0.05, rel=1e-9)
    assert stats.poisson.cdf(total, mean.high * n) == pytest.approx(0.05, rel=1e-9)


def test_poisson_fit_of_a_history_of_zeros():
    fit = wm.fit_count_law([0] * 30)
    assert fit.mean == 0.0 and fit.loglik == 0.0
    assert fit.law.probs.tolist() == [1.0]
    mean = fit.estimate("mean")
    # Garwood upper end with S = 0: -log(a/2) / n (chi-square with 2 degrees of freedom is exponential)
    assert mean.low == 0.0 and mean.high == pytest.approx(-math.log(0.025) / 30, rel=1e-12)


# -- negative binomial ----------------------------------------------------------------------------


def test_negative_binomial_fit_matches_scipy_stats_fit():
    counts = nb_history(np.random.default_rng(3), mean=22.0, size=5.0)
    fit = wm.fit_count_law(counts, family="negative_binomial")

    # scipy.stats.fit treats nbinom's n as a whole number by default (its shape info says so), so it is
    # given an optimizer that searches real n: differential evolution, polished by L-BFGS-B.
    def real_valued(fun, bounds, *, integrality):
        return optimize.differential_evolution(fun, bounds, seed=7, tol=1e-12, polish=True)

    reference = stats.fit(stats.nbinom, counts, bounds={"n": (0.1, 1000.0), "p": (1e-6, 1 - 1e-9)},
                          optimizer=real_valued)  # fmt: skip
    assert reference.success
    assert fit.size == pytest.approx(reference.params.n, rel=1e-4)
    assert fit.size / (fit.size + fit.mean) == pytest.approx(reference.params.p, rel=1e-4)
    assert fit.loglik >= -reference.nllf() - 1e-9  # ours is the maximum
    assert fit.loglik == pytest.approx(-reference.nllf(), abs=1e-6)
    # the log-likelihood itself against scipy.stats.nbinom.logpmf at our estimates
    direct = stats.nbinom.logpmf(counts, fit.size, fit.size / (fit.size + fit.mean)).sum()
    assert fit.loglik == pytest.approx(direct, rel=1e-12)
    assert fit.variance == pytest.approx(fit.mean + fit.mean**2 / fit.size, rel=1e-15)
    assert fit.law.mean == pytest.approx(fit.mean, rel=1e-12)
    assert fit.law.variance == pytest.approx(fit.variance, rel=1e-9)


def test_negative_binomial_score_is_zero_at_the_fit():
    # d/dr of scipy's summed logpmf at the fitted mean, by a central difference: flat at the top
    counts = nb_history(np.random.default_rng(4), mean=30.0, size=3.0)
    fit = wm.fit_count_law(counts, family="negative_binomial")

    def loglik(size):
        return stats.nbinom.logpmf(counts, size, size / (size + fit.mean)).sum()

    step = fit.size * 1e-4
    assert abs(loglik(fit.size + step) - loglik(fit.size - step)) / (2 * step) < 1e-5
    assert loglik(fit.size * 1.01) < fit.loglik and loglik(fit.size * 0.99) < fit.loglik


def test_negative_binomial_at_its_poisson_limit():
    # Counts no more spread than a Poisson law's (variance with divisor n <= mean): the likelihood is
    # highest as the size grows without bound (Aragon, Eberly and Eberly 1992, from memory).
    counts = np.array([10, 11, 9, 10, 12, 8, 10, 10])
    assert counts.var() <= counts.mean()
    fit = wm.fit_count_law(counts, family="negative_binomial")
    poisson = wm.fit_count_law(counts)
    assert fit.at_boundary and math.isinf(fit.size)
    assert fit.loglik == poisson.loglik and fit.law.mean == pytest.approx(poisson.law.mean, rel=1e-15)
    for size in (1e2, 1e4, 1e6):  # scipy's likelihood climbs toward the Poisson one
        assert stats.nbinom.logpmf(counts, size, size / (size + counts.mean())).sum() < fit.loglik


def test_size_interval_is_open_above_when_a_poisson_law_cannot_be_ruled_out():
    # Slight over-dispersion: the profile log-likelihood's drop to the Poisson limit is less than
    # chi2(0.95; 1) / 2 = 1.92 (from scipy.stats.chi2), so no upper end.
    counts = np.random.default_rng(5).poisson(12.0, 200)
    counts[0] += 12  # one busy day: variance just above the mean
    fit = wm.fit_count_law(counts, family="negative_binomial")
    poisson = wm.fit_count_law(counts)
    assert not fit.at_boundary
    drop = fit.loglik - poisson.loglik
    size = fit.estimate("size")
    assert (size.high == math.inf) == (drop < stats.chi2.isf(0.05, 1) / 2)


@pytest.mark.parametrize(("mean", "size", "seed"), [(12.0, 2.5, 11), (25.0, 8.0, 12), (60.0, 4.0, 13)])
def test_fits_recover_known_parameters_within_their_intervals(mean, size, seed):
    counts = nb_history(np.random.default_rng(seed), mean, size)
    fit = wm.fit_count_law(counts, family="negative_binomial")
    variance = mean + mean * mean / size
    for name, truth in (("mean", mean), ("size", size), ("variance", variance)):
        estimate = fit.estimate(name)
        assert estimate.low <= truth <= estimate.high, (name, estimate)
        assert estimate.low < estimate.value < estimate.high
    assert fit.estimate("mean").high - fit.estimate("mean").low < 0.25 * mean  # two years pin the mean down


@pytest.mark.parametrize("seed", [21, 22])
def test_poisson_fit_recovers_its_mean(seed):
    counts = np.random.default_rng(seed).poisson(35.0, DAYS)
    mean = wm.fit_count_law(counts).estimate("mean")
    assert mean.low <= 35.0 <= mean.high and mean.high - mean.low < 1.0


def coverage(hits: int, trials: int, nominal: float) -> float:
    """Two-sided exact binomial test of the coverage count (scipy.stats.binomtest)."""
    return stats.binomtest(hits, trials, nominal).pvalue


def test_poisson_interval_coverage_is_close_to_nominal():
    rng = np.random.default_rng(31)
    trials, hits = 400, 0
    for _ in range(trials):
        mean = wm.fit_count_law(rng.poisson(18.0, DAYS)).estimate("mean")
        hits += mean.low <= 18.0 <= mean.high
    assert coverage(hits, trials, 0.95) > 0.001, hits


def test_negative_binomial_interval_coverage_is_close_to_nominal():
    rng = np.random.default_rng(32)
    trials = 300
    hits = {"mean": 0, "size": 0, "variance": 0}
    truth = {"mean": 20.0, "size": 5.0, "variance": 20.0 + 400.0 / 5.0}
    for _ in range(trials):
        fit = wm.fit_count_law(nb_history(rng, 20.0, 5.0), family="negative_binomial")
        for name in hits:
            estimate = fit.estimate(name)
            hits[name] += estimate.low <= truth[name] <= estimate.high
    for name, count in hits.items():
        assert coverage(count, trials, 0.95) > 0.001, (name, count)


# -- inputs ---------------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("counts", "message"),
    [
        ([], "counts must be a non-empty list"),
        ([1, -2, 3], "entry 1 is -2"),
        ([1.5, 2], "entry 0 is"),
        ([1, float("nan")], "entry 1 is nan"),
        ([COUNT_LIMIT + 1], "from 0 to 1,000,000"),
        (["a", "b"], "must be a list of whole numbers"),
        ([[1, 2]], "non-empty list"),
    ],
)
def test_bad_counts_are_refused_naming_the_entry(counts, message):
    with pytest.raises(ValueError, match=message):
        wm.fit_count_law(counts)


def test_bad_family_and_confidence():
    with pytest.raises(ValueError, match="family must be one of 'poisson', 'negative_binomial'"):
        wm.fit_count_law([1, 2], family="normal")
    with pytest.raises(ValueError, match="confidence must be a probability strictly between 0 and 1"):
        wm.fit_count_law([1, 2], confidence=1.0)


def test_whole_floats_are_counts():
    assert wm.fit_count_law(np.array([3.0, 4.0, 5.0])).mean == 4.0


# -- the observed change law ----------------------------------------------------------------------


def test_observed_change_law_is_the_smoothed_frequencies_exactly():
    changes = [-3, -1, -1, 0, 2, 2, 2, -3]
    fit = wm.empirical_change_law(changes, smoothing=0.5)
    # exact rational arithmetic: (count + 1/2) / (periods + 1/2 x 6 steps), steps -3..2
    observed = {-3: 2, -2: 0, -1: 2, 0: 1, 1: 0, 2: 3}
    denominator = Fraction(8) + Fraction(1, 2) * 6
    for step, count in observed.items():
        assert fit.law.prob(step) == pytest.approx(float((count + Fraction(1, 2)) / denominator), rel=1e-15)
    assert fit.steps.tolist() == list(range(-3, 3)) and fit.observed.tolist() == list(observed.values())
    assert fit.unseen == 2 and fit.periods == 8
    assert fit.mean == pytest.approx(float(Fraction(sum(changes), 8)), rel=1e-15)
    assert fit.mean_standard_error == pytest.approx(np.std(changes, ddof=1) / math.sqrt(8), rel=1e-12)


def test_observed_change_law_without_smoothing_is_the_raw_frequencies():
    rng = np.random.default_rng(41)
    changes = rng.poisson(30, DAYS) - rng.poisson(31, DAYS)
    fit = wm.empirical_change_law(changes, smoothing=0)
    values, counts = np.unique(changes, return_counts=True)
    np.testing.assert_allclose([fit.law.prob(v) for v in values], counts / DAYS, rtol=1e-14)
    assert fit.law.mean == pytest.approx(changes.mean(), rel=1e-12)


def test_observed_change_law_refusals():
    with pytest.raises(ValueError, match="smoothing must be a finite number from 0.0 to 10.0"):
        wm.empirical_change_law([1, 2], smoothing=-1)
    with pytest.raises(ValueError, match="changes must be whole numbers .* entry 1 is 0.5"):
        wm.empirical_change_law([1, 0.5])
    with pytest.raises(ValueError, match="changes must span at most 1,048,577"):
        wm.empirical_change_law([0, 5_000_000])
