"""Step laws: constructors, moments and validation, checked against scipy.stats and exact sums."""

import math

import mpmath
import numpy as np
import pytest
from scipy import stats

import walkmath as wm
from walkmath.steplaw import COUNT_TAIL


def test_nearest_law_has_stay_as_the_remainder():
    law = wm.StepLaw.nearest(up=0.3, down=0.5)
    assert law.prob(1) == 0.3 and law.prob(-1) == 0.5 and law.prob(0) == pytest.approx(0.2, abs=1e-15)
    assert law.mean == pytest.approx(-0.2, abs=1e-15)
    # variance = E[X^2] - mean^2 = 0.8 - 0.04 (direct computation)
    assert law.variance == pytest.approx(0.76, rel=1e-14)


def test_from_pmf_moments_match_direct_sums():
    law = wm.StepLaw.from_pmf({-2: 0.1, -1: 0.4, 0: 0.3, 1: 0.2})
    assert (law.lowest, law.highest) == (-2, 1)
    mean = -0.2 - 0.4 + 0.2
    assert law.mean == pytest.approx(mean, rel=1e-14)
    assert law.variance == pytest.approx(0.4 + 0.4 + 0.2 - mean**2, rel=1e-14)


@pytest.mark.parametrize("mean", [0.3, 2.0, 50.0, 400.0])
def test_poisson_matches_scipy_and_states_its_truncation(mean):
    law = wm.StepLaw.poisson(mean=mean)
    counts = law.steps
    # reference: scipy.stats.poisson
    np.testing.assert_allclose(law.probs, stats.poisson.pmf(counts, mean), rtol=1e-12)
    assert law.truncated_mass <= COUNT_TAIL <= 1e-15
    assert law.truncated_mass == pytest.approx(stats.poisson.sf(law.highest, mean), rel=1e-6)
    assert law.mean == pytest.approx(mean, rel=1e-12)


@pytest.mark.parametrize(
    ("law", "tail"),
    [(lambda m=m: wm.StepLaw.poisson(m), lambda k, m=m: stats.poisson.sf(k, m)) for m in (1e-9, 0.37, 19.876, 2.5e5)]
    + [
        # scipy.stats.nbinom with n = mean^2 / (var - mean), p = mean / var, as the constructor documents
        (
            lambda m=m, v=v: wm.StepLaw.negative_binomial(m, v),
            lambda k, m=m, v=v: stats.nbinom.sf(k, m * m / (v - m), m / v),
        )
        for m, v in ((0.05, 5.0), (4.0, 10.0), (300.0, 300.3))
    ],
)
def test_a_count_law_is_cut_at_the_first_count_whose_tail_is_small_enough(law, tail):
    # Reference: scipy.stats' own survival function at every count up to the cut and one past it, the
    # definition of the cut read straight off (no search): the smallest k with P(count > k) <= COUNT_TAIL.
    cut = law().highest
    tails = tail(np.arange(cut + 2))
    assert cut == int(np.argmax(tails <= COUNT_TAIL)) and tails[cut] <= COUNT_TAIL
    assert cut == 0 or tails[cut - 1] > COUNT_TAIL


def test_negative_binomial_from_mean_and_variance():
    law = wm.StepLaw.negative_binomial(mean=4.0, variance=10.0)
    # reference: scipy.stats.nbinom with n = mean^2 / (var - mean), p = mean / var
    ref = stats.nbinom(16.0 / 6.0, 0.4)
    np.testing.assert_allclose(law.probs, ref.pmf(law.steps), rtol=1e-12)
    assert law.mean == pytest.approx(4.0, rel=1e-12)
    assert law.variance == pytest.approx(10.0, rel=1e-10)


