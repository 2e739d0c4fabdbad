"""StockPlanParams: validation, JSON round trip (old shapes too), caps before building, and the laws it builds."""

import math
import re
from fractions import Fraction

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from scipy import stats

import walkmath as wm
from planner.kinds.stock_plan.params import MAX_LAW_WIDTH, MAX_PROFILE_FACTORS, CountLaw, StockPlanParams


def net(arrivals: CountLaw, demand: CountLaw, **extra) -> StockPlanParams:
    return StockPlanParams(
        start=5, horizon=10, low=0, high=20, step_method="net", arrivals=arrivals, demand=demand, **extra
    )


def pmf(law: wm.StepLaw) -> dict[int, float]:
    return dict(zip(law.steps.tolist(), law.probs.tolist(), strict=True))


def test_nearest_law_is_down_stay_up():
    law = StockPlanParams(start=2, horizon=3, step_method="nearest", up=0.25, down=0.5).step_laws()
    assert len(law) == 1
    # Exact: stay = 1 - up - down = 1/4 (fractions).
    assert pmf(law[0]) == {-1: 0.5, 0: float(Fraction(1, 4)), 1: 0.25}


def test_poisson_arrivals_minus_poisson_demand_is_skellam():
    params = net(CountLaw("poisson", mean=1.5), CountLaw("poisson", mean=2.0))
    (law,) = params.step_laws()
    steps = np.arange(-15, 12)
    # Reference: the difference of independent Poisson counts is Skellam (scipy.stats.skellam).
    expected = stats.skellam.pmf(steps, 1.5, 2.0)
    got = np.array([law.prob(k) for k in steps])
    np.testing.assert_allclose(got, expected, rtol=1e-10)


def test_negative_binomial_demand_matches_scipy():
    params = net(CountLaw("fixed", amount=3), CountLaw("negative_binomial", mean=2.0, variance=5.0))
    (law,) = params.step_laws()
    # scipy.stats.nbinom(n, p) with p = mean / variance, n = mean^2 / (variance - mean).
    n, p = 4.0 / 3.0, 0.4
    demand = np.arange(0, 30)
    np.testing.assert_allclose([law.prob(3 - d) for d in demand], stats.nbinom.pmf(demand, n, p), rtol=1e-10)


def test_profile_scales_mean_demand_per_period():
    params = net(CountLaw("poisson", mean=1.0), CountLaw("poisson", mean=2.0), profile=(1.0, 0.5, 2.0))
    laws = params.step_laws()
    assert len(laws) == 3
    for law, factor in zip(laws, (1.0, 0.5, 2.0), strict=True):
        # Skellam(1, 2 x factor), scipy.stats.skellam.
        steps = np.arange(-10, 6)
        np.testing.assert_allclose(
            [law.prob(k) for k in steps], stats.skellam.pmf(steps, 1.0, 2.0 * factor), rtol=1e-10
        )


def test_deliveries_shift_every_nth_period_and_cycle_is_lcm():
    params = net(
        CountLaw("fixed", amount=0),
        CountLaw("table", table=((1, 0.5), (2, 0.5))),
        profile=(),
        delivery_every=3,
        delivery_size=4,
    )
    laws = params.step_laws()
    assert params.cycle_length == 3
    assert [pmf(law) for law in laws] == [{-2: 0.5, -1: 0.5}, {-2: 0.5, -1: 0.5}, {2: 0.5, 3: 0.5}]
    weekly = net(
        CountLaw("fixed", amount=0),
        CountLaw("poisson", mean=1.0),
        profile=(1, 1, 1, 1, 1, 2, 2),
        delivery_every=2,
        delivery_size=1,
    )
    assert weekly.cycle_length == math.lcm(7, 2) == 14


def test_json_round_trip_for_every_method(small_params):
    table = StockPlanParams(start=0, horizon=5, step_method="table", table=((-1, 0.5), (2, 0.5)), below="backorder")
    netted = net(
        CountLaw("table", table=((0, 0.25), (3, 0.75))),
        CountLaw("negative_binomial", mean=2, variance=3),
        profile=(1.0, 1.5),
        delivery_every=4,
        delivery_size=2,
    )
    for params in (small_params, table, netted):
        assert StockPlanParams.from_json(params.to_json()) == params


@given(
    start=st.integers(0, 30),
    width=st.integers(0, 30),
    horizon=st.integers(1, 50),
    up=st.floats(0, 0.5),
    down=st.floats(0, 0.5),
)
def test_json_round_trip_property(start, width, horizon, up, down):
    params = StockPlanParams(start=start, horizon=horizon, high=start + width, step_method="nearest", up=up, down=down)
    assert StockPlanParams.from_json(params.to_json()) == params


