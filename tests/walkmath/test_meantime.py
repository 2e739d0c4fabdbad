"""Mean times to a stock-out or an exit, against 80-digit mpmath solves, exact rationals, Feller and Wald."""

import itertools
import math
import pickle
from fractions import Fraction

import mpmath
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

import walkmath as wm
from walkmath import elimination, meantime
from walkmath.checks import ABOVE_RULES, BELOW_RULES

SKEW = wm.StepLaw.from_pmf({-3: 0.2, -1: 0.3, 0: 0.1, 2: 0.25, 5: 0.15})
# 78 jumps (-39..38): arrivals Poisson(4) less demand Poisson(4.2), each cut at 1e-24
WIDE = wm.StepLaw.net(wm.StepLaw.poisson(4.0), wm.StepLaw.poisson(4.2))
CYCLE = [SKEW, wm.StepLaw.fixed(2), wm.StepLaw.nearest(0.2, 0.7), WIDE]
RISING = wm.StepLaw.from_pmf({-2: 0.1, -1: 0.1, 0: 0.2, 1: 0.3, 2: 0.3})  # drifts up: stock-outs are rare
SURGE = wm.StepLaw.nearest(0.6, 0.2)


def reference(laws, low, high, start, *, overflow_ends, above, digits=80):
    """E[T] from the first-step equations over (phase, level), solved by mpmath.lu_solve.

    The rules are spelled out here (design notes, section 3) and share no code
    with walkmath: a step below ``low`` is the stock-out (the path's end for
    this question), a step above ``high`` ends the path for an exit or under
    "stop" and is held at ``high`` under "spill". Each law is renormalised in
    ``digits`` digits (the stored floats sum to 1 only within rounding; the
    model is the normalised law).
    """
    mpmath.mp.dps = digits
    laws = laws if isinstance(laws, list) else [laws]
    size, phases = high - low + 1, len(laws)
    matrix = mpmath.eye(size * phases)
    for phase, law in enumerate(laws):
        total = mpmath.fsum(mpmath.mpf(float(p)) for p in law.probs)
        after = (phase + 1) % phases
        for level in range(size):
            for step, p in zip(law.steps, law.probs, strict=True):
                target = level + int(step)
                if p == 0 or target < 0 or (target >= size and (overflow_ends or above == "stop")):
                    continue
                matrix[phase * size + level, after * size + min(target, size - 1)] -= mpmath.mpf(float(p)) / total
    times = mpmath.lu_solve(matrix, mpmath.matrix([1] * (size * phases)))
    return times[start - low]


def relative_error(value, exact) -> float:
    return float(abs(mpmath.mpf(float(value)) - exact) / exact)


@pytest.mark.parametrize("law", [SKEW, WIDE, CYCLE], ids=["skew", "wide", "cycle"])
def test_every_rule_matches_a_high_precision_solve(law):
    # the rule below low never changes the first stock-out, and the rule above never changes the first exit
    for start, high in ((3, 24), (0, 8), (8, 8)):
        exit_exact = reference(law, 0, high, start, overflow_ends=True, above="stop", digits=40)
        stockout_exact = reference(law, 0, high, start, overflow_ends=False, above="spill", digits=40)
        for below, above in itertools.product(BELOW_RULES, ABOVE_RULES):
            walk = wm.BandedWalk(law, start=start, low=0, high=high, below=below, above=above)
            exit_time = walk.mean_periods_to_exit()
            assert not exit_time.at_least
            assert relative_error(exit_time, exit_exact) < 1e-10
            stockout_time = walk.mean_periods_to_stockout()
            if above == "stop":  # an up-step run overflows first with positive chance: not certain
                assert stockout_time == math.inf
            else:
                assert relative_error(stockout_time, stockout_exact) < 1e-10


@pytest.mark.parametrize(
    "law, high, start",
    [(SURGE, 25, 25), (SURGE, 25, 10), (SURGE, 30, 30), (SURGE, 30, 0), (RISING, 40, 20), (RISING, 60, 60)],
)
def test_rare_stockouts_keep_their_digits(law, high, start):
    # Means from 2e12 to 1.1e18 periods (0..25: 9.532e12; 0..30: 2.316e15 from the top, both from this 80-digit solve).
    walk = wm.BandedWalk(law, start=start, low=0, high=high, above="spill")
    exact = reference(law, 0, high, start, overflow_ends=False, above="spill")
    assert exact > 1e12
    solved = elimination.solve_band([law], high + 1, "spill").times[start]  # the general elimination
    assert relative_error(solved, exact) < 1e-10
    assert relative_error(walk.mean_periods_to_stockout(), exact) < 1e-10  # closed form when nearest


