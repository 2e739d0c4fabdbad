"""What-if changes on a saved stock plan: merged, validated, described in the analyst's words."""

import pytest

from planner.kinds.stock_plan.params import CountLaw, StockPlanParams
from planner.kinds.stock_plan.whatif import apply_changes, describe_changes

SILO = StockPlanParams(
    start=45,
    horizon=56,
    high=90,
    below="lost",
    step_method="net",
    demand=CountLaw("negative_binomial", mean=3.4, variance=6.0),
    delivery_every=7,
    delivery_size=24,
)


def test_changes_apply_and_read_in_words():
    variant = apply_changes(SILO, {"start": 30, "no_capacity": True, "demand_mean": 6.8, "delivery_size": 30})
    assert (variant.start, variant.high, variant.delivery_size) == (30, None, 30)
    # A negative binomial keeps its variance-to-mean ratio when its mean changes.
    assert (variant.demand.mean, variant.demand.variance) == (6.8, pytest.approx(12.0, rel=1e-12))
    assert describe_changes(SILO, variant) == [
        "start stock 45 → 30 units",
        "capacity 90 units → no limit",
        "mean demand 3.4 units per day → 6.8 units per day",
        "delivery size 24 → 30 units",
    ]


def test_changes_that_do_not_apply_are_ignored():
    assert apply_changes(SILO, {"up": 0.3, "table": ((0, 1.0),)}) == SILO
    assert describe_changes(SILO, SILO) == []


def test_bad_change_names_the_input():
    with pytest.raises(ValueError, match="start stock must be a whole number from 0 to 90"):
        apply_changes(SILO, {"start": 91})
