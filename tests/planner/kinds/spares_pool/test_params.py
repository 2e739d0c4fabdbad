"""Spares-pool parameters: JSON round trip, rates from MTBF or rate, and messages naming the input."""

import pytest

from planner.kinds.spares_pool.params import SparesPoolParams

BASE = {"units": 6, "spares": 2, "failure": 2000.0, "repair": 48.0, "mission": 720.0}


@pytest.mark.parametrize(
    "values",
    [
        {},
        {"time_unit": "day", "crews": 3, "standby": "hot"},
        {"standby": "warm", "standby_failure": 8000.0, "failure_style": "mtbf"},
        {
            "failure_style": "rate",
            "failure": 0.0005,
            "repair_style": "rate",
            "repair": 0.5,
            "standby": "warm",
            "standby_failure": 0.0001,
        },
    ],
)
def test_json_round_trip(values):
    params = SparesPoolParams(**BASE | values)
    assert SparesPoolParams.from_json(params.to_json()) == params


def test_rates_follow_the_way_they_are_given():
    # an MTBF of 2,000 hours is a rate of 1/2000 an hour; a mean repair of 48 hours, 1/48 an hour
    # (exponential times: rate = 1 / mean; common practice)
    mtbf = SparesPoolParams(**BASE | {"standby": "warm", "standby_failure": 8000.0})
    assert (mtbf.failure_rate, mtbf.repair_rate, mtbf.warm_failure_rate) == (1 / 2000, 1 / 48, 1 / 8000)
    rate = SparesPoolParams(**BASE | {"failure_style": "rate", "failure": 0.01, "repair_style": "rate", "repair": 0.2})
    assert (rate.failure_rate, rate.repair_rate, rate.warm_failure_rate) == (0.01, 0.2, 0.0)
    hot = SparesPoolParams(**BASE | {"standby": "hot"})
    assert hot.warm_failure_rate == hot.failure_rate and hot.pool().standby == "hot"
    pool = mtbf.pool(spares=5, crews=2)
    assert (pool.units, pool.spares, pool.crews, pool.warm_failure_rate) == (6, 5, 2, 1 / 8000)


def test_a_cold_pool_keeps_no_standby_failures():
    params = SparesPoolParams(**BASE | {"standby": "cold", "standby_failure": 5.0})
    assert params.standby_failure is None and "standby_failure" not in params.to_json()


@pytest.mark.parametrize(
    ("changes", "message"),
    [
        ({"units": 0}, "units needed must be a whole number from 1 to 5000"),
        ({"spares": -1}, "spares must be a whole number from 0 to 5000"),
        ({"crews": 0}, "repair crews must be a whole number from 1 to 1000"),
        ({"failure": 0.0}, r"MTBF must be a number from 1e-09 to 1e\+09"),
        ({"failure_style": "rate", "failure": -1.0}, "failure rate must be a number from 1e-09"),
        ({"repair": float("nan")}, "mean repair time must be a number from 1e-09"),
        ({"repair_style": "rate", "repair": 1e10}, r"repair rate must be a number from 1e-09 to 1e\+09"),
        ({"mission": 0.0}, "mission length must be above 0 and at most 10,000,000 hours"),
        ({"mission": 2e7, "time_unit": "day"}, "mission length must be above 0 and at most 10,000,000 days"),
        ({"availability_target": 1.0}, "availability target must be a probability strictly between 0 and 1"),
        ({"standby": "warm"}, "standby MTBF must be a number from 1e-09"),
        ({"standby": "warm", "standby_failure": 100.0}, "standby MTBF must be at least the MTBF in service"),
        (
            {"standby": "warm", "failure_style": "rate", "failure": 0.01, "standby_failure": 0.02},
            "standby failure rate must be at most the failure rate in service",
        ),
        ({"standby": "lukewarm"}, "standby must be one of"),
        ({"time_unit": "fortnight"}, "time unit must be one of"),
    ],
)
def test_bad_parameters_name_the_input(changes, message):
    with pytest.raises(ValueError, match=message):
        SparesPoolParams(**BASE | changes)


def test_saved_json_with_unknown_or_missing_keys_is_refused():
    with pytest.raises(ValueError, match="unknown keys: colour"):
        SparesPoolParams.from_json(BASE | {"colour": "red"})
    with pytest.raises(ValueError, match="must include mission"):
        SparesPoolParams.from_json({k: v for k, v in BASE.items() if k != "mission"})
    with pytest.raises(ValueError, match="must be an object"):
        SparesPoolParams.from_json([1, 2])
