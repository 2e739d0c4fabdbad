"""Extreme inputs to every public entry point: a clear refusal, or probabilities in [0, 1].

Each property draws from a pool of extreme values (0, negatives, 1e308, 10**30, 10**400, NaN,
inf, the smallest subnormal, horizons and supports at and past the caps) mixed with ordinary
small ones, and checks that the call either raises ``ValueError`` (``ComputeTooLarge`` is one) or
returns probabilities that are finite, not negative and not above 1 (means: not NaN, not negative).

The engine's work cap is lowered for these tests (``small_caps``) so that anything the cost model
accepts is quick; that exercises the refusals of priced work as well as the answers.
"""

import contextlib
import functools
import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import walkmath as wm
from walkmath import cost

NAN, INF = float("nan"), float("inf")
# About 40 ms of work by the cost model; every call the model accepts under it stays cheap.
SMALL_CAP = 200_000_000
# The banded engine's older levels x periods cap, lowered in proportion.
SMALL_LEVEL_PERIODS = 200_000

EXTREME_NUMBERS = [0, -1, 1e308, -1e308, 10**30, -(10**30), 10**400, NAN, INF, -INF, 5e-324, 1e-300, 0.5]
EXTREME_COUNTS = [0, -1, 1e308, 10**30, NAN, INF, 0.5, 10**7, 10**7 + 1, 2**63, 10**9]

numbers = st.one_of(st.sampled_from(EXTREME_NUMBERS), st.floats(-5, 5, allow_nan=False))
probabilities = st.one_of(st.sampled_from(EXTREME_NUMBERS + [1.0, 0.3]), st.floats(0, 1))
counts = st.one_of(st.sampled_from(EXTREME_COUNTS), st.integers(0, 40))
levels = st.one_of(st.sampled_from(EXTREME_COUNTS + [-(10**30), -(10**12), 10**12]), st.integers(-10, 30))

EXAMPLES = settings(
    max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much]
)


# Address space a call may add: an allocation the caps missed fails here as MemoryError (a test
# failure naming the call) instead of exhausting the machine.
MEMORY_GUARD = 3 * 2**30


@contextlib.contextmanager
def small_caps():
    """Lower the work cap of ``Work.check`` (and the banded engine's own cap) for the duration."""
    check = cost.Work.check
    with pytest.MonkeyPatch.context() as patch, memory_guard():
        patch.setattr(cost.Work, "check", lambda self, cap=SMALL_CAP: check(self, min(cap, SMALL_CAP)))
        patch.setattr(wm.banded, "COMPUTE_CAP", SMALL_LEVEL_PERIODS, raising=False)
        yield


@contextlib.contextmanager
def memory_guard():
    """Limit this process's address space to its current size plus ``MEMORY_GUARD`` (Linux)."""
    try:
        import resource

        with open("/proc/self/statm") as statm:
            in_use = int(statm.read().split()[0]) * resource.getpagesize()
    except (ImportError, OSError):  # not Linux: no guard
        yield
        return
    soft, hard = resource.getrlimit(resource.RLIMIT_AS)
    limit = in_use + MEMORY_GUARD
    if hard != resource.RLIM_INFINITY:
        limit = min(limit, hard)
    resource.setrlimit(resource.RLIMIT_AS, (limit, hard))
    try:
        yield
    finally:
        resource.setrlimit(resource.RLIMIT_AS, (soft, hard))


def answer_or_refusal(call):
    """The call's result, or None when it refused with a ValueError (ComputeTooLarge included)."""
    with small_caps():
        try:
            return call()
        except ValueError:
            return None


def assert_probabilities(values):
    values = np.asarray(values, dtype=float)
    assert not np.any(np.isnan(values)), "NaN probability"
    assert np.all(values >= 0.0), f"negative probability {values.min()!r}"
    assert np.all(values <= 1.0), f"probability above 1: {values.max()!r}"


def assert_mean(value):
    assert not math.isnan(value) and value >= 0.0, f"mean {value!r}"


# -- step laws ------------------------------------------------------------------------


