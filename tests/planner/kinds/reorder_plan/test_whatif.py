"""What-if changes on a saved reorder plan: merged, validated, described in the analyst's words."""

import pytest

from planner.count_law import CountLaw
from planner.kinds.reorder_plan.params import ReorderPlanParams
from planner.kinds.reorder_plan.whatif import apply_changes, describe_changes

CRATES = ReorderPlanParams(
    demand=CountLaw("negative_binomial", mean=2.0, variance=5.0), target=0.95, lead_time=4, unit="crates"
)


def test_changes_apply_and_read_in_words():
    variant = apply_changes(CRATES, {"demand_mean": 3.0, "lead_time": 6, "review_period": 7, "order_quantity": 20})
    # A negative binomial keeps its variance-to-mean ratio when its mean changes.
    assert (variant.demand.mean, variant.demand.variance) == (3.0, pytest.approx(7.5, rel=1e-12))
    assert (variant.lead_time, variant.review_period, variant.order_quantity) == (6, 7, 20)
    assert describe_changes(CRATES, variant) == [
        "mean demand 2 crates per day → 3 crates per day",
        "lead time 4 days → 6 days",
        "review period watched all the time → every 7 days",
        "order quantity not given → 20 crates",
    ]


def test_changes_that_do_not_apply_are_ignored():
    table = CRATES.replace(demand=CountLaw("fixed", amount=2), lead_time=None, lead_time_table=((3, 1.0),))
    assert apply_changes(table, {"demand_mean": 5.0, "lead_time": 9}) == table
    assert describe_changes(CRATES, CRATES) == []


def test_bad_change_names_the_input():
    with pytest.raises(ValueError, match="lead time must be a whole number from 0 to 365"):
        apply_changes(CRATES, {"lead_time": 500})
    with pytest.raises(ValueError, match="lead time must be at least 1 period"):
        apply_changes(CRATES, {"lead_time": 0})
