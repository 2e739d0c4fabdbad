"""A reorder plan made from a history's fit (planner/kinds/reorder_plan/from_fit.py, the Kind.params_from_fit hook)."""

import dataclasses

import pytest

from planner.kinds import get_kind
from tests.planner.kinds.stock_plan.test_from_fit import MOVEMENTS

KIND = get_kind("reorder_plan")


def test_the_fitted_demand_becomes_the_plans_demand_with_stated_starting_values():
    params = KIND.params_from_fit(MOVEMENTS, start=200, high=400, horizon=28)
    assert params.demand.to_json() == {"family": "negative_binomial", "mean": 28.8, "variance": 90.4}
    assert (params.period, params.lead_time, params.target, params.measure) == ("day", 1, 0.95, "cycle")
    note = KIND.fit_note(MOVEMENTS)
    assert "lead time (1 day)" in note and "95% cycle service level" in note and "Edit" in note


def test_weekly_histories_keep_their_period():
    params = KIND.params_from_fit(dataclasses.replace(MOVEMENTS, period="week"), start=1, high=None, horizon=4)
    assert params.period == "week"
    assert "lead time (1 week)" in KIND.fit_note(dataclasses.replace(MOVEMENTS, period="week"))


def test_a_level_history_has_no_demand_to_plan_from():
    levels = dataclasses.replace(
        MOVEMENTS, shape="levels", arrivals=None, demand=None, change_table=((-1, 0.5), (1, 0.5))
    )
    with pytest.raises(ValueError, match="needs the demand itself: upload the units in and out"):
        KIND.params_from_fit(levels, start=1, high=None, horizon=4)


def test_a_demand_too_wide_for_a_reorder_plan_is_refused_with_the_reason():
    wide = dataclasses.replace(MOVEMENTS, demand={"family": "negative_binomial", "mean": 9000.0, "variance": 8.1e7})
    with pytest.raises(
        ValueError, match="A reorder plan cannot hold this fit as it stands: demand mean must be smaller"
    ):
        KIND.params_from_fit(wide, start=1, high=None, horizon=4)