def test_issue_figures_for_the_surge_law():
    # up 0.6, down 0.2, spill at the top: 9.532e12 on 0..25 and 2.316e15 on 0..30 (80-digit solve, start at the top)
    for high, figure in ((25, 9.532e12), (30, 2.316e15)):
        value = wm.BandedWalk(SURGE, start=high, low=0, high=high).mean_periods_to_stockout()
        assert value == pytest.approx(figure, rel=1e-3) and math.isfinite(value)


def test_cycle_whose_overflow_cannot_come_first_has_a_finite_mean_under_stop():
    # the down law comes first, so the level is below the top before each up-step: no overflow is possible
    cycle = [wm.StepLaw.from_pmf({-2: 0.5, -1: 0.5}), wm.StepLaw.from_pmf({0: 0.5, 1: 0.5})]
    walk = wm.BandedWalk(cycle, start=9, low=0, high=9, above="stop")
    exact = reference(cycle, 0, 9, 9, overflow_ends=False, above="stop")
    assert relative_error(walk.mean_periods_to_stockout(), exact) < 1e-10
    # the same walk with an up-step first can overflow before a stock-out
    assert wm.BandedWalk(cycle[::-1], start=9, low=0, high=9, above="stop").mean_periods_to_stockout() == math.inf


def rational_mean_times(law, size, above):
    """(I - Q) t = 1 in exact rationals (Gauss-Jordan); stock-out below level 0, ``above`` at the top."""
    probs = [Fraction(float(p)) for p in law.probs]
    total = sum(probs)
    matrix = [[Fraction(int(i == j)) for j in range(size)] + [Fraction(1)] for i in range(size)]
    for i in range(size):
        for step, p in zip(law.steps, probs, strict=True):
            target = i + int(step)
            if 0 <= target < size or (target >= size and above == "spill"):
                matrix[i][min(target, size - 1)] -= p / total
    for col in range(size):
        pivot = matrix[col][col]
        matrix[col] = [value / pivot for value in matrix[col]]
        for row in range(size):
            if row != col and matrix[row][col]:
                factor = matrix[row][col]
                matrix[row] = [a - factor * b for a, b in zip(matrix[row], matrix[col], strict=True)]
    return [matrix[i][size] for i in range(size)]


@pytest.mark.parametrize("up, down", [(0.6, 0.2), (0.2, 0.6), (0.35, 0.35), (0.0, 0.5), (0.3, 0.3000001)])
@pytest.mark.parametrize("above", ABOVE_RULES)
def test_nearest_closed_forms_equal_exact_rationals(up, down, above):
    size = 9
    exact = rational_mean_times(wm.StepLaw.nearest(up, down), size, above)
    for start in range(size):
        walk = wm.BandedWalk(wm.StepLaw.nearest(up, down), start=start, low=0, high=size - 1, above=above)
        stockout = walk.mean_periods_to_stockout()
        if above == "stop" and up > 0:
            assert stockout == math.inf
        else:
            assert float(stockout) == pytest.approx(float(exact[start]), rel=1e-13)
        if above == "stop":  # exit and stock-out are the same question when the top ends the path
            assert float(walk.mean_periods_to_exit()) == pytest.approx(float(exact[start]), rel=1e-13)


def feller_duration(up, down, start, target, digits=60):
    """Feller vol. 1, XIV (3.4) (and (3.6) when fair), per move, stretched by 1 / (up + down); mpmath."""
    mpmath.mp.dps = digits
    up, down = mpmath.mpf(up), mpmath.mpf(down)
    p, q = up / (up + down), down / (up + down)
    if p == q:
        return start * (target - start) / (up + down)
    ratio = q / p
    per_move = start / (q - p) - target / (q - p) * (1 - ratio**start) / (1 - ratio**target)
    return per_move / (up + down)


@pytest.mark.parametrize(
    "up, down, start, target",
    [
        (0.45, 0.55, 9, 10),
        (0.3, 0.3000001, 5, 1000),
        (0.3, 0.3000001, 500_000, 1_000_000),
        (0.3000001, 0.3, 999_999, 1_000_000),
        (0.3, 0.2999999999, 5, 10**6),
        (0.4, 0.3, 10**17 - 1, 10**17),
        (0.3, 0.4, 1, 10**17),
        (0.1, 0.9, 300, 600),
        (0.2, 0.2, 3, 10),
    ],
)
def test_expected_duration_matches_feller_near_the_fair_case(up, down, start, target):
    exact = feller_duration(up, down, start, target)
    assert relative_error(wm.expected_duration(up, down, start, target), exact) < 1e-12


