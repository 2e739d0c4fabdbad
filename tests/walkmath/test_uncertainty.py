"""Credible bands of the stock-out and overflow risk over posterior draws (walkmath/uncertainty.py).

The scenario: the co-operative's flour store, sacks in (deliveries, Poisson, about 30 a day) and out
(bakery use, negative binomial, about 29 a day), fitted to two years of daily records; a 300-sack
store starting at 150 sacks, sales lost at zero, deliveries turned away when full.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

import walkmath as wm

DAYS = 730
STORE = {"start": 150, "low": 0, "high": 300, "below": "lost", "above": "spill"}


@pytest.fixture(scope="module")
def flour():
    rng = np.random.default_rng(101)
    sacks_in = rng.poisson(30.0, DAYS)
    sacks_out = rng.negative_binomial(6.0, 6.0 / 35.0, DAYS)  # mean 29, variance 169
    arrivals = wm.law_posterior(wm.fit_count_law(sacks_in))
    demand = wm.law_posterior(wm.fit_count_law(sacks_out, family="negative_binomial"))
    return arrivals, demand


def test_each_draw_is_the_exact_outlook_of_its_drawn_law(flour):
    arrivals, demand = flour
    band = wm.risk_band(arrivals=arrivals, demand=demand, horizon=30, draws=40, seed=7, **STORE)
    # the same stream, drawn in the stated order (arrivals, then demand), gives the same laws
    rng = np.random.default_rng(7)
    supply, use = arrivals.draw_laws(40, rng), demand.draw_laws(40, rng)
    for index in (0, 17, 39):
        law = wm.StepLaw.net(arrivals=supply[index], demand=use[index])
        outlook = wm.BandedWalk(law, **STORE).outlook(30)
        np.testing.assert_array_equal(band.stockout_by_draw[index], outlook.stockout)
        np.testing.assert_array_equal(band.overflow_by_draw[index], outlook.overflow)
    assert band.draws == 40 and band.seed == 7 and band.credible == 0.9


def test_band_edges_are_order_statistics_and_never_fall(flour):
    arrivals, demand = flour
    band = wm.risk_band(arrivals=arrivals, demand=demand, horizon=60, draws=60, seed=8, credible=0.8, **STORE)
    # Hyndman and Fan (1996, Am. Statist. 50:361-365), definition 1 (inverse of the empirical cdf):
    # the q quantile of d sorted values is the ceil(q d)-th smallest
    ordered = np.sort(band.stockout_by_draw, axis=0)
    for q, edge in ((0.1, band.stockout_low), (0.5, band.stockout_median), (0.9, band.stockout_high)):
        np.testing.assert_array_equal(edge, ordered[math.ceil(q * 60) - 1])
    for curve in (band.stockout_low, band.stockout_median, band.stockout_high, band.stockout_mean,
                  band.overflow_low, band.overflow_high, band.overflow_mean):  # fmt: skip
        assert np.all(np.diff(curve) >= 0) and curve[0] == 0.0 and np.all(curve <= 1.0)
    assert np.all(band.stockout_high - band.stockout_low >= 0)
    assert band.stockout_interval == (band.stockout_low[-1], band.stockout_high[-1])
    # the mean over draws is the average of the draws' exact curves (sums of non-negative terms)
    np.testing.assert_allclose(band.stockout_mean, band.stockout_by_draw.mean(axis=0), rtol=1e-15)


def test_band_brackets_the_risk_of_the_law_the_history_came_from():
    # One seeded check of the whole chain (simulate, fit, posterior, band): the 90 % band at 45 days
    # holds the risk computed from the true laws. A single seeded case, not a coverage study.
    rng = np.random.default_rng(102)
    true_in, true_out = wm.StepLaw.poisson(30.0), wm.StepLaw.poisson(30.5)
    sacks_in, sacks_out = rng.poisson(30.0, DAYS), rng.poisson(30.5, DAYS)
    truth = wm.BandedWalk(wm.StepLaw.net(arrivals=true_in, demand=true_out), **STORE).outlook(45)
    band = wm.risk_band(
        arrivals=wm.law_posterior(wm.fit_count_law(sacks_in)),
        demand=wm.law_posterior(wm.fit_count_law(sacks_out)),
        horizon=45, draws=100, seed=9, **STORE,
    )  # fmt: skip
    assert band.stockout_low[-1] <= truth.stockout[-1] <= band.stockout_high[-1]
    assert band.overflow_low[-1] <= truth.overflow[-1] <= band.overflow_high[-1]
    assert band.stockout_high[-1] - band.stockout_low[-1] > 0.01  # two years leave real doubt


def test_a_fixed_law_has_no_band():
    law = wm.StepLaw.net(arrivals=wm.StepLaw.poisson(30.0), demand=wm.StepLaw.poisson(29.0))
    band = wm.risk_band(change=law, horizon=20, draws=5, seed=1, **STORE)
    exact = wm.BandedWalk(law, **STORE).outlook(20)
    for edge in (band.stockout_low, band.stockout_median, band.stockout_high):
        np.testing.assert_array_equal(edge, exact.stockout)


def test_observed_changes_band_without_capacity():
    rng = np.random.default_rng(103)
    changes = rng.poisson(30.0, DAYS) - rng.poisson(30.0, DAYS)
    posterior = wm.law_posterior(wm.empirical_change_law(changes))
    band = wm.risk_band(change=posterior, start=120, horizon=40, draws=30, seed=3)
    assert np.all(band.overflow_high == 0.0)  # no capacity, no overflow
    assert 0.0 < band.stockout_low[-1] < band.stockout_high[-1] < 1.0


def test_same_seed_same_band_other_seed_other_band(flour):
    arrivals, demand = flour
    first = wm.risk_band(arrivals=arrivals, demand=demand, horizon=10, draws=20, seed=4, **STORE)
    again = wm.risk_band(arrivals=arrivals, demand=demand, horizon=10, draws=20, seed=4, **STORE)
    other = wm.risk_band(arrivals=arrivals, demand=demand, horizon=10, draws=20, seed=5, **STORE)
    np.testing.assert_array_equal(first.stockout_by_draw, again.stockout_by_draw)
    assert not np.array_equal(first.stockout_by_draw, other.stockout_by_draw)


def test_work_is_priced_before_any_sweep(flour, monkeypatch):
    arrivals, demand = flour
    # one by one (the batched sweep's price: tests/walkmath/test_drawsweep.py)
    work = wm.risk_band_work(arrivals=arrivals, demand=demand, horizon=30, draws=40, seed=7, batch=False, **STORE)
    band = wm.risk_band(arrivals=arrivals, demand=demand, horizon=30, draws=40, seed=7, batch=False, **STORE)
    assert band.work.units == work.units
    # the price is each draw's outlook price plus the combining convolutions
    rng = np.random.default_rng(7)
    supply, use = arrivals.draw_laws(40, rng), demand.draw_laws(40, rng)
    sweeps = sum(
        wm.BandedWalk(wm.StepLaw.net(arrivals=a, demand=d), **STORE).cost(30).units
        for a, d in zip(supply, use, strict=True)
    )
    combining = sum(wm.Work("net", a.probs.size, 1, d.probs.size).units for a, d in zip(supply, use, strict=True))
    assert work.units == sweeps + combining

    def no_sweep(*args, **kwargs):
        raise AssertionError("a sweep ran before the price was checked")

    monkeypatch.setattr(wm.BandedWalk, "outlook", no_sweep)
    with pytest.raises(wm.ComputeTooLarge, match=r"risk_band \(40 draws\) needs .* To fit, use fewer draws"):
        wm.risk_band(
            arrivals=arrivals, demand=demand, horizon=30, draws=40, seed=7, cap=work.units - 1, batch=False, **STORE
        )


def test_risk_band_refusals(flour):
    arrivals, demand = flour
    with pytest.raises(ValueError, match="change must be given alone"):
        wm.risk_band(change=arrivals, demand=demand, horizon=5, **STORE)
    with pytest.raises(ValueError, match="change, or arrivals and demand, must be given"):
        wm.risk_band(horizon=5, **STORE)
    with pytest.raises(ValueError, match="demand must be a posterior"):
        wm.risk_band(demand=[1, 2], horizon=5, **STORE)
    with pytest.raises(ValueError, match="credible must be a probability strictly between 0 and 1"):
        wm.risk_band(demand=demand, horizon=5, credible=1.5, **STORE)
    with pytest.raises(ValueError, match="seed must be a whole number"):
        wm.risk_band(demand=demand, horizon=5, seed=-1, **STORE)
    with pytest.raises(ValueError, match=r"start must be at least low \(0\) and at most high \(300\)"):
        wm.risk_band(demand=demand, horizon=5, start=400, high=300)
    with pytest.raises(wm.ComputeTooLarge, match="keeps 10,000 draws x 1,000,001 periods"):
        wm.risk_band(demand=demand, horizon=1_000_000, draws=10_000, **STORE)