@pytest.mark.parametrize(
    ("changes", "message"),
    [
        ({"start": 9}, "start stock must be a whole number from 0 to 8"),
        ({"start": -1}, "start stock must be a whole number from 0 to 8"),
        ({"high": -2}, "capacity must be a whole number"),
        ({"horizon": 0}, "horizon must be a whole number from 1 to 3650"),
        ({"up": 0.7}, "chance of one up + chance of one down must be at most 1"),
        ({"down": 1.5}, "chance of one down must be a finite number from 0.0 to 1.0"),
        ({"below": "borrow"}, "unmet demand rule must be one of"),
        ({"above": "float"}, "excess stock rule must be one of"),
        ({"step_method": "table", "table": ((0, 0.5), (1, 0.4))}, "change table probabilities must sum to 1"),
        ({"step_method": "table", "table": ((0, 0.5), (0, 0.5))}, "change table must list each value once"),
        ({"step_method": "net"}, "demand law is required"),
        ({"profile": (1.0, 2.0)}, "demand profile needs Poisson or negative binomial demand"),
        ({"delivery_every": 0, "delivery_size": 3}, "delivery every must be a whole number from 1 to 400"),
        ({"delivery_every": 2, "delivery_size": 0}, "delivery size must be a whole number from 1"),
    ],
)
def test_bad_parameters_name_the_parameter(small_params, changes, message):
    with pytest.raises(ValueError, match=message.replace("+", r"\+").replace("(", r"\(")):
        small_params.replace(**changes)


@pytest.mark.parametrize(
    ("law", "message"),
    [
        ({"family": "poisson", "mean": -1}, "mean must be a finite number"),
        ({"family": "negative_binomial", "mean": 2, "variance": 2}, "variance must exceed the mean"),
        ({"family": "fixed", "amount": 1.5}, "amount must be a whole number"),
        ({"family": "table", "table": ((-1, 1.0),)}, "count table values must be whole numbers at least 0"),
        ({"family": "gamma"}, "family must be one of"),
    ],
)
def test_bad_count_laws_name_the_parameter(law, message):
    with pytest.raises(ValueError, match=message):
        CountLaw(**law)


def test_from_json_rejects_unknown_and_missing_keys():
    with pytest.raises(ValueError, match="unknown keys: colour"):
        StockPlanParams.from_json({"start": 1, "horizon": 2, "up": 0.1, "down": 0.1, "colour": "red"})
    with pytest.raises(ValueError, match="must include horizon"):
        StockPlanParams.from_json({"start": 1})


@pytest.mark.parametrize(
    "law",
    [
        CountLaw("poisson", mean=0.3),
        CountLaw("poisson", mean=40.0),
        CountLaw("poisson", mean=2500.0),
        CountLaw("negative_binomial", mean=1.0, variance=100.0),
        CountLaw("negative_binomial", mean=30.0, variance=45.0),
        CountLaw("table", table=((2, 0.5), (9, 0.5))),
    ],
)
def test_width_bound_is_never_below_the_law_built(law):
    built = law.law()
    assert law.width_bound() >= built.probs.size
    assert law.width_bound(3.0) >= law.law(3.0).probs.size


def test_a_too_wide_law_is_refused_before_any_law_is_built(monkeypatch):
    def never(*args, **kwargs):
        raise AssertionError("a law was built during validation")

    for name in ("poisson", "negative_binomial", "net", "from_pmf", "fixed"):
        monkeypatch.setattr(wm.StepLaw, name, never)
    # Mean 1e4 and variance 1e8: the count law reaches about mean + 40 standard deviations.
    with pytest.raises(ValueError, match=f"at most {MAX_LAW_WIDTH:,}"):
        net(None, CountLaw("negative_binomial", mean=1e4, variance=1e8))
    with pytest.raises(ValueError, match="demand mean must be smaller"):
        net(None, CountLaw("poisson", mean=300.0), profile=(1.0, 100.0))


def test_profile_with_many_distinct_factors_is_refused():
    factors = tuple(1 + i / 100 for i in range(MAX_PROFILE_FACTORS + 1))
    with pytest.raises(ValueError, match=f"at most {MAX_PROFILE_FACTORS} different factors"):
        net(None, CountLaw("poisson", mean=2.0), profile=factors)
    assert net(None, CountLaw("poisson", mean=2.0), profile=factors[:-1]).cycle_length == MAX_PROFILE_FACTORS


