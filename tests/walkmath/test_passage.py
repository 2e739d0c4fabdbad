"""First stock-out times by the hitting-time theorem against OEIS, exact sums and the banded engine."""

import math
from fractions import Fraction

import numpy as np
import pytest

import walkmath as wm


def test_symmetric_walk_first_passage_matches_oeis_a366568():
    # first passage from 1 to 0 of the symmetric walk at n = 1, 3, ..., 11: OEIS A366568 / 2^n
    times = wm.first_stockout_times(wm.StepLaw.nearest(0.5, 0.5), start=0, low=0, horizon=11)
    expected = [Fraction(1, 2), Fraction(1, 8), Fraction(1, 16), Fraction(5, 128), Fraction(7, 256), Fraction(21, 1024)]
    np.testing.assert_allclose(times[1::2], [float(x) for x in expected], rtol=1e-14)
    assert not times[2::2].any()


def test_theorem_equals_catalan_form_for_the_symmetric_walk():
    # P(T = 2k - 1) = C_{k-1} / 2^(2k - 1), Catalan numbers (Feller vol. 1, III.7; common practice)
    times = wm.first_stockout_times(wm.StepLaw.nearest(0.5, 0.5), start=0, low=0, horizon=201)
    for k in range(1, 101):
        catalan = math.comb(2 * k - 2, k - 1) // k
        assert times[2 * k - 1] == pytest.approx(catalan / 2 ** (2 * k - 1), rel=1e-12)


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