def test_expected_duration_next_to_a_far_end_is_about_ten():
    # drift 0.1 a period towards the target one level away: about 1 / 0.1 = 10 (Feller vol. 1, XIV (3.4) in the limit)
    assert wm.expected_duration(0.4, 0.3, 10**17 - 1, 10**17) == pytest.approx(10.0, rel=1e-12)


@pytest.mark.parametrize("up, down, start, target", [(0.3, 0.3000001, 40, 100), (0.45, 0.55, 9, 10), (0.3, 0.2, 1, 30)])
def test_elimination_agrees_with_gamblers_ruin(up, down, start, target):
    # levels 1..target-1 with both ends stopping are Feller's walk between 0 and target
    solved = elimination.solve_band([wm.StepLaw.nearest(up, down)], target - 1, "stop").times[start - 1]
    assert relative_error(solved, feller_duration(up, down, start, target)) < 1e-12


def test_without_capacity_down_steps_of_one_follow_wald():
    # X_T = low - 1 exactly, so E[T] = (start - low + 1) / |drift| (Wald, Ann. Math. Statist. 15 (1944))
    for law, start in [
        (wm.StepLaw.from_pmf({-1: 0.6, 0: 0.2, 2: 0.2}), 5),
        (wm.StepLaw.from_pmf({-1: 0.5, 0: 0.25 + 5e-4, 2: 0.25 - 5e-4}), 5),
        (wm.StepLaw.from_pmf({-1: 0.9, 3: 0.05, 5: 0.03, 9: 0.02}), 12),
    ]:
        drift = sum(Fraction(int(s)) * Fraction(float(p)) for s, p in zip(law.steps, law.probs, strict=True))
        exact = Fraction(start + 1) / -drift
        value = wm.BandedWalk(law, start=start, low=0).mean_periods_to_stockout()
        assert not value.at_least
        assert float(value) == pytest.approx(float(exact), rel=1e-10)


def test_near_fair_nearest_walk_without_capacity():
    # up 0.3, down 0.3000001: (start + 1) / (down - up) = 1e7 from start 0, exact from the two floats;
    # cross-check: Feller's two-sided duration with the far end 10**12 levels away (its pull is below 1e-40)
    walk = wm.BandedWalk(wm.StepLaw.nearest(0.3, 0.3000001), start=0, low=0)
    exact = Fraction(1) / (Fraction(0.3000001) - Fraction(0.3))
    assert float(walk.mean_periods_to_stockout()) == pytest.approx(float(exact), rel=1e-14)
    assert relative_error(walk.mean_periods_to_stockout(), feller_duration(0.3, 0.3000001, 1, 10**12)) < 1e-12
    assert walk.mean_periods_to_stockout() == pytest.approx(1e7, rel=1e-8)


def test_cycle_without_capacity_matches_a_solve_on_a_tall_band():
    cycle = [wm.StepLaw.from_pmf({-3: 0.5, -1: 0.2, 2: 0.3}), wm.StepLaw.fixed(-2), wm.StepLaw.poisson(0.5)]
    start = 6
    # theta*: the positive root of prod_r G_r(e^theta) = 1 (in mpmath); from M + 1 the chance of ever coming back
    # is below e^(-theta* (M + 1 - start)) times a phase factor (Lundberg), here under 1e-15 of the mean
    mpmath.mp.dps = 30

    def cycle_value(theta):
        return mpmath.fprod(
            mpmath.fsum(
                mpmath.mpf(float(p)) * mpmath.exp(int(k) * theta) for k, p in zip(law.steps, law.probs, strict=True)
            )
            for law in cycle
        )

    root = mpmath.findroot(lambda theta: cycle_value(theta) - 1, 1.0)
    top = start + int(math.ceil(36 / root))
    assert root > 0.5 and top < 70
    exact = reference(cycle, 0, top, start, overflow_ends=False, above="spill", digits=30)
    assert relative_error(wm.BandedWalk(cycle, start=start, low=0).mean_periods_to_stockout(), exact) < 1e-10


