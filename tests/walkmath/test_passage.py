"""First stock-out times by the hitting-time theorem against the Catalan form, exact sums and the banded engine."""

import math
from fractions import Fraction

import numpy as np
import pytest

import walkmath as wm
from tests.walkmath.exact import banded_outlook


def catalan_first_passage(k: int) -> Fraction:
    """P(T = 2k - 1) = C_{k-1} / 2^(2k - 1) for the symmetric walk's first passage one level down, with
    C_j = binom(2j, j) / (j + 1) the Catalan numbers (OEIS A000108; Feller, An Introduction to
    Probability Theory and Its Applications, vol. 1, 3rd ed., ch. III, first passages; section 7 from
    memory)."""
    catalan = Fraction(math.comb(2 * k - 2, k - 1), k)
    return catalan / 2 ** (2 * k - 1)


def test_symmetric_walk_first_passage_matches_the_catalan_form_in_fractions():
    # first passage from 1 to 0 at n = 1, 3, ..., 11, written out by hand from the Catalan numbers
    # 1, 1, 2, 5, 14, 42
    expected = [Fraction(1, 2), Fraction(1, 8), Fraction(1, 16), Fraction(5, 128), Fraction(7, 256), Fraction(21, 1024)]
    assert expected == [catalan_first_passage(k) for k in range(1, 7)]
    # independent: a literal Fraction walk over the paths (tests/walkmath/exact.py), stopped at the stock-out
    stockout = banded_outlook({-1: Fraction(1, 2), 1: Fraction(1, 2)}, 0, 0, None, "stop", "spill", 11)["stockout"]
    assert [stockout[n] - stockout[n - 1] for n in range(1, 12, 2)] == expected
    assert all(stockout[n] == stockout[n - 1] for n in range(2, 12, 2))
    times = wm.first_stockout_times(wm.StepLaw.nearest(0.5, 0.5), start=0, low=0, horizon=11)
    np.testing.assert_allclose(times[1::2], [float(x) for x in expected], rtol=1e-14)
    assert not times[2::2].any()


def test_theorem_equals_catalan_form_for_the_symmetric_walk():
    # the Catalan form in exact Fractions (see catalan_first_passage) out to n = 199
    times = wm.first_stockout_times(wm.StepLaw.nearest(0.5, 0.5), start=0, low=0, horizon=201)
    for k in range(1, 101):
        assert times[2 * k - 1] == pytest.approx(float(catalan_first_passage(k)), rel=1e-12)


@pytest.mark.parametrize(
    "law",
    [
        wm.StepLaw.nearest(0.3, 0.5),
        wm.StepLaw.from_pmf({-1: 0.5, 0: 0.2, 2: 0.3}),
        wm.StepLaw.from_pmf({-1: 0.6, 3: 0.4}),
    ],
)
def test_theorem_agrees_with_the_banded_outlook(law):
    # van der Hofstad and Keane (2008): P(T = n) = (k / n) P(S_n = -k); banded engine as the independent path
    times = wm.first_stockout_times(law, start=4, low=0, horizon=80)
    outlook = wm.BandedWalk(law, start=4, low=0).outlook(80)
    np.testing.assert_allclose(np.cumsum(times), outlook.stockout, rtol=1e-12, atol=1e-300)


def test_rejects_laws_that_can_jump_over_a_level_downwards():
    with pytest.raises(ValueError, match="down-steps of at most 1"):
        wm.first_stockout_times(wm.StepLaw.from_pmf({-2: 0.5, 1: 0.5}), start=3, low=0, horizon=10)
    with pytest.raises(ValueError, match="start"):
        wm.first_stockout_times(wm.StepLaw.nearest(0.5, 0.5), start=-1, low=0, horizon=10)
