"""Cross-checks: normal approximation, Brownian first passage, Monte Carlo (walkmath/compare.py)."""

from __future__ import annotations

import itertools
import math
import tracemalloc
from fractions import Fraction

import mpmath
import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from scipy import stats

from tests.walkmath import exact as reference
from walkmath import BandedWalk, StepLaw, level_distribution
from walkmath.compare import (
    CHUNK_PATHS,
    brownian_first_passage,
    monte_carlo_outlook,
    normal_level_distribution,
    normal_stockout_curve,
    wilson_interval,
)

STEPS = StepLaw.nearest(up=0.3, down=0.4)  # mean -0.1, variance 0.69

# -- normal approximation of the level law -----------------------------------------


def test_normal_level_law_matches_scipy_norm_in_the_bulk():
    approx = normal_level_distribution(STEPS, steps=100, start=5)
    mean, spread = 5 + 100 * STEPS.mean, math.sqrt(100 * STEPS.variance)
    bulk = np.abs(approx.levels - mean) < 4 * spread
    levels = approx.levels[bulk]
    direct = stats.norm.cdf(levels + 0.5, mean, spread) - stats.norm.cdf(levels - 0.5, mean, spread)
    np.testing.assert_allclose(approx.probs[bulk], direct, rtol=1e-9)
    np.testing.assert_array_equal(approx.levels, level_distribution(STEPS, 100, start=5).levels)


def test_normal_level_law_keeps_digits_far_in_the_tail():
    # Where norm.cdf differences would be 0 or noise, compare with a 50-digit evaluation.
    approx = normal_level_distribution(STEPS, steps=100)
    mean, spread = 100 * STEPS.mean, math.sqrt(100 * STEPS.variance)
    with mpmath.workdps(50):
        for level in (-100, -75, 60, 100):
            exact = mpmath.ncdf(level + 0.5, mean, spread) - mpmath.ncdf(level - 0.5, mean, spread)
            assert approx.prob(level) == pytest.approx(float(exact), rel=1e-9), level
    # The plain difference of cdfs loses this value entirely (1 - 1 = 0).
    assert stats.norm.cdf(100.5, mean, spread) - stats.norm.cdf(99.5, mean, spread) == 0.0
    assert approx.prob(100) > 1e-40


def test_normal_level_law_is_a_probability_law():
    approx = normal_level_distribution(StepLaw.net(StepLaw.poisson(3.0), StepLaw.poisson(3.4)), steps=40)
    assert np.all(approx.probs >= 0) and np.all(approx.probs <= 1)
    assert math.fsum(approx.probs) == pytest.approx(1.0, abs=1e-12)


def test_normal_level_law_for_a_cyclic_list_sums_the_periods():
    # Periods 1..5 use laws 0, 1, 0, 1, 0: three nearest steps and two deliveries of 1.
    laws = [STEPS, StepLaw.fixed(1)]
    approx = normal_level_distribution(laws, steps=5, start=2)
    mean, spread = 2 + 3 * STEPS.mean + 2, math.sqrt(3 * STEPS.variance)
    levels = approx.levels
    direct = stats.norm.cdf(levels + 0.5, mean, spread) - stats.norm.cdf(levels - 0.5, mean, spread)
    np.testing.assert_allclose(approx.probs, direct, rtol=1e-9)
    np.testing.assert_array_equal(levels, level_distribution(laws, 5, start=2).levels)


def test_normal_level_law_too_many_levels_is_refused():
    with pytest.raises(ValueError, match="steps x step range"):
        normal_level_distribution(StepLaw.poisson(mean=50.0), steps=10**6)


def test_normal_level_law_of_a_fixed_step_is_certain():
    approx = normal_level_distribution(StepLaw.fixed(-2), steps=3, start=1)
    assert approx.prob(-5) == 1.0 and math.fsum(approx.probs) == 1.0


def test_normal_approximation_misstates_a_rare_tail_by_orders_of_magnitude():
    # The point of the product: at an exact probability near 1e-20 the normal figure is far off.
    exact = level_distribution(STEPS, steps=100)
    approx = normal_level_distribution(STEPS, steps=100)
    index = int(np.flatnonzero(exact.probs >= 1e-20)[0])  # lowest level with P >= 1e-20
    assert 1e-20 <= exact.probs[index] < 1e-18
    ratio = approx.probs[index] / exact.probs[index]
    assert max(ratio, 1 / ratio) > 10


