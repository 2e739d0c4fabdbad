"""Posteriors over fitted laws and their seeded draws (walkmath/posterior.py)."""

from __future__ import annotations

import math

import mpmath
import numpy as np
import pytest
from scipy import stats

import walkmath as wm
from walkmath.steplaw import COUNT_TAIL

DAYS = 730


# -- gamma posterior of a Poisson mean --------------------------------------------------------------


def test_poisson_gamma_posterior_is_the_conjugate_closed_form():
    # Gelman et al., Bayesian Data Analysis, 3rd ed. (2013), section 2.6 (from memory): with a
    # gamma(alpha, beta) prior on a Poisson rate and counts y_1..y_n, the posterior is
    # gamma(alpha + sum y, beta + n), mean (alpha + sum y) / (beta + n).
    counts = np.random.default_rng(81).poisson(26.0, DAYS)
    posterior = wm.law_posterior(wm.fit_count_law(counts), prior_shape=2.0, prior_rate=0.5)
    assert isinstance(posterior, wm.RatePosterior)
    assert posterior.shape == 2.0 + counts.sum() and posterior.rate == 0.5 + DAYS
    assert posterior.mean == pytest.approx((2.0 + counts.sum()) / (0.5 + DAYS), rel=1e-15)
    low, high = posterior.interval(0.9)
    reference = stats.gamma(2.0 + counts.sum(), scale=1.0 / (0.5 + DAYS))
    assert low == pytest.approx(reference.ppf(0.05), rel=1e-12)
    assert high == pytest.approx(reference.ppf(0.95), rel=1e-12)
    assert "shape 2 and rate 0.5" in posterior.prior_text


def test_poisson_gamma_posterior_against_numerical_integration_of_prior_times_likelihood():
    # Independent of the conjugate algebra: prior density x the product of Poisson probabilities,
    # integrated by mpmath at 30 digits; the posterior mean and the chance below the credible
    # interval's lower end must match the closed form's.
    counts = [0, 2, 1, 0, 0, 3, 1, 0, 1, 0, 2, 0]  # spare tyres used per week
    alpha, beta = 1.5, 2.0
    posterior = wm.law_posterior(wm.fit_count_law(counts), prior_shape=alpha, prior_rate=beta)
    low, _ = posterior.interval(0.9)
    with mpmath.workdps(30):

        def density(rate):
            prior = rate ** (alpha - 1) * mpmath.exp(-beta * rate)
            likelihood = mpmath.fprod(mpmath.exp(-rate) * rate**y / mpmath.factorial(y) for y in counts)
            return prior * likelihood

        total = mpmath.quad(density, [0, 1, 5, mpmath.inf])
        mean = mpmath.quad(lambda r: r * density(r), [0, 1, 5, mpmath.inf]) / total
        below = mpmath.quad(density, [0, low]) / total
    assert posterior.mean == pytest.approx(float(mean), rel=1e-10)
    assert float(below) == pytest.approx(0.05, rel=1e-9)


def test_default_prior_is_jeffreys():
    counts = [3, 1, 4, 1, 5]
    posterior = wm.law_posterior(wm.fit_count_law(counts))
    assert (posterior.shape, posterior.rate) == (0.5 + 14, 5.0)
    assert "Jeffreys" in posterior.prior_text


def test_gamma_draws_follow_the_posterior():
    counts = np.random.default_rng(82).poisson(26.0, DAYS)
    posterior = wm.law_posterior(wm.fit_count_law(counts))
    means = posterior.draw_means(4000, np.random.default_rng(83))
    # Kolmogorov-Smirnov against scipy.stats.gamma with the closed-form parameters
    assert stats.kstest(means, stats.gamma(posterior.shape, scale=1 / posterior.rate).cdf).pvalue > 0.001


def test_drawn_poisson_laws_are_poisson_at_the_drawn_means():
    counts = np.random.default_rng(84).poisson(26.0, DAYS)
    posterior = wm.law_posterior(wm.fit_count_law(counts))
    laws = posterior.draw_laws(50, np.random.default_rng(85))
    means = posterior.draw_means(50, np.random.default_rng(85))  # the same stream: the same means
    for law, mean in zip(laws, means, strict=True):
        support = np.arange(law.probs.size)
        np.testing.assert_allclose(law.probs, stats.poisson.pmf(support, mean), rtol=1e-10)
        assert law.truncated_mass <= COUNT_TAIL
        assert law.mean == pytest.approx(mean, rel=1e-12)


def test_a_history_of_zeros_needs_a_proper_prior():
    fit = wm.fit_count_law([0] * 20)
    assert wm.law_posterior(fit).shape == 0.5
    with pytest.raises(ValueError, match="prior_shape must be above 0 when every period counted 0"):
        wm.law_posterior(fit, prior_shape=0.0, prior_rate=1.0)


# -- Dirichlet posterior of the observed changes ------------------------------------------------------


def net_changes(seed: int) -> np.ndarray:
    rng = np.random.default_rng(seed)
    return rng.poisson(30.0, DAYS) - rng.poisson(31.0, DAYS)


