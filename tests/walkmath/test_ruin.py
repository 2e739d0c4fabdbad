"""Gambler's-ruin closed forms against Feller's table, values computed from his closed forms and the banded engine."""

import mpmath
import pytest

import walkmath as wm
from walkmath import elimination


def test_feller_table_values():
    # Feller vol. 1, ch. XIV, table 1: p = 0.45, z = 9, a = 10 -> ruin 0.210, duration 11.0 (table values, from memory)
    assert wm.ruin_probability(0.45, 0.55, 9, 10) == pytest.approx(0.210, abs=5e-4)
    assert wm.expected_duration(0.45, 0.55, 9, 10) == pytest.approx(11.0, abs=0.05)
    # more digits, computed from the closed forms XIV (2.4) and (3.4) in 40-digit mpmath: 0.2100562, 11.0056165
    assert wm.ruin_probability(0.45, 0.55, 9, 10) == pytest.approx(0.2100562, abs=5e-8)
    assert wm.expected_duration(0.45, 0.55, 9, 10) == pytest.approx(11.0056165, abs=5e-7)


def test_fair_game_closed_forms():
    # p = q: ruin 1 - z / a, duration z (a - z) (Feller vol. 1, XIV (2.5) and (3.6))
    assert wm.ruin_probability(0.5, 0.5, 3, 10) == pytest.approx(0.7, rel=1e-15)
    assert wm.expected_duration(0.5, 0.5, 3, 10) == pytest.approx(21.0, rel=1e-15)
    # staying in place stretches the duration by 1 / (up + down) and leaves the ruin unchanged
    assert wm.expected_duration(0.25, 0.25, 3, 10) == pytest.approx(42.0, rel=1e-15)
    assert wm.ruin_probability(0.25, 0.25, 3, 10) == pytest.approx(0.7, rel=1e-15)


@pytest.mark.parametrize("up, down, start, target", [(0.3, 0.2, 5, 10), (0.2, 0.35, 7, 12), (0.49, 0.49, 4, 9)])
def test_closed_forms_agree_with_the_banded_engine(up, down, start, target):
    walk = wm.BandedWalk(wm.StepLaw.nearest(up, down), start=start, low=1, high=target - 1, below="stop", above="stop")
    outlook = walk.outlook(20000)
    assert outlook.stockout[-1] == pytest.approx(wm.ruin_probability(up, down, start, target), rel=1e-10)
    solved = elimination.solve_band(walk.laws, target - 1, "stop").times[start - 1]  # elimination, not the fast path
    assert solved == pytest.approx(wm.expected_duration(up, down, start, target), rel=1e-10)


def test_extreme_odds_neither_overflow_nor_lose_small_values():
    # q/p = 1/9 and z = 300: ruin = (r^z - r^a)/(1 - r^a) ~ 9^-300 (Feller's formula evaluated by hand in logs)
    value = wm.ruin_probability(0.9, 0.1, 300, 600)
    assert value == pytest.approx(9.0**-300 * (1 - 9.0**-300) / (1 - 9.0**-600), rel=1e-12)
    assert wm.ruin_probability(0.1, 0.9, 300, 600) == pytest.approx(1.0, rel=1e-15)


def test_fair_ruin_is_the_exact_fraction_for_huge_levels():
    # Feller vol. 1, XIV (2.5): (a - z) / a; 1 - z / a would round away the answer here
    assert wm.ruin_probability(0.3, 0.3, 10**17 - 1, 10**17) == pytest.approx(1e-17, rel=1e-15)


def test_near_fair_ruin_keeps_its_digits():
    # q - p = 1e-7 relative: log(q / p) from the exact difference; reference Feller XIV (2.4) in 50-digit mpmath
    mpmath.mp.dps = 50
    up, down, start, target = 0.3, 0.3000001, 400, 1000
    ratio = mpmath.mpf(down) / mpmath.mpf(up)
    exact = (ratio**target - ratio**start) / (ratio**target - 1)
    assert float(abs(wm.ruin_probability(up, down, start, target) - exact) / exact) < 1e-12


def test_bad_input_names_the_field():
    with pytest.raises(ValueError, match="start"):
        wm.ruin_probability(0.4, 0.5, 11, 10)
    with pytest.raises(ValueError, match="up"):
        wm.expected_duration(1.4, 0.5, 1, 10)