# -- Brownian first passage -----------------------------------------------------------


@pytest.mark.parametrize(("variance", "distance", "t"), [(1.0, 1.0, 1.0), (2.5, 4.0, 30.0), (0.3, 10.0, 2.0)])
def test_zero_drift_is_the_reflection_principle(variance, distance, t):
    # P(min <= -a) = 2 Phi(-a / (sigma sqrt t)) (reflection principle; Feller vol. 2, common practice).
    expected = 2 * stats.norm.cdf(-distance / math.sqrt(variance * t))
    assert brownian_first_passage(0.0, variance, distance, t) == pytest.approx(expected, rel=1e-13)


@pytest.mark.parametrize("t", [0.5, 3.0, 17.0, 80.0, 500.0])
def test_drift_toward_the_barrier_gives_the_inverse_gaussian(t):
    # The passage time is inverse Gaussian with mean a/|mu| and shape a^2/sigma^2
    # (Chhikara & Folks, The Inverse Gaussian Distribution, 1989, ch. 1); scipy's
    # invgauss(m / shape, scale=shape) has that mean and shape.
    drift, variance, distance = -0.3, 2.0, 5.0
    mean, shape = distance / -drift, distance**2 / variance
    expected = stats.invgauss.cdf(t, mean / shape, scale=shape)
    assert brownian_first_passage(drift, variance, distance, t) == pytest.approx(expected, rel=1e-10)


