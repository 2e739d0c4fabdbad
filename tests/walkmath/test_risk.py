"""Risk by start level, buffer sizing and mean times, against forward sweeps, brute force and Wald."""

import itertools

import numpy as np
import pytest

import walkmath as wm
from walkmath import elimination

LAW = wm.StepLaw.from_pmf({-2: 0.1, -1: 0.4, 0: 0.3, 1: 0.1, 2: 0.1})
CYCLE = [LAW, wm.StepLaw.fixed(2), wm.StepLaw.nearest(0.2, 0.7)]


@pytest.mark.parametrize("law", [LAW, CYCLE], ids=["single", "cycle"])
@pytest.mark.parametrize(
    "below, above, high", list(itertools.product(wm.banded.BELOW_RULES, wm.banded.ABOVE_RULES, [6, None]))
)
def test_backward_sweep_equals_one_forward_outlook_per_start(law, below, above, high):
    walk = wm.BandedWalk(law, start=0, low=0, high=high, below=below, above=above)
    risk = walk.risk_by_start(10, top=6)
    for i, start in enumerate(risk.starts):
        # independent check: the forward outlook from each start separately
        forward = wm.BandedWalk(law, start=int(start), low=0, high=high, below=below, above=above).outlook(10)
        assert risk.stockout[i] == pytest.approx(forward.stockout[-1], rel=1e-12, abs=1e-300)
        assert risk.overflow[i] == pytest.approx(forward.overflow[-1], rel=1e-12, abs=1e-300)


def test_default_top_without_capacity_reaches_certain_safety():
    walk = wm.BandedWalk(wm.StepLaw.nearest(0.2, 0.3), start=2, low=0)
    risk = walk.risk_by_start(30)
    assert risk.stockout[-1] < 1e-12 and risk.starts[0] == 0


def test_smallest_start_and_capacity_match_brute_force():
    walk = wm.BandedWalk(LAW, start=4, low=0, high=12, below="lost", above="spill")
    start = walk.smallest_start(20, stockout_target=0.5)
    brute = [s for s in range(13) if wm.BandedWalk(LAW, s, 0, 12, "lost", "spill").outlook(20).stockout[-1] <= 0.5]
    assert start == brute[0]
    up = wm.StepLaw.from_pmf({-1: 0.3, 0: 0.3, 1: 0.4})
    grow = wm.BandedWalk(up, start=2, low=0, high=2, below="lost", above="spill")
    capacity = grow.smallest_capacity(15, overflow_target=0.01)
    brute = [h for h in range(2, 40) if wm.BandedWalk(up, 2, 0, h, "lost", "spill").outlook(15).overflow[-1] <= 0.01]
    assert capacity == brute[0]
    assert grow.smallest_capacity(15, overflow_target=0.0) == 2 + 15  # only the full reach is sure (common practice)


def test_targets_out_of_range_name_the_field():
    walk = wm.BandedWalk(LAW, start=4, low=0, high=12)
    with pytest.raises(ValueError, match="stockout_target"):
        walk.smallest_start(10, stockout_target=1.5)
    with pytest.raises(ValueError, match="overflow_target"):
        walk.smallest_capacity(10, overflow_target=-0.1)


def test_mean_exit_time_matches_feller_gamblers_ruin_duration():
    # Feller vol. 1, XIV, table 1: p = 0.45, z = 9, a = 10 -> expected duration 11.0 (table value, from memory);
    # 11.0056165 is Feller's XIV (3.4) evaluated for the same walk (computed from the closed form)
    walk = wm.BandedWalk(wm.StepLaw.nearest(0.45, 0.55), start=9, low=1, high=9, below="stop", above="stop")
    assert walk.mean_periods_to_exit() == pytest.approx(11.0, abs=0.05)
    assert walk.mean_periods_to_exit() == pytest.approx(11.0056165, abs=5e-7)  # closed-form fast path
    solved = elimination.solve_band(walk.laws, 9, "stop").times[8]  # the general elimination
    assert solved == pytest.approx(11.0056165, abs=5e-7)


def test_mean_time_to_stockout_without_capacity_follows_wald():
    # skip-free downward walk: E[T] = (distance to the first short level) / |drift| (Wald's identity)
    walk = wm.BandedWalk(wm.StepLaw.from_pmf({-1: 0.6, 0: 0.2, 2: 0.2}), start=5, low=0)
    assert walk.mean_periods_to_stockout() == pytest.approx(6 / 0.2, rel=1e-9)
    assert wm.BandedWalk(wm.StepLaw.nearest(0.5, 0.5), start=5, low=0).mean_periods_to_stockout() == np.inf


def test_mean_times_match_a_dense_solve_for_a_cycle():
    walk = wm.BandedWalk(CYCLE, start=3, low=0, high=7, below="lost", above="spill")
    # reference: the same first-step equations solved densely over (phase, level) with numpy
    size, phases = 8, len(CYCLE)
    matrix = np.eye(size * phases)
    for phase, law in enumerate(CYCLE):
        for level in range(size):
            for step, p in zip(law.steps, law.probs, strict=True):
                target = level + step
                if 0 <= target < size:
                    matrix[phase * size + level, ((phase + 1) % phases) * size + target] -= p
    times = np.linalg.solve(matrix, np.ones(size * phases))
    assert walk.mean_periods_to_exit() == pytest.approx(times[3], rel=1e-10)


def test_uncertain_exits_have_infinite_mean():
    stuck = wm.BandedWalk(wm.StepLaw.fixed(0), start=3, low=0, high=6)
    assert stuck.mean_periods_to_exit() == np.inf
    may_overflow_first = wm.BandedWalk(LAW, start=3, low=0, high=6, above="stop")
    assert may_overflow_first.mean_periods_to_stockout() == np.inf
