"""Free-walk level law against closed forms, exact rational arithmetic and mpmath."""

import math
from fractions import Fraction

import mpmath
import numpy as np
import pytest
from scipy import stats

import walkmath as wm
from walkmath import distribution


def test_symmetric_walk_matches_the_binomial_occupancy_law():
    # P(S_n = m) = C(n, (n + m) / 2) / 2^n, zero when n + m is odd (common practice; Feller vol. 1, III.2)
    law = wm.StepLaw.nearest(up=0.5, down=0.5)
    d = wm.level_distribution(law, steps=10, start=0)
    assert d.prob(0) == pytest.approx(0.24609375, rel=1e-14)
    for m in range(-12, 13):
        expected = math.comb(10, (10 + m) // 2) / 2**10 if (10 + m) % 2 == 0 and abs(m) <= 10 else 0.0
        assert d.prob(m) == pytest.approx(expected, rel=1e-14, abs=0)


@pytest.mark.parametrize("n", [1, 7, 64, 1000])
def test_all_steps_one_way_has_probability_two_to_minus_n(n):
    # 2^-n for n steps all up (common practice)
    d = wm.level_distribution(wm.StepLaw.nearest(up=0.5, down=0.5), steps=n, start=3)
    assert d.prob(3 + n) == pytest.approx(2.0**-n, rel=1e-12)
    assert d.prob(3 - n) == pytest.approx(2.0**-n, rel=1e-12)


def test_a_million_steps_neither_overflows_nor_loses_digits():
    d = wm.level_distribution(wm.StepLaw.nearest(up=0.5, down=0.5), steps=10**6)
    assert math.fsum(d.probs) == pytest.approx(1.0, abs=1e-12)
    assert np.all(np.isfinite(d.probs)) and np.all(d.probs >= 0)
    mpmath.mp.dps = 30
    centre = mpmath.binomial(10**6, 5 * 10**5) / mpmath.mpf(2) ** 10**6  # reference: mpmath
    assert d.prob(0) == pytest.approx(float(centre), rel=1e-12)
    tail = mpmath.binomial(10**6, 5 * 10**5 + 9000) / mpmath.mpf(2) ** 10**6  # about 1e-71
    assert d.prob(18000) == pytest.approx(float(tail), rel=1e-10)


def _exact_power(pmf: dict[int, Fraction], n: int) -> dict[int, Fraction]:
    result = {0: Fraction(1)}
    for _ in range(n):
        nxt: dict[int, Fraction] = {}
        for level, p in result.items():
            for step, q in pmf.items():
                nxt[level + step] = nxt.get(level + step, Fraction(0)) + p * q
        result = nxt
    return result


def test_general_law_matches_exact_rational_powers_including_the_tails():
    pmf = {-2: Fraction(1, 10), -1: Fraction(2, 5), 0: Fraction(3, 10), 1: Fraction(1, 5)}
    law = wm.StepLaw.from_pmf({k: float(v) for k, v in pmf.items()})
    d = wm.level_distribution(law, steps=40, start=5)
    exact = _exact_power(pmf, 40)
    for step, p in exact.items():
        assert d.prob(5 + step) == pytest.approx(float(p), rel=1e-12)  # extremes near 1e-40 and 1e-28
    assert math.fsum(d.probs) == pytest.approx(1.0, abs=1e-13)


def test_tilted_windows_agree_with_direct_convolution_to_1e_10():
    law = wm.StepLaw.nearest(up=0.3, down=0.5)
    direct = distribution._direct_power(law.probs, 6000)
    tilted = distribution._tilted_power(law, 6000)
    kept = direct > 1e-300
    assert np.max(np.abs(tilted[kept] / direct[kept] - 1)) < 1e-10
    assert np.all(tilted[~kept] < 1e-290)


def test_large_support_uses_tilting_and_keeps_far_tails():
    # 30000 steps of a lazy walk: beyond the direct limit; compare a far tail with mpmath's trinomial sum.
    law = wm.StepLaw.from_pmf({-1: 0.25, 0: 0.5, 1: 0.25})
    n, level = 30000, 1500
    d = wm.level_distribution(law, steps=n)
    # (z/4 + 1/2 + 1/(4z))^n = ((1 + z)^2 / (4z))^n, so P(S_n = m) = C(2n, n + m) / 4^n (exact identity)
    mpmath.mp.dps = 30
    reference = mpmath.binomial(2 * n, n + level) / mpmath.mpf(4) ** n
    assert d.prob(level) == pytest.approx(float(reference), rel=1e-9)
    assert math.fsum(d.probs) == pytest.approx(1.0, abs=1e-10)


def test_lattice_laws_keep_their_structural_zeros():
    law = wm.StepLaw.from_pmf({-2: 0.5, 2: 0.5})
    d = wm.level_distribution(law, steps=5)
    assert d.prob(1) == 0.0 and d.prob(2) == pytest.approx(10 / 32, rel=1e-14)


def test_cyclic_laws_apply_one_per_period():
    weekday = wm.StepLaw.from_pmf({-1: 0.5, 0: 0.5})
    delivery = wm.StepLaw.fixed(3)
    d = wm.level_distribution([weekday, weekday, delivery], steps=4, start=0)
    # periods use weekday, weekday, delivery, weekday: 3 - Binomial(3, 1/2)
    for down in range(4):
        assert d.prob(3 - down) == pytest.approx(math.comb(3, down) / 8, rel=1e-14)
    assert d.cdf(1) == pytest.approx(4 / 8) and d.sf(1) == pytest.approx(4 / 8)


def test_bad_input_names_the_field():
    law = wm.StepLaw.nearest(up=0.5, down=0.5)
    with pytest.raises(ValueError, match="steps"):
        wm.level_distribution(law, steps=-1)
    with pytest.raises(ValueError, match="steps"):
        wm.level_distribution(law, steps=10**9)
    with pytest.raises(ValueError, match="start"):
        wm.level_distribution(law, steps=3, start=1.5)
    with pytest.raises(ValueError, match="law"):
        wm.level_distribution([], steps=3)


def test_tails_are_each_summed_from_their_own_end():
    # Poisson(30) over 0..: scipy.stats cdf and sf (sf computed directly, not as 1 - cdf) as the reference.
    law = wm.lead_time_demand(wm.StepLaw.poisson(mean=3.0), 10)
    below, above = law.tails()
    keep = law.levels <= 90  # beyond, the per-period cut at 1e-24 shows (walkmath/steplaw.py): 4e-9 at 110
    np.testing.assert_allclose(below[keep], stats.poisson.cdf(law.levels[keep], 30.0), rtol=1e-10)
    np.testing.assert_allclose(above[keep], stats.poisson.sf(law.levels[keep], 30.0), rtol=1e-10)
    assert above[100] < 1e-20 and np.all(np.diff(below) >= 0) and np.all(np.diff(above) <= 0)
