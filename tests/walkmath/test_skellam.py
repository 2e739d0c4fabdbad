"""The free continuous-time walk (Skellam law) against scipy.stats, mpmath and Poisson sums."""

import math

import mpmath
import pytest
from scipy import special, stats

from walkmath.skellam import continuous_level_distribution


def mp_skellam(k: int, a: float, b: float):
    a, b = mpmath.mpf(a), mpmath.mpf(b)
    return mpmath.exp(-(a + b)) * (a / b) ** (mpmath.mpf(k) / 2) * mpmath.besseli(abs(k), 2 * mpmath.sqrt(a * b))


@pytest.mark.parametrize(("up", "down", "t"), [(2.0, 1.0, 3.0), (0.4, 1.1, 0.5), (5.0, 5.0, 40.0), (60.0, 40.0, 50.0)])
def test_skellam_law_matches_scipy(up, down, t):
    d = continuous_level_distribution(up, down, t, start=3)
    assert math.fsum(d.probs) == pytest.approx(1.0, abs=1e-12)
    # reference: scipy.stats.skellam (noncentral chi-square through Boost); it returns 0 from about 1e-300
    reference = stats.skellam.pmf(d.levels - 3, up * t, down * t)
    shown = reference > 1e-290
    assert d.probs[shown] == pytest.approx(reference[shown], rel=1e-10)
    # the range holds all mass but 1e-300 a side, so its ends are below 1e-290
    assert d.probs[0] < 1e-290 and d.probs[-1] < 1e-290
    if (up + down) * t <= 1000:  # mpmath besseli at 30 digits; far too slow at order 4e4, argument 1e6
        mpmath.mp.dps = 30
        for level in (d.levels[0], d.levels[-1]):
            exact = float(mp_skellam(int(level) - 3, up * t, down * t))
            assert d.prob(level) == pytest.approx(exact, rel=1e-10)


def test_one_sided_skellam_where_the_bessel_closed_form_underflows():
    # ive(1000, 2) underflows to 0, yet P(N = 1000) = 0.0126 for a = 1000, b = 0.001 (mpmath besseli)
    assert special.ive(1000, 2.0) == 0.0
    d = continuous_level_distribution(1000.0, 0.001, 1.0)
    mpmath.mp.dps = 30
    for level in (-2, 0, 900, 1000, 1200):
        assert d.prob(level) == pytest.approx(float(mp_skellam(level, 1000.0, 0.001)), rel=1e-10)


def test_a_million_expected_up_jumps_keep_full_relative_accuracy():
    # reference: P(N = k) = sum_j Poisson(k + j; a) Poisson(j; b) in mpmath at 40 digits (Skellam 1946;
    # common practice for the difference of independent Poisson counts); b = 1 needs 120 terms
    d = continuous_level_distribution(1e6, 1.0, 1.0)
    mpmath.mp.dps = 40
    a = mpmath.mpf(10**6)

    def poisson(count, mean):
        return mpmath.exp(count * mpmath.log(mean) - mean - mpmath.loggamma(count + 1))

    for level in (980_000, 999_999, 1_030_000, 1_037_000):  # 1e-91, 4e-4, 1e-197, 8e-298
        exact = mpmath.fsum(poisson(level + j, a) * poisson(j, 1) for j in range(120))
        assert d.prob(level) == pytest.approx(float(exact), rel=1e-12)


def test_pure_up_jumps_give_the_poisson_law_and_time_zero_the_start():
    d = continuous_level_distribution(2.5, 0.0, 2.0, start=-4)
    assert d.levels[0] == -4
    # P(k jumps) = e^-5 5^k / k! (common practice; Poisson process)
    for jumps in (0, 1, 5, 60):
        assert d.prob(-4 + jumps) == pytest.approx(math.exp(-5 + jumps * math.log(5) - math.lgamma(jumps + 1)))
    point = continuous_level_distribution(2.0, 3.0, 0.0, start=7)
    assert point.levels.tolist() == [7] and point.probs.tolist() == [1.0]


def test_bad_input_names_the_parameter():
    with pytest.raises(ValueError, match="up_rate must be a finite number at least 0"):
        continuous_level_distribution(-1.0, 1.0, 1.0)
    with pytest.raises(ValueError, match="down_rate"):
        continuous_level_distribution(1.0, math.inf, 1.0)
    with pytest.raises(ValueError, match="t must be a finite number from 0.0 to 500000000"):
        continuous_level_distribution(1.0, 1.0, 1e9)
    with pytest.raises(ValueError, match="start must be a whole number"):
        continuous_level_distribution(1.0, 1.0, 1.0, start=0.5)