def test_mean_zero_demand_is_no_demand():
    for law in (CountLaw("negative_binomial", mean=0.0, variance=2.0), CountLaw("poisson", mean=0.0)):
        (step,) = net(None, law).step_laws()
        assert pmf(step) == {0: 1.0}
        assert law.with_mean(2.0).law().mean == pytest.approx(2.0, rel=1e-12)


def test_no_supply_means_demand_alone():
    (law,) = net(None, CountLaw("poisson", mean=2.0)).step_laws()
    steps = np.arange(-20, 1)
    # Reference: minus a Poisson(2) count (scipy.stats.poisson).
    np.testing.assert_allclose([law.prob(k) for k in steps], stats.poisson.pmf(-steps, 2.0), rtol=1e-10)


def test_mean_change_from_the_numbers_matches_the_laws():
    params = net(
        CountLaw("table", table=((0, 0.5), (2, 0.5))),
        CountLaw("poisson", mean=2.0),
        profile=(1.0, 1.5),
        delivery_every=4,
        delivery_size=6,
    )
    laws = params.step_laws()
    assert params.mean_change == pytest.approx(math.fsum(law.mean for law in laws) / len(laws), rel=1e-12)


FIRST_RELEASE = [
    # Saved parameters of the first release, exactly as its demo fixtures stored them.
    {"start": 6, "horizon": 120, "low": 0, "high": None, "below": "stop", "above": "spill", "step_method": "nearest"}
    | {"up": 0.01, "down": 0.045},
    {"start": 14, "horizon": 60, "low": 0, "high": 24, "below": "lost", "above": "spill", "step_method": "table"}
    | {"table": [[-3, 0.04], [-2, 0.1], [-1, 0.2], [0, 0.26], [1, 0.22], [2, 0.12], [3, 0.06]]},
    {"start": 45, "horizon": 56, "low": 0, "high": 90, "below": "lost", "above": "spill", "step_method": "net"}
    | {"arrivals": {"family": "fixed", "amount": 0}, "demand": {"family": "negative_binomial", "mean": 3.4}}
    | {"profile": [1.0, 1.0, 1.25, 1.45, 0.6, 0.8, 0.9], "delivery_every": 7, "delivery_size": 24},
    {"start": 1, "horizon": 2, "up": 0.1, "down": 0.2},  # no step method: the first release's default
]
FIRST_RELEASE[2]["demand"]["variance"] = 6.0


@pytest.mark.parametrize("data", FIRST_RELEASE)
def test_first_release_json_still_loads_as_days(data):
    params = StockPlanParams.from_json(data)
    assert params.period == "day" and params.start == data["start"]
    assert StockPlanParams.from_json(params.to_json()) == params


def test_count_laws_are_built_once_and_shared(monkeypatch):
    from planner import count_law as module

    module._count_law.cache_clear()
    built = []
    real = wm.StepLaw.poisson

    def counting(mean):
        built.append(mean)
        return real(mean=mean)

    monkeypatch.setattr(wm.StepLaw, "poisson", counting)
    plan = net(None, CountLaw("poisson", mean=2.0), profile=(1.0, 1.5, 1.0, 1.5))
    first, again = plan.step_laws(), plan.replace(start=3).step_laws()
    assert built == [2.0, 3.0]  # one law per distinct factor, and none rebuilt for the second request
    assert [pmf(law) for law in first] == [pmf(law) for law in again]
    shared = plan.demand.law(1.5)
    assert shared is plan.replace(start=3).demand.law(1.5) and not shared.probs.flags.writeable
    assert module._count_law.cache_info().maxsize == module.LAW_CACHE_SIZE


@pytest.mark.parametrize(
    ("data", "message"),
    [
        ({"start": 1, "horizon": 2, "profile": 3}, "demand profile must be a list of numbers"),
        ({"start": 1, "horizon": 2, "step_method": "table", "table": 5}, "change table must be a list"),
        ({"start": 1, "horizon": 2, "step_method": "table", "table": [1, 2]}, "[value, probability] pairs"),
        ({"start": 1, "horizon": 2, "step_method": "net", "demand": {"family": "table", "table": [[1]]}}, "count"),
        ({"start": [1], "horizon": 2, "up": 0.1, "down": 0.1}, "start stock"),
        ({"start": 1, "horizon": {"a": 1}, "up": 0.1, "down": 0.1}, "horizon"),
    ],
)
def test_json_of_the_wrong_shape_is_refused_with_a_message(data, message):
    # JSON now also arrives from the API: every wrong shape is a ValueError naming what is wrong, never a TypeError.
    with pytest.raises(ValueError, match=re.escape(message)):
        StockPlanParams.from_json(data)