@st.composite
def step_laws(draw):
    """A step-law constructor call with extreme arguments (it may be refused)."""
    kind = draw(st.sampled_from(["direct", "pmf", "nearest", "poisson", "nb", "binomial", "fixed", "net", "wide"]))
    if kind == "direct":
        lowest, probs = draw(levels), draw(st.lists(probabilities, min_size=0, max_size=4))
        return lambda: wm.StepLaw(lowest, probs)
    if kind == "pmf":
        steps = draw(st.lists(levels, min_size=1, max_size=3, unique_by=repr))
        weights = draw(st.lists(probabilities, min_size=len(steps), max_size=len(steps)))
        return lambda: wm.StepLaw.from_pmf(list(zip(steps, weights, strict=True)))
    if kind == "nearest":
        up, down = draw(probabilities), draw(probabilities)
        return lambda: wm.StepLaw.nearest(up, down)
    if kind == "poisson":
        mean = draw(st.one_of(numbers, st.sampled_from([1e6, 1e-320, 300.0])))
        return lambda: wm.StepLaw.poisson(mean)
    if kind == "nb":
        mean = draw(st.one_of(numbers, st.sampled_from([1e6, 1e4, 3.0])))
        variance = draw(st.one_of(numbers, st.sampled_from([1e12, 1e8, 3.0 + 1e-12, 7.0])))
        return lambda: wm.StepLaw.negative_binomial(mean, variance)
    if kind == "binomial":
        trials, p = draw(counts), draw(probabilities)
        return lambda: wm.StepLaw.binomial(trials, p)
    if kind == "fixed":
        amount = draw(levels)
        return lambda: wm.StepLaw.fixed(amount)
    if kind == "net":
        up, down = draw(st.sampled_from([0.0, 1e-300, 2.0, 1e6])), draw(st.sampled_from([0.0, 3.0, 1e-320]))
        return lambda: wm.StepLaw.net(wm.StepLaw.poisson(up), wm.StepLaw.poisson(down))
    width = draw(st.sampled_from([2, 1_000, 10**6, 10**9, 10**30]))
    return lambda: wm.StepLaw.from_pmf({0: 0.5, width: 0.5})


def assert_law(law):
    assert_probabilities(law.probs)
    assert law.probs[0] > 0 and law.probs[-1] > 0
    assert math.fsum(law.probs) == pytest.approx(1.0, abs=1e-9)
    assert 0.0 <= law.truncated_mass <= 1.0
    assert math.isfinite(law.mean) and law.variance >= 0


@EXAMPLES
@given(step_laws())
def test_step_law_constructors_refuse_or_build_a_law(build):
    law = answer_or_refusal(build)
    if law is not None:
        assert_law(law)


def cached(builders):
    """Strategy over valid laws built once each (the widest take a quarter of a second to build)."""
    return st.sampled_from([functools.cache(build) for build in builders])


# laws that are valid, from ordinary to extreme (wide, huge steps, subnormal weights)
valid_laws = cached(
    [
        lambda: wm.StepLaw.nearest(0.3, 0.5),
        lambda: wm.StepLaw.nearest(1e-300, 5e-324),
        lambda: wm.StepLaw.nearest(0.0, 1.0),
        lambda: wm.StepLaw.from_pmf({-1: 0.5, 0: 0.2, 2: 0.3}),
        lambda: wm.StepLaw.from_pmf({-(10**9): 0.5, 1 - 10**9: 0.5}),
        lambda: wm.StepLaw.from_pmf({0: 0.5, 10**6: 0.5}),
        lambda: wm.StepLaw.poisson(1e6),
        lambda: wm.StepLaw.poisson(1e-320),
        lambda: wm.StepLaw.fixed(-(10**9)),
        lambda: wm.StepLaw.net(wm.StepLaw.poisson(3.0), wm.StepLaw.poisson(3.5)),
    ]
)


@EXAMPLES
@given(valid_laws, counts, levels)
def test_level_distribution_and_law_power(make_law, steps, start):
    law = make_law()
    result = answer_or_refusal(lambda: wm.level_distribution(law, steps, start))
    if result is not None:
        assert_probabilities(result.probs)
        assert math.fsum(result.probs) == pytest.approx(1.0, abs=1e-6)
    power = answer_or_refusal(lambda: wm.law_power(law, steps))
    if power is not None:
        assert_probabilities(power[1])