def test_dirichlet_posterior_mean_is_the_smoothed_observed_law():
    fit = wm.empirical_change_law(net_changes(91), smoothing=0.5)
    posterior = wm.law_posterior(fit)
    assert isinstance(posterior, wm.ChangePosterior)
    np.testing.assert_array_equal(posterior.concentration, fit.observed + 0.5)
    # the Dirichlet mean alpha_k / sum alpha (Gelman et al., BDA3, appendix A, from memory)
    np.testing.assert_allclose(posterior.law.probs, posterior.concentration / posterior.concentration.sum(), 1e-14)
    assert "weight 0.5" in posterior.prior_text


def test_dirichlet_draws_have_beta_marginals():
    # A Dirichlet's component k is beta(alpha_k, sum alpha - alpha_k) (BDA3, appendix A, from memory)
    fit = wm.empirical_change_law(net_changes(92))
    posterior = wm.law_posterior(fit)
    laws = posterior.draw_laws(3000, np.random.default_rng(93))
    alpha = posterior.concentration
    for step in (int(fit.steps[fit.observed.argmax()]), int(fit.steps[0]), -1):
        k = step - int(fit.steps[0])
        chances = [law.prob(step) for law in laws]
        marginal = stats.beta(alpha[k], alpha.sum() - alpha[k])
        assert stats.kstest(chances, marginal.cdf).pvalue > 0.001, step


def test_dirichlet_draws_never_give_a_chance_to_a_step_without_weight():
    fit = wm.empirical_change_law([-2, -2, 0, 3, 3, 3], smoothing=0)
    laws = wm.law_posterior(fit).draw_laws(200, np.random.default_rng(94))
    for law in laws:
        assert law.prob(-1) == 0.0 and law.prob(1) == 0.0 and law.prob(2) == 0.0
        assert math.fsum(law.probs) == pytest.approx(1.0, rel=1e-15) and law.probs.min() >= 0.0


# -- normal approximation for the negative binomial ------------------------------------------------


def test_negative_binomial_draws_centre_on_the_fit():
    counts = np.random.default_rng(95).negative_binomial(4.0, 4.0 / 28.0, DAYS)
    fit = wm.fit_count_law(counts, family="negative_binomial")
    posterior = wm.law_posterior(fit)
    assert isinstance(posterior, wm.SpreadPosterior)
    assert posterior.log_mean_sd == pytest.approx(fit.estimate("mean").standard_error / fit.mean, rel=1e-15)
    laws = posterior.draw_laws(400, np.random.default_rng(96))
    log_means = np.log([law.mean for law in laws])
    # sample mean of 400 normal draws within 4 standard errors of the centre
    assert abs(log_means.mean() - math.log(fit.mean)) < 4 * posterior.log_mean_sd / math.sqrt(400)
    assert log_means.std(ddof=1) == pytest.approx(posterior.log_mean_sd, rel=0.15)
    for law in laws[:20]:  # each law against scipy.stats.nbinom at its own mean and variance
        mean, variance = law.mean, law.variance
        size = mean * mean / (variance - mean)
        support = np.arange(law.probs.size)
        np.testing.assert_allclose(law.probs, stats.nbinom.pmf(support, size, size / (size + mean)), rtol=1e-7)
        assert law.truncated_mass <= COUNT_TAIL


def test_negative_binomial_at_its_poisson_limit_gets_the_gamma_posterior():
    fit = wm.fit_count_law([10, 11, 9, 10, 12, 8, 10, 10], family="negative_binomial")
    assert isinstance(wm.law_posterior(fit), wm.RatePosterior)


# -- seeds and refusals ----------------------------------------------------------------------------


def test_draws_are_reproducible_from_the_seed():
    posterior = wm.law_posterior(wm.empirical_change_law(net_changes(97)))
    first = posterior.draw_laws(10, np.random.default_rng(5))
    again = posterior.draw_laws(10, np.random.default_rng(5))
    other = posterior.draw_laws(10, np.random.default_rng(6))
    assert all(np.array_equal(a.probs, b.probs) for a, b in zip(first, again, strict=True))
    assert not np.array_equal(first[0].probs, other[0].probs)


def test_posterior_refusals():
    with pytest.raises(ValueError, match="fit must be a CountFit or a ChangeFit"):
        wm.law_posterior(wm.StepLaw.poisson(3.0))
    posterior = wm.law_posterior(wm.fit_count_law([1, 2, 3]))
    with pytest.raises(ValueError, match="draws must be a whole number from 1 to 10000"):
        posterior.draw_laws(0, np.random.default_rng(0))
    with pytest.raises(ValueError, match="prior_rate must be a finite number from 0.0 to 1000000.0"):
        wm.law_posterior(wm.fit_count_law([1, 2, 3]), prior_rate=-1.0)
    with pytest.raises(wm.ComputeTooLarge, match="draws x .* chances; the limit is 50,000,000"):
        wide = wm.empirical_change_law(np.arange(-500_000, 500_000, 97))
        wm.law_posterior(wide).draw_laws(10_000, np.random.default_rng(0))
