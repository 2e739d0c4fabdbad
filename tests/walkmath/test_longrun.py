"""Long horizons by operator squaring against the period-by-period sweep and a spectral form."""

import numpy as np
import pytest
from scipy import linalg

import walkmath as wm


@pytest.mark.parametrize("below", ["lost", "stop"])
@pytest.mark.parametrize("above", ["spill", "stop"])
def test_squaring_equals_the_period_by_period_sweep(below, above):
    law = [wm.StepLaw.nearest(0.3, 0.32), wm.StepLaw.from_pmf({-1: 0.1, 0: 0.6, 2: 0.3})]
    walk = wm.BandedWalk(law, start=10, low=0, high=30, below=below, above=above)
    periods = [500, 1, 7, 100, 499, 0]
    sweep = walk.outlook(500)
    long = walk.outlook_at(periods)
    np.testing.assert_allclose(long.stockout, sweep.stockout[periods], rtol=1e-12, atol=1e-300)
    np.testing.assert_allclose(long.overflow, sweep.overflow[periods], rtol=1e-12, atol=1e-300)
    np.testing.assert_allclose(long.final.probs, sweep.final.probs, rtol=1e-11, atol=1e-300)


def test_million_periods_agree_with_the_spectral_form_in_the_bulk():
    # Birth-death band with absorption below 0 and reflection at the top: the symmetric tridiagonal
    # similarity D^(1/2) Q D^(-1/2) gives Q^n = V diag(lambda^n) V^T (scipy.linalg.eigh_tridiagonal).
    up, down, size, start, n = 0.3, 0.3, 400, 200, 10**6
    walk = wm.BandedWalk(wm.StepLaw.nearest(up, down), start=start, low=0, high=size - 1, below="stop", above="spill")
    long = walk.outlook_at([n])
    diagonal = np.full(size, 1 - up - down)
    diagonal[-1] += up  # spill at the top keeps the mass there
    off = np.full(size - 1, np.sqrt(up * down))
    values, vectors = linalg.eigh_tridiagonal(diagonal, off)
    weights = (np.sqrt(up / down)) ** np.arange(size)  # D^(1/2) from detailed balance ratios
    survive = (vectors[start] / np.sqrt(weights[start])) @ (values**n * (vectors.T @ np.sqrt(weights)))
    # The spectral form raises eigenvalues to the 10**6th power, so it is good to about n x 1e-16 relative
    # of the surviving mass; squaring and the spectral form must agree to 1e-10 on the risk.
    assert long.stockout[0] == pytest.approx(1.0 - survive, rel=1e-10)


def test_long_horizons_need_a_bounded_band():
    with pytest.raises(ValueError, match="high"):
        wm.BandedWalk(wm.StepLaw.nearest(0.3, 0.3), start=5, low=0).outlook_at([10**6])
    with pytest.raises(ValueError, match="periods"):
        wm.BandedWalk(wm.StepLaw.nearest(0.3, 0.3), start=5, low=0, high=9).outlook_at([-1])
