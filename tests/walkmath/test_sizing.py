"""Sizing on wide laws: the answer meets the target and one unit less does not, by exact rational arithmetic."""

import itertools
from fractions import Fraction

import numpy as np
import pytest

import walkmath as wm
from tests.walkmath.exact import banded_outlook

# Steps -15..15 (31 jumps) leaning down: weight 32 - (step + 16) = 16 - step, mean -5 a period.
DOWN_PMF = {step: Fraction(16 - step, 496) for step in range(-15, 16)}
DOWN = wm.StepLaw.from_pmf({k: float(v) for k, v in DOWN_PMF.items()})
UP_PMF = {step: Fraction(step + 16, 496) for step in range(-15, 16)}
UP = wm.StepLaw.from_pmf({k: float(v) for k, v in UP_PMF.items()})
HORIZON = 5


@pytest.mark.parametrize("below, target", [("stop", 0.05), ("lost", 0.2), ("backorder", 1e-3)])
def test_smallest_start_meets_the_stockout_target_and_one_less_does_not(below, target):
    walk = wm.BandedWalk(DOWN, start=0, low=0, high=120, below=below, above="spill")
    start = walk.smallest_start(HORIZON, stockout_target=target)
    assert start is not None and start > 0

    def exact_risk(level):  # reference: tests/walkmath/exact.py, a literal Fraction walk
        return float(banded_outlook(DOWN_PMF, level, 0, 120, below, "spill", HORIZON)["stockout"][-1])

    assert exact_risk(start) <= target < exact_risk(start - 1)


@pytest.mark.parametrize("below, above", list(itertools.product(wm.checks.BELOW_RULES, wm.checks.ABOVE_RULES)))
def test_smallest_capacity_meets_the_overflow_target_and_one_less_does_not(below, above):
    target = 0.02
    walk = wm.BandedWalk(UP, start=10, low=0, high=20, below=below, above=above)
    capacity = walk.smallest_capacity(HORIZON, overflow_target=target)

    def exact_risk(high):
        return float(banded_outlook(UP_PMF, 10, 0, high, below, above, HORIZON)["overflow"][-1])

    assert capacity is not None
    assert exact_risk(capacity) <= target < exact_risk(capacity - 1)


def test_combined_capacity_answer_meets_both_targets_under_spill():
    walk = wm.BandedWalk([DOWN, UP], start=16, low=0, high=20, below="lost", above="spill")
    overflow_only = walk.smallest_capacity(6, overflow_target=0.05)
    both = walk.smallest_capacity(6, overflow_target=0.05, stockout_target=0.5)

    def exact(high):
        ref = banded_outlook([DOWN_PMF, UP_PMF], 16, 0, high, "lost", "spill", 6)
        return float(ref["stockout"][-1]), float(ref["overflow"][-1])

    stockout, overflow = exact(both)
    assert overflow <= 0.05 and stockout <= 0.5
    below_stockout, below_overflow = exact(both - 1)
    assert below_overflow > 0.05 or below_stockout > 0.5
    assert both >= overflow_only


def test_capacity_is_none_when_no_capacity_can_meet_the_stockout_target():
    walk = wm.BandedWalk(DOWN, start=5, low=0, high=20, below="lost", above="spill")
    assert walk.smallest_capacity(HORIZON, overflow_target=0.5, stockout_target=1e-9) is None


def test_risk_by_capacity_matches_exact_rational_arithmetic():
    walk = wm.BandedWalk(UP, start=10, low=0, high=20, below="lost", above="spill")
    curve = walk.risk_by_capacity(HORIZON, [10, 25, 40, 60])
    for capacity, stockout, overflow in zip(curve.capacities, curve.stockout, curve.overflow, strict=True):
        ref = banded_outlook(UP_PMF, 10, 0, int(capacity), "lost", "spill", HORIZON)
        assert stockout == pytest.approx(float(ref["stockout"][-1]), rel=1e-12, abs=1e-300)
        assert overflow == pytest.approx(float(ref["overflow"][-1]), rel=1e-12, abs=1e-300)
    assert np.all(np.diff(curve.overflow) <= 0)


def test_a_million_period_horizon_gets_a_capacity_when_the_band_is_bounded():
    # Drifts down (up 0.2, down 0.4) with lost sales at empty: the level hugs the floor, and the room
    # needed for a 1 % chance of ever overflowing in 10**6 periods grows only like a logarithm.
    walk = wm.BandedWalk(wm.StepLaw.nearest(0.2, 0.4), start=0, low=0, high=5, below="lost", above="spill")
    capacity = walk.smallest_capacity(10**6, overflow_target=0.01)
    assert capacity is not None and capacity < 40

    def risk(high):
        probe = wm.BandedWalk(wm.StepLaw.nearest(0.2, 0.4), start=0, low=0, high=high, below="lost", above="spill")
        return probe.outlook_at([10**6]).overflow[0]

    assert risk(capacity) <= 0.01 < risk(capacity - 1)
    # Cross-check of the order of magnitude from the ratio of a reflected nearest-neighbour walk
    # (common practice): each level higher is (0.2 / 0.4) as likely to be reached per excursion,
    # so about log2(10**6 excursions / 0.01) levels are needed.
    assert abs(capacity - np.log2(1e6 / 0.01)) <= 4


def test_the_capacity_search_stops_itself_at_its_work_limit():
    walk = wm.BandedWalk(UP, start=10, low=0, high=20, below="lost", above="spill")
    with pytest.raises(wm.ComputeTooLarge, match="capacity search reached"):
        walk.smallest_capacity(HORIZON, overflow_target=1e-12, cap=10**5)


def test_probe_price_is_the_walk_with_that_capacity_priced():
    # The search prices each probe from the walk's own numbers; it must be exactly what the walk
    # with that capacity would price (BandedWalk.cost), or the batched search would stop elsewhere.
    import random

    from walkmath import sizing

    rng = random.Random(1)
    laws = [
        wm.StepLaw.nearest(0.3, 0.3),
        wm.StepLaw.net(wm.StepLaw.poisson(3.0), wm.StepLaw.poisson(2.0)),
        wm.StepLaw.from_pmf({2: 0.5, 5: 0.5}),
        wm.StepLaw.from_pmf({-3: 0.5, -1: 0.5}),
    ]
    for _ in range(500):
        law, low = rng.choice(laws), rng.randint(-5, 5)
        start = low + rng.randint(0, 30)
        high = rng.choice([None, start + rng.randint(0, 40)])
        below, above = rng.choice(["backorder", "lost", "stop"]), rng.choice(["spill", "stop"])
        walk = wm.BandedWalk([law, law] if rng.random() < 0.3 else law, start, low, high, below, above)
        horizon, capacity = rng.randint(1, 400), start + rng.randint(0, 3000)
        probe = wm.BandedWalk(walk.laws, start, low, capacity, below, above)
        sweep = probe.cost(horizon, "first_passage")
        if below != "backorder":
            sweep = min(sweep, probe.cost(horizon, "outlook_at"), key=lambda work: work.units)
        assert sizing._probe_work(walk, horizon, capacity) == sweep