def test_matches_a_fine_step_gaussian_walk():
    # Seeded simulation with 1000 steps; a discretely watched barrier is hit as if moved
    # 0.5826 sigma sqrt(dt) further away (Broadie, Glasserman & Kou 1997, Math. Finance 7:325),
    # so the simulated barrier is moved that much closer.
    drift, variance, distance, t = -0.2, 1.5, 1.2, 3.0
    steps, paths = 1000, 40_000
    dt = t / steps
    barrier = -(distance - 0.5826 * math.sqrt(variance * dt))
    rng = np.random.default_rng(7)
    hits = 0
    for _ in range(paths // 4000):
        moves = rng.normal(drift * dt, math.sqrt(variance * dt), size=(4000, steps))
        hits += int(np.count_nonzero(np.cumsum(moves, axis=1).min(axis=1) <= barrier))
    simulated = hits / paths
    formula = brownian_first_passage(drift, variance, distance, t)
    standard_error = math.sqrt(formula * (1 - formula) / paths)
    assert abs(simulated - formula) < 4 * standard_error + 0.003


def test_long_horizon_limits():
    # Drift toward the barrier: certain to hit; drift away: e^{-2 |mu| a / sigma^2}
    # (gambler's ruin for Brownian motion, Karatzas & Shreve section 3.5.C, from memory).
    assert brownian_first_passage(-0.3, 2.0, 5.0, 1e8) == pytest.approx(1.0, abs=1e-12)
    assert brownian_first_passage(0.3, 2.0, 5.0, 1e8) == pytest.approx(math.exp(-2 * 0.3 * 5.0 / 2.0), rel=1e-12)


def test_upward_barrier_convention_is_the_mirror_image():
    # Issue text, barrier above at distance a with drift mu toward it:
    # Phi((mu t - a) / (sigma sqrt t)) + e^{2 mu a / sigma^2} Phi((-a - mu t) / (sigma sqrt t)).
    mu, variance, distance, t = 0.4, 1.3, 3.0, 6.0
    scale = math.sqrt(variance * t)
    issue = stats.norm.cdf((mu * t - distance) / scale) + math.exp(2 * mu * distance / variance) * stats.norm.cdf(
        (-distance - mu * t) / scale
    )
    assert brownian_first_passage(-mu, variance, distance, t) == pytest.approx(issue, rel=1e-12)


def test_huge_exponents_neither_overflow_nor_give_nan():
    # 2 |mu| a / sigma^2 = 1e9: the exponential alone would overflow.
    for t in (1.0, 150.0, 199.0, 201.0, 250.0, 1e6):
        toward = brownian_first_passage(-50.0, 1e-3, 1e4, t)
        away = brownian_first_passage(50.0, 1e-3, 1e4, t)
        assert 0.0 <= toward <= 1.0 and away == 0.0
    assert brownian_first_passage(-50.0, 1e-3, 1e4, 150.0) == 0.0  # the front arrives at t = 200
    assert brownian_first_passage(-50.0, 1e-3, 1e4, 250.0) == 1.0


def test_first_passage_at_time_zero_and_without_noise():
    assert brownian_first_passage(-1.0, 1.0, 2.0, 0.0) == 0.0
    assert brownian_first_passage(-1.0, 0.0, 2.5, 2.0) == 0.0
    assert brownian_first_passage(-1.0, 0.0, 2.5, 3.0) == 1.0


@given(
    drift=st.floats(-1e300, 1e300),
    variance=st.floats(0.0, 1e300),
    distance=st.floats(1e-300, 1e300),
    t=st.floats(0.0, 1e300),
)
def test_first_passage_is_always_a_probability(drift, variance, distance, t):
    # DESIGN.md section 4: never NaN, never outside [0, 1], whatever the magnitudes.
    assert 0.0 <= brownian_first_passage(drift, variance, distance, t) <= 1.0


@pytest.mark.parametrize(
    ("args", "name"),
    [
        ((0.1, 1.0, 0.0, 1.0), "distance"),
        ((0.1, -1.0, 1.0, 1.0), "variance"),
        ((0.1, 1.0, 1.0, -1.0), "t"),
        ((float("nan"), 1.0, 1.0, 1.0), "drift"),
    ],
)
def test_first_passage_bad_inputs_name_the_parameter(args, name):
    with pytest.raises(ValueError, match=name):
        brownian_first_passage(*args)


# -- diffusion stock-out curve ------------------------------------------------------------


def test_stockout_curve_is_first_passage_with_continuity_correction():
    curve = normal_stockout_curve(STEPS, start=10, low=2, horizon=30)
    assert curve.shape == (31,) and curve[0] == 0.0
    assert np.all(np.diff(curve) >= 0) and np.all((curve >= 0) & (curve <= 1))
    for period in (1, 7, 30):
        assert curve[period] == pytest.approx(
            brownian_first_passage(STEPS.mean, STEPS.variance, 10 - 2 + 0.5, period), rel=1e-14
        )


def test_stockout_curve_is_close_in_the_bulk_and_wrong_in_the_tail():
    # Exact first passage from the banded walk (below="stop", no capacity).
    exact = BandedWalk(STEPS, start=10, low=0, below="stop").outlook(200).stockout
    approx = normal_stockout_curve(STEPS, start=10, low=0, horizon=200)
    assert np.max(np.abs(exact - approx)) < 0.05
    assert exact[10] == 0.0 and approx[10] > 1e-4  # ten periods cannot empty ten units


def test_stockout_curve_cyclic_law_uses_cycle_averages():
    laws = [STEPS, StepLaw.fixed(-1)]
    curve = normal_stockout_curve(laws, start=6, low=0, horizon=8)
    drift, variance = (STEPS.mean - 1) / 2, STEPS.variance / 2
    assert curve[8] == pytest.approx(brownian_first_passage(drift, variance, 6.5, 8), rel=1e-14)


def test_stockout_curve_start_below_low_is_refused():
    with pytest.raises(ValueError, match="start must be at least low"):
        normal_stockout_curve(STEPS, start=1, low=2, horizon=5)


# -- Wilson interval ------------------------------------------------------------------------


def test_wilson_interval_by_hand():
    # Wilson 1927 (JASA 22:209-212) by hand for 5 of 20 at 95% (z = 1.959964, z^2 = 3.841459):
    # centre = (0.25 + 3.841459/40) / (1 + 3.841459/20) = 0.346036 / 1.192073 = 0.290281,
    # half = 1.959964 sqrt(0.1875/20 + 3.841459/1600) / 1.192073 = 0.178420.
    lower, upper = wilson_interval(5, 20)
    assert lower == pytest.approx(0.111862, abs=2e-6)
    assert upper == pytest.approx(0.468701, abs=2e-6)


def test_wilson_interval_edges_and_arrays():
    # At 0 successes the interval is [0, z^2 / (n + z^2)] (Wilson's formula with p = 0).
    z2 = stats.norm.isf(0.025) ** 2
    lower, upper = wilson_interval(np.array([0, 20]), 20)
    assert lower[0] == 0.0 and upper[0] == pytest.approx(z2 / (20 + z2), rel=1e-12)
    assert upper[1] == 1.0 and lower[1] == pytest.approx(1 - z2 / (20 + z2), rel=1e-12)


@pytest.mark.parametrize(
    ("args", "name"),
    [
        ((21, 20), "successes"),
        ((-1, 20), "successes"),
        ((1.5, 20), "successes"),
        ((0, 0), "trials"),
        ((1, 20, 1.0), "confidence"),
    ],
)
def test_wilson_interval_bad_inputs_name_the_parameter(args, name):
    with pytest.raises(ValueError, match=name):
        wilson_interval(*args)


# -- Monte Carlo outlook --------------------------------------------------------------------


def enumerate_outlook(pmfs, start, low, high, below, above, horizon):
    """Exact stockout[n], overflow[n] by walking every path once (Fractions; DESIGN.md section 3 rules)."""
    laws = pmfs if isinstance(pmfs, list) else [pmfs]
    stockout = [Fraction(0)] * (horizon + 1)
    overflow = [Fraction(0)] * (horizon + 1)
    per_period = [list(laws[(period - 1) % len(laws)].items()) for period in range(1, horizon + 1)]
    for path in itertools.product(*per_period):
        weight = math.prod((p for _, p in path), start=Fraction(1))
        level, first_stockout, first_overflow = start, None, None
        for period, (step, _) in enumerate(path, start=1):
            level += step
            if level < low:
                first_stockout = first_stockout or period
                if below == "stop":
                    break
                if below == "lost":
                    level = low
            elif high is not None and level > high:
                first_overflow = first_overflow or period
                if above == "stop":
                    break
                level = high
        for n in range(horizon + 1):
            stockout[n] += weight if first_stockout and first_stockout <= n else 0
            overflow[n] += weight if first_overflow and first_overflow <= n else 0
    return stockout, overflow


NEAREST = {-1: Fraction(2, 5), 0: Fraction(3, 10), 1: Fraction(3, 10)}  # nearest(up=0.3, down=0.4)
CASES = [(NEAREST, 4, below, above) for below in ("backorder", "lost", "stop") for above in ("spill", "stop")] + [
    (NEAREST, None, "backorder", "spill"),
    ([NEAREST, {-2: Fraction(1, 2), 1: Fraction(1, 2)}], 4, "lost", "stop"),
]


def float_law(pmf) -> StepLaw:
    return StepLaw.from_pmf({step: float(p) for step, p in pmf.items()})


@pytest.mark.parametrize(("pmf", "high", "below", "above"), CASES)
def test_monte_carlo_brackets_exact_enumeration(pmf, high, below, above):
    stockout, overflow = enumerate_outlook(pmf, 2, 0, high, below, above, 6)
    # The enumeration agrees with the shared state-by-state reference (tests/walkmath/exact.py).
    shared = reference.banded_outlook(pmf, 2, 0, high, below, above, 6)
    assert stockout == shared["stockout"] and overflow == shared["overflow"]

    law = [float_law(item) for item in pmf] if isinstance(pmf, list) else float_law(pmf)
    # 1 - 1e-6 intervals so all 14 checks of a case hold together; seeded, hence deterministic.
    run = monte_carlo_outlook(law, 2, 0, high, below, above, 6, paths=200_000, seed=3, confidence=1 - 1e-6)
    exact_stockout = np.array([float(p) for p in stockout])
    exact_overflow = np.array([float(p) for p in overflow])
    assert np.all((run.stockout_lower <= exact_stockout) & (exact_stockout <= run.stockout_upper))
    assert np.all((run.overflow_lower <= exact_overflow) & (exact_overflow <= run.overflow_upper))
    assert run.stockout[0] == 0.0 and run.overflow[0] == 0.0
    assert np.all(np.diff(run.stockout) >= 0) and np.all(np.diff(run.overflow) >= 0)


def test_monte_carlo_default_interval_is_95_percent_wilson():
    run = monte_carlo_outlook(STEPS, 3, 0, 6, "stop", "spill", 12, paths=5000, seed=11)
    lower, upper = wilson_interval(np.rint(run.stockout * 5000).astype(int), 5000, 0.95)
    np.testing.assert_array_equal(run.stockout_lower, lower)
    np.testing.assert_array_equal(run.stockout_upper, upper)
    assert run.confidence == 0.95 and run.paths == 5000 and run.seed == 11


def test_monte_carlo_is_reproducible_for_a_seed():
    first = monte_carlo_outlook(STEPS, 3, 0, 6, "lost", "spill", 20, paths=CHUNK_PATHS + 17, seed=5)
    again = monte_carlo_outlook(STEPS, 3, 0, 6, "lost", "spill", 20, paths=CHUNK_PATHS + 17, seed=5)
    other = monte_carlo_outlook(STEPS, 3, 0, 6, "lost", "spill", 20, paths=CHUNK_PATHS + 17, seed=6)
    np.testing.assert_array_equal(first.stockout, again.stockout)
    np.testing.assert_array_equal(first.overflow, again.overflow)
    assert not np.array_equal(first.stockout, other.stockout)


def test_monte_carlo_certain_paths():
    # Fixed steps: every path is the same, so the fractions are exactly 0 or 1.
    down = monte_carlo_outlook(StepLaw.fixed(-1), 2, 0, 5, "stop", "stop", 6, paths=100)
    np.testing.assert_array_equal(down.stockout, [0, 0, 0, 1, 1, 1, 1])
    np.testing.assert_array_equal(down.overflow, np.zeros(7))
    up = monte_carlo_outlook(StepLaw.fixed(2), 1, 0, 4, "lost", "spill", 4, paths=100)
    np.testing.assert_array_equal(up.overflow, [0, 0, 1, 1, 1])


def test_a_stopped_path_has_no_later_events():
    # From low, down 1 or up 3 with even odds: in period 1 each path either stocks out (and
    # stops) or overflows; stopped paths must never count as overflowing later.
    law = StepLaw.from_pmf({-1: 0.5, 3: 0.5})
    run = monte_carlo_outlook(law, 0, 0, 2, "stop", "spill", 5, paths=20_000, seed=1, confidence=1 - 1e-6)
    stockout, overflow = enumerate_outlook({-1: Fraction(1, 2), 3: Fraction(1, 2)}, 0, 0, 2, "stop", "spill", 5)
    assert run.stockout[1] + run.overflow[1] == 1.0
    np.testing.assert_array_equal(run.overflow[1:], run.overflow[1])
    # After the overflow (level 2) a stock-out by period 5 needs downs in periods 2-4 (1/8), or an
    # up (spilled back to 2) then downs in periods 3-5 (1/16).
    assert overflow[5] == Fraction(1, 2) and stockout[5] == Fraction(1, 2) + Fraction(1, 2) * Fraction(3, 16)
    exact = np.array([float(p) for p in stockout])
    assert np.all((run.stockout_lower <= exact) & (exact <= run.stockout_upper))


def test_monte_carlo_memory_does_not_grow_with_paths_times_horizon():
    # 4 chunks x 300 periods: keeping every path's levels would take 630 MB.
    tracemalloc.start()
    try:
        monte_carlo_outlook(STEPS, 10, 0, 20, "backorder", "spill", 300, paths=4 * CHUNK_PATHS, seed=0)
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    assert peak < 20 * 2**20


@pytest.mark.parametrize(
    ("kwargs", "name"),
    [
        ({"below": "backlog"}, "below"),
        ({"above": "overflow"}, "above"),
        ({"start": 7}, "start"),
        ({"start": -1}, "start"),
        ({"high": -1}, "high"),
        ({"paths": 0}, "paths"),
        ({"horizon": -1}, "horizon"),
        ({"seed": -3}, "seed"),
        ({"confidence": 1.0}, "confidence"),
        ({"paths": 10**6, "horizon": 10**4}, "paths x horizon"),
        ({"law": [1, 2]}, "law"),
    ],
)
def test_monte_carlo_bad_inputs_name_the_parameter(kwargs, name):
    arguments = {
        "law": STEPS,
        "start": 2,
        "low": 0,
        "high": 6,
        "below": "stop",
        "above": "spill",
        "horizon": 5,
    }
    arguments.update(kwargs)
    with pytest.raises(ValueError, match=name):
        monte_carlo_outlook(**arguments)
