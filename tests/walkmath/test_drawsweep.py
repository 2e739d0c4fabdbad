"""walkmath.drawsweep: the curves of many drawn laws in one batched sweep agree with the law-by-law sweep
(``BandedWalk.outlook``, the engine's reference path) to 1e-12 relative, in every way the batch may take
(batched passes for narrow laws, one convolution per law for wide ones, batched in-band matrices when a law
is wider than a bounded band), under every rule at both ends, with laws of several supports mixed, and priced
before any sweep.

The reference is the engine's own single-law sweep, itself tested against exact rational arithmetic
(tests/walkmath/exact.py) and path enumeration; here the check is that batching changes nothing but rounding.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import walkmath as wm
from walkmath import drawsweep

RELATIVE = 1e-12


def assert_same_curves(laws, walk_args, horizon):
    stockout, overflow = drawsweep.sweep_curves(laws, walk_args, horizon)
    for index, law in enumerate(laws):
        outlook = wm.BandedWalk(law, **walk_args).outlook(horizon)
        for got, want in ((stockout[index], outlook.stockout), (overflow[index], outlook.overflow)):
            np.testing.assert_allclose(got, want, rtol=RELATIVE, atol=0)
            assert np.all(got >= 0) and np.all(np.diff(got) >= 0)  # sums of non-negative terms: never falls


def drawn(posterior, draws, seed=3):
    return posterior.draw_laws(draws, np.random.default_rng(seed))


@pytest.fixture(scope="module")
def narrow():
    """Observed daily changes of a bin, -3..+3 (Dirichlet draws: one support)."""
    rng = np.random.default_rng(8)
    return wm.law_posterior(wm.empirical_change_law(rng.integers(-3, 4, 400)))


@pytest.fixture(scope="module")
def wide():
    """Net of Poisson deliveries (mean 30) and negative-binomial use (mean 29): about 270 steps wide."""
    rng = np.random.default_rng(9)
    arrivals = wm.law_posterior(wm.fit_count_law(rng.poisson(30.0, 500)))
    demand = wm.law_posterior(wm.fit_count_law(rng.negative_binomial(40, 40 / 69, 500), family="negative_binomial"))
    rng = np.random.default_rng(4)
    supply, use = arrivals.draw_laws(12, rng), demand.draw_laws(12, rng)
    return [wm.StepLaw.net(arrivals=a, demand=d) for a, d in zip(supply, use, strict=True)]


RULES = [
    {"start": 30, "low": 0, "high": 60, "below": "lost", "above": "spill"},
    {"start": 30, "low": 0, "high": 60, "below": "stop", "above": "stop"},
    {"start": 30, "low": 0, "high": 60, "below": "backorder", "above": "spill"},
    {"start": 30, "low": 0, "high": None, "below": "stop", "above": "spill"},
    {"start": 5, "low": 2, "high": 9, "below": "lost", "above": "stop"},
]


@pytest.mark.parametrize("walk_args", RULES)
def test_narrow_laws_in_batched_passes(narrow, walk_args):
    laws = drawn(narrow, 30)
    assert drawsweep._passes_cheaper(3, 30, 7, 7)  # the way this case takes
    assert_same_curves(laws, walk_args, 50)


@pytest.mark.parametrize("walk_args", [RULES[0], RULES[3], {"start": 200, "high": 400, "below": "lost"}])
def test_wide_laws_one_convolution_each(wide, walk_args):
    assert not drawsweep._passes_cheaper(3, 12, 300, wide[0].probs.size)
    assert_same_curves(wide, walk_args, 20)


def test_laws_wider_than_the_band_in_batched_matrices(wide):
    walk_args = {"start": 40, "low": 0, "high": 80, "below": "lost", "above": "spill"}
    assert drawsweep._dense(wm.BandedWalk(wide[0], **walk_args), 20, wide[0].probs.size)
    assert_same_curves(wide, walk_args, 20)
    assert_same_curves(wide, walk_args | {"below": "stop", "above": "stop"}, 20)


def test_several_supports_mixed_and_kept_in_order(narrow, wide):
    laws = [wm.StepLaw.nearest(up=0.3, down=0.5), *drawn(narrow, 4), wm.StepLaw.from_pmf({-2: 0.5, 1: 0.5}), wide[0]]
    assert len(drawsweep.groups(laws)) == 4
    assert_same_curves(laws, RULES[0], 40)


def test_tiny_risks_keep_their_relative_accuracy():
    """A start far above the floor: risks near 1e-200 agree to 1e-12 relative (sums of non-negative terms)."""
    laws = [wm.StepLaw.from_pmf({-1: down, 0: 0.2, 1: 0.8 - down}) for down in (0.01, 0.02, 0.03)]
    walk_args = {"start": 100, "low": 0, "high": 120, "below": "lost", "above": "spill"}
    stockout, _ = drawsweep.sweep_curves(laws, walk_args, 150)
    assert 0 < stockout[0, -1] < 1e-150
    assert_same_curves(laws, walk_args, 150)


def test_risk_band_batched_equals_one_by_one(wide, narrow):
    """The public entry: the same band either way (each draw's curves within 1e-12 relative)."""
    rng = np.random.default_rng(9)
    arrivals = wm.law_posterior(wm.fit_count_law(rng.poisson(3.0, 300)))
    demand = wm.law_posterior(wm.fit_count_law(rng.poisson(2.8, 300)))
    for kwargs in (
        {"arrivals": arrivals, "demand": demand, "start": 10, "high": 25, "below": "lost"},
        {"arrivals": arrivals, "demand": demand, "start": 10, "below": "stop"},
        {"change": narrow, "start": 20, "high": 40, "below": "lost"},
    ):
        batched = wm.risk_band(horizon=60, draws=80, seed=2, **kwargs)
        one_by_one = wm.risk_band(horizon=60, draws=80, seed=2, batch=False, **kwargs)
        for name in ("stockout_by_draw", "overflow_by_draw"):
            np.testing.assert_allclose(getattr(batched, name), getattr(one_by_one, name), rtol=RELATIVE, atol=0)


def test_the_batched_sweep_is_priced_before_it_runs(narrow, monkeypatch):
    kwargs = {"change": narrow, "start": 20, "high": 40, "below": "lost", "horizon": 60, "draws": 80, "seed": 2}
    work = wm.risk_band_work(**kwargs)
    assert wm.risk_band(**kwargs).work.units == work.units
    assert work.units < wm.risk_band_work(**kwargs, batch=False).units  # narrow laws: batching is cheaper

    def no_sweep(*args, **kw):
        raise AssertionError("a sweep ran before the price was checked")

    monkeypatch.setattr("walkmath.uncertainty.sweep_curves", no_sweep)
    with pytest.raises(wm.ComputeTooLarge, match=r"risk_band \(80 draws\) needs"):
        wm.risk_band(**kwargs, cap=work.units - 1)


@st.composite
def laws_and_band(draw):
    """A few laws on one or two supports, a band and its rules (hypothesis)."""
    lowest = draw(st.integers(-4, 1))
    width = draw(st.integers(1, 9))
    count = draw(st.integers(1, 5))
    laws = []
    for _ in range(count):
        weights = draw(st.lists(st.floats(0.01, 1.0), min_size=width, max_size=width))
        probs = np.array(weights) / math.fsum(weights)
        laws.append(wm.StepLaw.from_pmf({lowest + i: float(p) for i, p in enumerate(probs)}))
    if draw(st.booleans()):
        laws.append(wm.StepLaw.nearest(up=0.3, down=0.4))
    low = draw(st.integers(0, 3))
    high = draw(st.one_of(st.none(), st.integers(low, low + 25)))
    start = draw(st.integers(low, low + 25 if high is None else high))
    below = draw(st.sampled_from(["backorder", "lost", "stop"]))
    above = draw(st.sampled_from(["spill", "stop"]))
    return laws, {"start": start, "low": low, "high": high, "below": below, "above": above}


@settings(max_examples=60, deadline=None)
@given(laws_and_band(), st.integers(1, 40))
def test_batched_equals_law_by_law_for_any_laws_and_band(case, horizon):
    laws, walk_args = case
    assert_same_curves(laws, walk_args, horizon)
