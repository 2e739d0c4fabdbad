"""A stock plan made from a history's fit (planner/kinds/stock_plan/from_fit.py, the Kind.params_from_fit hook)."""

import dataclasses

import pytest

from planner.history.fit import FittedLaws
from planner.kinds import Kind, get_kind

MOVEMENTS = FittedLaws(
    source="Rye flour",
    period="day",
    shape="movements",
    periods=730,
    first_date="2024-01-01",
    last_date="2025-12-30",
    arrivals={"family": "poisson", "mean": 29.7},
    demand={"family": "negative_binomial", "mean": 28.8, "variance": 90.4},
    change_table=(),
    weekday_factors=(),
    first_weekday="Wednesday",
    summary="deliveries (in): Poisson; demand (out): negative binomial",
)


def make(fitted, **inputs):
    return get_kind("stock_plan").params_from_fit(fitted, **({"start": 200, "high": 400, "horizon": 28} | inputs))


def test_fitted_deliveries_and_demand_become_the_plans_laws():
    params = make(MOVEMENTS)
    assert (params.step_method, params.period, params.start, params.high, params.horizon) == (
        "net",
        "day",
        200,
        400,
        28,
    )
    assert (params.below, params.above, params.low) == ("lost", "spill", 0)
    assert params.arrivals.to_json() == {"family": "poisson", "mean": 29.7}
    assert params.demand.to_json() == {"family": "negative_binomial", "mean": 28.8, "variance": 90.4}
    assert params.mean_change == pytest.approx(29.7 - 28.8, rel=1e-12)


def test_a_weekday_pattern_scales_demand_day_by_day():
    factors = (0.95, 1.05, 1.05, 1.2, 1.4, 0.6, 1.0)  # from Wednesday
    params = make(dataclasses.replace(MOVEMENTS, weekday_factors=factors))
    assert params.profile == factors and params.cycle_length == 7


def test_a_level_history_gives_the_change_table_and_no_capacity_is_kept():
    table = ((-2, 0.2), (-1, 0.3), (0, 0.1), (1, 0.25), (2, 0.15))
    fitted = dataclasses.replace(MOVEMENTS, shape="levels", arrivals=None, demand=None, change_table=table)
    params = make(fitted, high=None)
    assert params.step_method == "table" and params.table == table and params.high is None


def test_too_wide_a_change_table_is_refused_naming_the_limit():
    table = tuple((step, 1 / 260) for step in range(-60, 200))
    fitted = dataclasses.replace(MOVEMENTS, shape="levels", arrivals=None, demand=None, change_table=table)
    with pytest.raises(ValueError) as caught:
        make(fitted)
    assert str(caught.value) == (
        "A stock plan cannot hold this fit as it stands: change table must have at most 200 rows; got 260."
    )


def test_a_start_above_the_capacity_is_refused():
    with pytest.raises(ValueError, match="start stock must be"):
        make(MOVEMENTS, start=500)


def test_kinds_are_not_made_from_fits_unless_they_say_so():
    assert Kind().params_from_fit(MOVEMENTS, start=1, high=None, horizon=1) is None