@EXAMPLES
@given(st.lists(valid_laws, min_size=1, max_size=3), counts, levels)
def test_normal_level_distribution_and_stockout_curve(make_laws, steps, start):
    laws = [make() for make in make_laws]
    result = answer_or_refusal(lambda: wm.normal_level_distribution(laws, steps, start))
    if result is not None:
        assert_probabilities(result.probs)
    curve = answer_or_refusal(lambda: wm.normal_stockout_curve(laws, start, 0, steps))
    if curve is not None:
        assert_probabilities(curve)
        assert np.all(np.diff(curve) >= 0)


@EXAMPLES
@given(numbers, numbers, numbers, numbers)
def test_brownian_first_passage(drift, variance, distance, t):
    value = answer_or_refusal(lambda: wm.brownian_first_passage(drift, variance, distance, t))
    if value is not None:
        assert_probabilities(value)


@EXAMPLES
@given(counts, counts, probabilities)
def test_wilson_interval(successes, trials, confidence):
    interval = answer_or_refusal(lambda: wm.wilson_interval(successes, trials, confidence))
    if interval is not None:
        assert_probabilities(interval)
        assert interval[0] <= interval[1]


@EXAMPLES
@given(valid_laws, levels, levels, st.one_of(st.none(), levels), counts, counts, counts)
def test_monte_carlo_outlook(make_law, start, low, high, horizon, paths, seed):
    law = make_law()
    below, above = ("lost", "spill") if high is not None else ("backorder", "spill")
    result = answer_or_refusal(
        lambda: wm.monte_carlo_outlook(law, start, low, high, below, above, horizon, paths=paths, seed=seed)
    )
    if result is not None:
        for curve in (result.stockout, result.overflow, result.stockout_lower, result.overflow_upper):
            assert_probabilities(curve)


@EXAMPLES
@given(valid_laws, levels, levels, counts)
def test_first_stockout_times(make_law, start, low, horizon):
    law = make_law()
    result = answer_or_refusal(lambda: wm.first_stockout_times(law, start, low, horizon))
    if result is not None:
        assert_probabilities(result)
        assert math.fsum(result) <= 1.0 + 1e-9


@EXAMPLES
@given(numbers, numbers, numbers, levels)
def test_continuous_level_distribution(up_rate, down_rate, t, start):
    result = answer_or_refusal(lambda: wm.continuous_level_distribution(up_rate, down_rate, t, start))
    if result is not None:
        assert_probabilities(result.probs)
        assert math.fsum(result.probs) == pytest.approx(1.0, abs=1e-9)


demand_laws = cached(
    [
        lambda: wm.StepLaw.poisson(2.0),
        lambda: wm.StepLaw.poisson(1e6),
        lambda: wm.StepLaw.negative_binomial(0.0, 5.0),
        lambda: wm.StepLaw.negative_binomial(1e4, 1e8),
        lambda: wm.StepLaw.fixed(10**9),
        lambda: wm.StepLaw.from_pmf({0: 0.5, 10**6: 0.5}),
    ]
)
lead_times = st.one_of(
    counts, st.sampled_from([lambda: wm.StepLaw.from_pmf({1: 0.5, 3: 0.5}), lambda: wm.StepLaw.fixed(10**7)])
)


@EXAMPLES
@given(demand_laws, lead_times, probabilities)
def test_lead_time_demand_and_reorder_point(make_demand, lead_time, service):
    demand = make_demand()
    lead_time = lead_time() if callable(lead_time) else lead_time
    law = answer_or_refusal(lambda: wm.lead_time_demand(demand, lead_time))
    if law is not None:
        assert_probabilities(law.probs)
    point = answer_or_refusal(lambda: wm.reorder_point(demand, lead_time, service))
    if point is not None:
        assert isinstance(point, int) and point >= 0
    stock = answer_or_refusal(lambda: wm.safety_stock(demand, lead_time, service))
    if stock is not None:
        assert math.isfinite(stock)


# -- modules being rewritten elsewhere: the banded engine and gambler's ruin ---------------