def test_a_cut_short_by_the_cost_cap_is_reported_as_a_lower_bound(monkeypatch):
    # drift -1e-5: an exact answer needs about 2e6 levels; with a smaller cap the answer is "more than N"
    law = wm.StepLaw.from_pmf({-1: 0.5, 0: 0.25 + 5e-6, 2: 0.25 - 5e-6})
    wald = 6 / 1e-5  # Wald's identity, as above
    monkeypatch.setattr(meantime, "WORK_CAP", 2e8)
    small = wm.BandedWalk(law, start=5, low=0).mean_periods_to_stockout()
    monkeypatch.setattr(meantime, "WORK_CAP", 4e8)
    larger = wm.BandedWalk(law, start=5, low=0).mean_periods_to_stockout()
    assert small.at_least and larger.at_least and small > 0
    assert larger - small >= 0  # a taller band can only lengthen the held walk's mean (coupling)
    assert wald - larger >= 0  # and the held walk never outlasts the free one


def test_requests_over_the_cap_are_refused_before_any_elimination(monkeypatch):
    def must_not_run(*args, **kwargs):
        raise AssertionError("the band was built before the cost check")

    monkeypatch.setattr(elimination, "substochastic_band", must_not_run)
    walk = wm.BandedWalk(WIDE, start=10, low=0, high=2_000_000)
    with pytest.raises(wm.ComputeTooLarge, match="mean_time needs .* narrow the band"):
        walk.mean_periods_to_stockout()
    with pytest.raises(wm.ComputeTooLarge, match="mean_time"):
        walk.cost(1, "mean_time").check()
    # without a capacity the levels up to the start must fit; the cost is priced, not raised, by walk.cost
    far = wm.BandedWalk(wm.StepLaw.from_pmf({-1: 0.6, 0: 0.2, 2: 0.2}), start=10**9, low=0)
    assert far.cost(1, "mean_time").levels == 10**9 + 1
    with pytest.raises(wm.ComputeTooLarge, match="start nearer to low"):
        far.mean_periods_to_stockout()


@pytest.mark.parametrize(
    "walk",
    [
        wm.BandedWalk(wm.StepLaw.nearest(0.5, 0.5), start=5, low=0),  # drift 0: certain, null recurrent
        wm.BandedWalk(wm.StepLaw.nearest(0.4, 0.3), start=5, low=0),  # drift up: may never stock out
        wm.BandedWalk(WIDE.__class__.net(wm.StepLaw.poisson(4.2), wm.StepLaw.poisson(4.0)), start=5, low=0),
        wm.BandedWalk(wm.StepLaw.fixed(0), start=3, low=0, high=6),  # never moves
        wm.BandedWalk([wm.StepLaw.fixed(1), wm.StepLaw.fixed(-1)], start=3, low=0, high=6),  # a closed loop
        wm.BandedWalk(SKEW, start=3, low=0, high=6, above="stop"),  # an overflow may end the path first
    ],
)
def test_uncertain_or_endless_stockouts_have_infinite_means(walk):
    assert walk.mean_periods_to_stockout() == math.inf


def test_a_mean_beyond_the_largest_float_is_a_lower_bound():
    # r = 18 over 400 levels: about 18^400 = 1e502 periods
    walk = wm.BandedWalk(wm.StepLaw.nearest(0.9, 0.05), start=400, low=0, high=400)
    value = walk.mean_periods_to_stockout()
    assert value.at_least and value == pytest.approx(1.7976931348623157e308)


def test_mean_time_is_a_float_that_keeps_its_flag():
    bound = wm.MeanTime(1e9, at_least=True)
    assert isinstance(bound, float) and bound == 1e9 and bound.at_least
    copy = pickle.loads(pickle.dumps(bound))
    assert copy.at_least and copy == 1e9
    assert not wm.MeanTime(3.0).at_least
    with pytest.raises(ValueError, match="mean time"):
        wm.MeanTime(-1.0)


def test_the_two_ways_of_ending_add_up_and_match_the_exact_walk():
    # P(stock-out first) + P(overflow first) = 1 on a band where every path ends; the stock-out side against
    # the exact rational walk run 140 periods, when under 1e-12 of its mass is left (tests/walkmath/exact.py)
    from tests.walkmath.exact import banded_outlook

    cycle = [wm.StepLaw.from_pmf({-2: 0.25, 0: 0.25, 1: 0.5}), wm.StepLaw.from_pmf({-1: 0.5, 2: 0.5})]
    solution = elimination.solve_band(cycle, 5, "stop", split_ends=True)
    assert not solution.stuck.any()
    assert solution.ended.sum(axis=1) == pytest.approx([1.0] * 5, rel=1e-14)
    pmf = [{int(s): Fraction(float(p)) for s, p in zip(law.steps, law.probs, strict=True)} for law in cycle]
    exact = banded_outlook(pmf, 2, 0, 4, "stop", "stop", 140)
    assert exact["alive"][-1] < Fraction(1, 10**12)  # so the exact chance lies within 1e-12 above this one
    assert solution.ended[2, 0] == pytest.approx(float(exact["stockout"][-1]), rel=1e-10)


