"""StockWalkParams: validation, JSON round trip, and the step laws it builds."""

import math
from fractions import Fraction

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from scipy import stats

import walkmath as wm
from planner.params import CountLaw, StockWalkParams, compute_size


def net(arrivals: CountLaw, demand: CountLaw, **extra) -> StockWalkParams:
    return StockWalkParams(
        start=5, horizon=10, low=0, high=20, step_method="net", arrivals=arrivals, demand=demand, **extra
    )


def pmf(law: wm.StepLaw) -> dict[int, float]:
    return dict(zip(law.steps.tolist(), law.probs.tolist(), strict=True))


def test_nearest_law_is_down_stay_up():
    law = StockWalkParams(start=2, horizon=3, step_method="nearest", up=0.25, down=0.5).step_laws()
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
    table = StockWalkParams(start=0, horizon=5, step_method="table", table=((-1, 0.5), (2, 0.5)), below="backorder")
    netted = net(
        CountLaw("table", table=((0, 0.25), (3, 0.75))),
        CountLaw("negative_binomial", mean=2, variance=3),
        profile=(1.0, 1.5),
        delivery_every=4,
        delivery_size=2,
    )
    for params in (small_params, table, netted):
        assert StockWalkParams.from_json(params.to_json()) == params


@given(
    start=st.integers(0, 30),
    width=st.integers(0, 30),
    horizon=st.integers(1, 50),
    up=st.floats(0, 0.5),
    down=st.floats(0, 0.5),
)
def test_json_round_trip_property(start, width, horizon, up, down):
    params = StockWalkParams(start=start, horizon=horizon, high=start + width, step_method="nearest", up=up, down=down)
    assert StockWalkParams.from_json(params.to_json()) == params


@pytest.mark.parametrize(
    ("changes", "message"),
    [
        ({"start": 9}, "start level must be a whole number from 0 to 8"),
        ({"start": -1}, "start level must be a whole number from 0 to 8"),
        ({"high": -2}, "capacity must be a whole number"),
        ({"horizon": 0}, "horizon must be a whole number from 1 to 3650"),
        ({"up": 0.7}, "up + down must be at most 1"),
        ({"down": 1.5}, "down must be a finite number from 0.0 to 1.0"),
        ({"below": "borrow"}, "rule below low must be one of"),
        ({"above": "float"}, "rule above capacity must be one of"),
        ({"step_method": "table", "table": ((0, 0.5), (1, 0.4))}, "step table probabilities must sum to 1"),
        ({"step_method": "table", "table": ((0, 0.5), (0, 0.5))}, "step table must list each value once"),
        ({"step_method": "net"}, "arrivals law is required"),
        ({"profile": (1.0, 2.0)}, "profile needs the arrivals-and-demand step law"),
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
        StockWalkParams.from_json({"start": 1, "horizon": 2, "up": 0.1, "down": 0.1, "colour": "red"})
    with pytest.raises(ValueError, match="must include horizon"):
        StockWalkParams.from_json({"start": 1})


@pytest.mark.parametrize("below", ["backorder", "lost", "stop"])
@pytest.mark.parametrize("high", [None, 9])
def test_compute_size_covers_the_levels_the_engine_uses(below, high):
    params = StockWalkParams(
        start=3, horizon=7, low=0, high=high, below=below, step_method="table", table=((-2, 0.3), (0, 0.3), (3, 0.4))
    )
    levels, periods = compute_size(params)
    outlook = params.walk().outlook(horizon=params.horizon)
    assert (levels, periods) == (outlook.levels.size, 7)