def test_binomial_fixed_and_empirical():
    law = wm.StepLaw.binomial(trials=12, p=0.25)
    np.testing.assert_allclose(law.probs, stats.binom.pmf(np.arange(13), 12, 0.25), rtol=1e-13)
    assert wm.StepLaw.fixed(7).mean == 7.0
    seen = wm.StepLaw.empirical([3, 1, 3, 3, 0])
    assert seen.prob(3) == pytest.approx(0.6) and seen.prob(2) == 0.0
    assert wm.StepLaw.empirical({2: 3, 5: 1}).prob(5) == pytest.approx(0.25)


def test_net_change_is_arrivals_minus_demand():
    arrivals = wm.StepLaw.from_pmf({0: 0.5, 2: 0.5})
    demand = wm.StepLaw.from_pmf({0: 0.2, 1: 0.5, 3: 0.3})
    net = wm.StepLaw.net(arrivals=arrivals, demand=demand)
    # brute force over the 2 x 3 pairs
    expected: dict[int, float] = {}
    for a, pa in ((0, 0.5), (2, 0.5)):
        for d, pd in ((0, 0.2), (1, 0.5), (3, 0.3)):
            expected[a - d] = expected.get(a - d, 0.0) + pa * pd
    for step, p in expected.items():
        assert net.prob(step) == pytest.approx(p, rel=1e-14)
    assert net.mean == pytest.approx(arrivals.mean - demand.mean, abs=1e-14)
    assert net.variance == pytest.approx(arrivals.variance + demand.variance, rel=1e-13)


def test_generating_function_and_tilt():
    law = wm.StepLaw.nearest(up=0.3, down=0.5)
    assert law.generating_function(2.0) == pytest.approx(0.3 * 2 + 0.2 + 0.5 / 2, rel=1e-15)
    tilted, log_g = law.tilted(2.0)
    assert math.fsum(tilted.probs) == pytest.approx(1.0, abs=1e-15)
    assert log_g == pytest.approx(math.log(1.05), rel=1e-14)
    assert tilted.prob(1) == pytest.approx(0.6 / 1.05, rel=1e-14)


@pytest.mark.parametrize(
    "build, field",
    [
        (lambda: wm.StepLaw.nearest(up=-0.1, down=0.5), "up"),
        (lambda: wm.StepLaw.nearest(up=0.7, down=0.5), "up + down"),
        (lambda: wm.StepLaw.from_pmf({-1: 0.5, 1: 0.6}), "sum to 1"),
        (lambda: wm.StepLaw.from_pmf({-1: -0.5, 1: 1.5}), "step probabilities"),
        (lambda: wm.StepLaw.from_pmf({}), "at least one step"),
        (lambda: wm.StepLaw.from_pmf({0.5: 1.0}), "step"),
        (lambda: wm.StepLaw.poisson(mean=-1.0), "mean"),
        (lambda: wm.StepLaw.poisson(mean=float("nan")), "mean"),
        (lambda: wm.StepLaw.negative_binomial(mean=3.0, variance=2.0), "variance"),
        (lambda: wm.StepLaw.binomial(trials=-1, p=0.5), "trials"),
        (lambda: wm.StepLaw.empirical([]), "observations"),
    ],
)
def test_bad_input_names_the_field(build, field):
    with pytest.raises(ValueError, match=field.replace("+", r"\+")):
        build()


@pytest.mark.parametrize("p", [2.2250738585072014e-308, 1e-300, 1e-200])
def test_binomial_with_a_vanishing_chance_builds_its_law(p):
    # scipy's Boost-backed binom.pmf overflows at p = 2.2e-308 (found by hypothesis); reference: the
    # binomial pmf C(n, k) p^k (1 - p)^(n - k) in 50-digit mpmath.
    mpmath.mp.dps = 50
    law = wm.StepLaw.binomial(trials=4, p=p)
    for k in range(5):
        exact = mpmath.binomial(4, k) * mpmath.mpf(p) ** k * (1 - mpmath.mpf(p)) ** (4 - k)
        if exact > mpmath.mpf("1e-300"):
            assert abs(law.prob(k) - float(exact)) <= 1e-12 * float(exact)
    assert law.prob(0) > 0 and all(law.prob(k) >= 0 for k in range(5))