class Walk:
    """A BandedWalk's arguments, shown by hypothesis as the call that builds it."""

    LAWS = {
        "nearest(0.3, 0.5)": lambda: wm.StepLaw.nearest(0.3, 0.5),
        "nearest(0, 1e-300)": lambda: wm.StepLaw.nearest(0.0, 1e-300),
        "from_pmf({-1: .5, 0: .2, 2: .3})": lambda: wm.StepLaw.from_pmf({-1: 0.5, 0: 0.2, 2: 0.3}),
        "from_pmf({-10**9: .5, 1 - 10**9: .5})": lambda: wm.StepLaw.from_pmf({-(10**9): 0.5, 1 - 10**9: 0.5}),
        "poisson(1e6)": lambda: wm.StepLaw.poisson(1e6),
        "[nearest(0.3, 0.3), fixed(-2)]": lambda: [wm.StepLaw.nearest(0.3, 0.3), wm.StepLaw.fixed(-2)],
    }
    _built: dict = {}

    def __init__(self, law, start, low, high, below, above):
        self.args = (law, start, low, high, below, above)

    def __repr__(self):
        law, *rest = self.args
        return f"BandedWalk({law}, {', '.join(repr(a) for a in rest)})"

    def build(self):
        law, *rest = self.args
        if law not in self._built:
            self._built[law] = self.LAWS[law]()
        return wm.BandedWalk(self._built[law], *rest)


walks = st.builds(
    Walk,
    st.sampled_from(sorted(Walk.LAWS)),
    levels,
    levels,
    st.one_of(st.none(), levels),
    st.sampled_from(wm.checks.BELOW_RULES),
    st.sampled_from(wm.checks.ABOVE_RULES),
)
band_horizons = st.one_of(st.sampled_from(EXTREME_COUNTS), st.integers(0, 30))


def walk_or_none(spec: Walk):
    return answer_or_refusal(spec.build)


@EXAMPLES
@given(walks, band_horizons)
def test_banded_walk_outlook(spec, horizon):
    walk = walk_or_none(spec)
    outlook = walk and answer_or_refusal(lambda: walk.outlook(horizon))
    if outlook:
        for curve in (outlook.stockout, outlook.overflow, outlook.alive, outlook.final.probs):
            assert_probabilities(curve)


@EXAMPLES
@given(walks, band_horizons)
def test_banded_walk_risk_by_start(spec, horizon):
    walk = walk_or_none(spec)
    by_start = walk and answer_or_refusal(lambda: walk.risk_by_start(horizon))
    if by_start:
        assert_probabilities(by_start.stockout)
        assert_probabilities(by_start.overflow)


@EXAMPLES
@given(walks, band_horizons, probabilities)
def test_banded_walk_smallest_start(spec, horizon, target):
    walk = walk_or_none(spec)
    start = walk and answer_or_refusal(lambda: walk.smallest_start(horizon, target))
    assert start is None or walk.low <= start


@EXAMPLES
@given(walks, band_horizons, probabilities)
def test_banded_walk_smallest_capacity(spec, horizon, target):
    walk = walk_or_none(spec)
    capacity = walk and answer_or_refusal(lambda: walk.smallest_capacity(horizon, target))
    assert capacity is None or capacity >= walk.start


@EXAMPLES
@given(walks, band_horizons)
def test_banded_walk_outlook_at(spec, horizon):
    walk = walk_or_none(spec)
    at = walk and answer_or_refusal(lambda: walk.outlook_at([horizon]))
    if at:
        assert_probabilities(at.stockout)
        assert_probabilities(at.overflow)


@EXAMPLES
@given(walks)
def test_banded_walk_mean_periods_to_stockout(spec):
    walk = walk_or_none(spec)
    value = walk and answer_or_refusal(walk.mean_periods_to_stockout)
    if value is not None:
        assert_mean(value)


@EXAMPLES
@given(probabilities, probabilities, levels, levels)
def test_gamblers_ruin(up, down, start, target):
    ruin = answer_or_refusal(lambda: wm.ruin_probability(up, down, start, target))
    if ruin is not None:
        assert_probabilities(ruin)
    duration = answer_or_refusal(lambda: wm.expected_duration(up, down, start, target))
    if duration is not None:
        assert_mean(duration)