@settings(max_examples=40, deadline=None)
@given(
    weights=st.lists(st.integers(min_value=0, max_value=9), min_size=2, max_size=7),
    lowest=st.integers(min_value=-4, max_value=0),
    size=st.integers(min_value=1, max_value=7),
    above=st.sampled_from(ABOVE_RULES),
)
def test_elimination_equals_exact_rationals_for_any_small_law(weights, lowest, size, above):
    # hypothesis draws laws of up to 7 jumps; reference: Gauss-Jordan in exact rationals (no shared code)
    assume(sum(weights) > 0 and any(weights[: max(0, -lowest)]))  # some down-step, so a stock-out can happen
    law = wm.StepLaw.from_pmf({lowest + i: w / sum(weights) for i, w in enumerate(weights) if w})
    solution = elimination.solve_band([law], size, above)
    exact = rational_mean_times(law, size, above)
    for start in range(size):
        assert float(solution.times[start]) == pytest.approx(float(exact[start]), rel=1e-12)


@pytest.mark.parametrize(
    "up, down, levels, start",
    [(0.2, 0.3, 10**9, 10**8), (0.3, 0.2, 1500, 700), (0.3, 0.3000001, 10**7, 5 * 10**6), (0.45, 0.05, 300, 0)],
)
def test_held_top_closed_form_on_tall_bands(up, down, levels, start):
    # sum_{k <= s} m_k, m_k = (1 - r^(n - k)) / ((1 - r) down), r = up / down: the passage time from k to k - 1
    # with the top held (first-step analysis; Karlin and Taylor, ch. 4, birth and death), summed in 60 digits
    mpmath.mp.dps = 60
    r, d, n, s = mpmath.mpf(up) / mpmath.mpf(down), mpmath.mpf(down), levels, start
    exact = ((s + 1) - r ** (n - s) * (1 - r ** (s + 1)) / (1 - r)) / ((1 - r) * d)
    walk = wm.BandedWalk(wm.StepLaw.nearest(up, down), start=start, low=0, high=levels - 1)
    assert relative_error(walk.mean_periods_to_stockout(), exact) < 1e-12


def test_a_kept_solution_answers_every_start_as_a_fresh_solve_would():
    # One solve serves every start; the answers must equal a fresh solve's (the 80-digit reference above)
    # and a one-probability change of the law must not be answered from the kept solution.
    walks = [wm.BandedWalk(CYCLE, start=start, low=0, high=30, above="spill") for start in (3, 12, 29)]
    first = [walk.mean_periods_to_stockout() for walk in walks]
    assert len(elimination._kept) == 1
    again = [walk.mean_periods_to_stockout() for walk in walks]
    assert again == first
    for walk, value in zip(walks, first, strict=True):
        exact = reference(CYCLE, 0, 30, walk.start, overflow_ends=False, above="spill", digits=30)
        assert relative_error(value, exact) < 1e-10
    nudged = wm.StepLaw.from_pmf({-3: 0.2, -1: 0.3, 0: 0.1, 2: 0.26, 5: 0.14})
    other = wm.BandedWalk([nudged, *CYCLE[1:]], start=12, low=0, high=30, above="spill")
    exact = reference([nudged, *CYCLE[1:]], 0, 30, 12, overflow_ends=False, above="spill", digits=30)
    assert relative_error(other.mean_periods_to_stockout(), exact) < 1e-10
    assert len(elimination._kept) == 2


def test_kept_solutions_are_read_only_and_bounded():
    for high in range(10, 10 + elimination.SOLUTIONS_KEPT + 3):
        wm.BandedWalk(SKEW, start=5, low=0, high=high).mean_periods_to_exit()
    assert len(elimination._kept) == elimination.SOLUTIONS_KEPT
    solution = next(iter(elimination._kept.values()))
    with pytest.raises(ValueError, match="read-only"):
        solution.times[0] = 0.0
