"""Banded walks against exact rational arithmetic, with hypothesis properties."""

import itertools
import math
from fractions import Fraction

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import walkmath as wm
from tests.walkmath.exact import banded_outlook

PMF = {-2: Fraction(1, 10), -1: Fraction(2, 5), 0: Fraction(3, 10), 1: Fraction(1, 10), 2: Fraction(1, 10)}
LAW = wm.StepLaw.from_pmf({k: float(v) for k, v in PMF.items()})
RULES = list(itertools.product(wm.banded.BELOW_RULES, wm.banded.ABOVE_RULES, [6, None]))


def _close(values, exact, rel):
    exact = np.array([float(x) for x in exact])
    assert np.all(np.abs(np.asarray(values) - exact) <= rel * np.abs(exact) + 1e-300)


@pytest.mark.parametrize("below, above, high", RULES)
def test_every_rule_combination_matches_exact_rational_arithmetic(below, above, high):
    # reference: tests/walkmath/exact.py, a literal Fraction walk over (level, flags)
    ref = banded_outlook(PMF, 3, 0, high, below, above, 12)
    out = wm.BandedWalk(LAW, start=3, low=0, high=high, below=below, above=above).outlook(12)
    _close(out.stockout, ref["stockout"], 1e-12)
    _close(out.overflow, ref["overflow"], 1e-12)
    _close(out.alive, ref["alive"], 1e-12)
    _close(out.lost_units, ref["lost"], 1e-12)
    _close(out.spilled_units, ref["spilled"], 1e-12)
    for level, p in ref["final"].items():
        assert out.final.prob(level) == pytest.approx(float(p), rel=1e-12)
    np.testing.assert_allclose(out.level_probs[-1], out.final.probs, rtol=0, atol=0)


def test_cyclic_law_matches_exact_rational_arithmetic():
    delivery = {2: Fraction(1, 2), 3: Fraction(1, 2)}
    ref = banded_outlook([PMF, PMF, delivery], 2, 0, 5, "lost", "spill", 10)
    law = [LAW, LAW, wm.StepLaw.from_pmf({2: 0.5, 3: 0.5})]
    out = wm.BandedWalk(law, start=2, low=0, high=5, below="lost", above="spill").outlook(10)
    _close(out.stockout, ref["stockout"], 1e-12)
    _close(out.lost_units, ref["lost"], 1e-12)
    _close(out.spilled_units, ref["spilled"], 1e-12)


def test_stockout_near_1e_minus_25_keeps_relative_accuracy():
    # a strongly upward walk far from empty; exact rational reference
    pmf = {1: Fraction(7, 10), -1: Fraction(1, 20), 0: Fraction(1, 4)}
    ref = banded_outlook(pmf, 20, 0, 30, "lost", "spill", 60)
    out = wm.BandedWalk(wm.StepLaw.nearest(0.7, 0.05), 20, 0, 30, "lost", "spill").outlook(60)
    exact = float(ref["stockout"][-1])
    assert 1e-26 < exact < 1e-24
    assert out.stockout[-1] == pytest.approx(exact, rel=1e-8)


def test_backorder_counts_every_period_spent_short():
    # one step down for sure: from 1 the level is below 0 from period 2 on (common practice definition)
    out = wm.BandedWalk(wm.StepLaw.fixed(-1), start=1, low=0, below="backorder").outlook(5)
    np.testing.assert_array_equal(out.stockout, [0, 0, 1, 1, 1, 1])
    np.testing.assert_array_equal(out.stockout_periods, [0, 0, 1, 2, 3, 4])


def test_level_probs_are_built_only_when_read():
    out = wm.BandedWalk(LAW, start=3, low=0, high=6, below="stop").outlook(20)
    assert "level_probs" not in out.__dict__
    assert out.level_probs.shape == (21, 7)
    assert out.level_law(20).prob(3) == pytest.approx(out.final.prob(3), rel=1e-15)


def test_compute_cap_gives_a_clear_message():
    walk = wm.BandedWalk(wm.StepLaw.nearest(0.5, 0.5), start=0, low=0, below="backorder")
    with pytest.raises(wm.ComputeTooLarge, match="outlook needs .* units of work .*shorten the horizon"):
        walk.outlook(horizon=2_000_000)


@pytest.mark.parametrize(
    "kwargs, field",
    [
        ({"start": -1}, "start"),
        ({"start": 9}, "start"),
        ({"start": 2.5}, "start"),
        ({"low": 5, "high": 2, "start": 3}, "high"),
        ({"below": "refill"}, "below"),
        ({"above": "overfill"}, "above"),
    ],
)
def test_bad_input_names_the_field(kwargs, field):
    args = {"law": LAW, "start": 3, "low": 0, "high": 6} | kwargs
    with pytest.raises(ValueError, match=field):
        wm.BandedWalk(**args)


def test_bad_horizon_names_the_field():
    with pytest.raises(ValueError, match="horizon"):
        wm.BandedWalk(LAW, start=3, low=0, high=6).outlook(-2)


laws = st.dictionaries(st.integers(-3, 3), st.integers(1, 20), min_size=1, max_size=5).map(
    lambda counts: wm.StepLaw.empirical(counts)
)


@settings(max_examples=60, deadline=None)
@given(
    law=laws,
    start=st.integers(0, 8),
    below=st.sampled_from(wm.banded.BELOW_RULES),
    above=st.sampled_from(wm.banded.ABOVE_RULES),
    horizon=st.integers(0, 40),
)
def test_mass_is_conserved_and_probabilities_stay_in_range(law, start, below, above, horizon):
    out = wm.BandedWalk(law, start=start, low=0, high=8, below=below, above=above).outlook(horizon)
    stopped = (out.stockout if below == "stop" else 0) + (out.overflow if above == "stop" else 0)
    if below == "stop" and above == "stop":
        stopped = out.stockout + out.overflow  # a path stops at its first event, so they never overlap
    np.testing.assert_allclose(out.alive + stopped, 1.0, atol=1e-12)
    for curve in (out.stockout, out.overflow, out.alive):
        assert np.all((curve >= 0) & (curve <= 1 + 1e-12)) and not np.any(np.isnan(curve))
    assert np.all(np.diff(out.stockout) >= -1e-15) and np.all(np.diff(out.overflow) >= -1e-15)
    assert np.all(out.lost_units >= 0) and np.all(out.spilled_units >= 0)


@settings(max_examples=40, deadline=None)
@given(law=laws, below=st.sampled_from(wm.banded.BELOW_RULES), above=st.sampled_from(wm.banded.ABOVE_RULES))
def test_stockout_risk_does_not_rise_with_the_start_level(law, below, above):
    risks = [
        wm.BandedWalk(law, start=s, low=0, high=8, below=below, above=above).outlook(15).stockout[-1] for s in range(9)
    ]
    assert all(later <= earlier + 1e-12 for earlier, later in itertools.pairwise(risks))
    assert math.isfinite(sum(risks))


def test_keeping_levels_in_the_sweep_gives_the_same_table_as_the_second_sweep():
    walk = wm.BandedWalk(LAW, start=3, low=0, high=6, below="lost", above="spill")
    kept = walk.outlook(20, keep_levels=True)
    assert "level_probs" in kept.__dict__  # filled by the same sweep, not on first read
    np.testing.assert_array_equal(kept.level_probs, walk.outlook(20).level_probs)
    np.testing.assert_array_equal(kept.stockout, walk.outlook(20).stockout)
