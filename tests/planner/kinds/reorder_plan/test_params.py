"""Reorder-plan parameters: every bad input named with its range, JSON round trips, the laws they stand for."""

import numpy as np
import pytest
from scipy import stats

from planner.count_law import CountLaw
from planner.kinds.reorder_plan.params import MAX_DEMAND_WIDTH, ReorderPlanParams

IGNITERS = ReorderPlanParams(
    demand=CountLaw("negative_binomial", mean=0.3, variance=1.5),
    target=0.99,
    lead_time=4,
    unit="igniters",
    order_quantity=10,
    holding=0.05,
    order_cost=4.0,
    shortage_penalty=3.0,
)


def plan(**changes) -> ReorderPlanParams:
    return IGNITERS.replace(**changes)


@pytest.mark.parametrize(
    "changes, message",
    [
        ({"target": 1.0}, "service target must be a probability strictly between 0 and 1"),
        ({"target": 0.0}, "service target must be a probability strictly between 0 and 1"),
        ({"measure": "ready"}, "service measure must be one of 'cycle', 'fill'"),
        ({"lead_time": -1}, "lead time must be a whole number from 0 to 365"),
        ({"lead_time": 400}, "lead time must be a whole number from 0 to 365"),
        ({"lead_time": 2.5}, "lead time must be a whole number"),
        ({"lead_time": None}, "lead time is required"),
        ({"lead_time_table": ((3, 1.0),)}, "lead time must be given either as a number of periods or as a table"),
        ({"lead_time": None, "lead_time_table": ((3, 0.5), (4, 0.4))}, "lead time table probabilities must sum to 1"),
        ({"lead_time": None, "lead_time_table": ((3, 0.5), (900, 0.5))}, "lead time table value must be"),
        ({"lead_time": 0}, "lead time must be at least 1 period when the stock is watched all the time"),
        ({"review_period": -2}, "review period must be a whole number from 0 to 365"),
        ({"order_quantity": 0}, "order quantity must be a whole number from 1 to 1000000"),
        ({"measure": "fill", "order_quantity": None}, "order quantity is needed for a fill-rate target"),
        ({"holding": -1.0}, "holding cost must be a finite number from 0.0"),
        ({"holding": None}, "holding cost must be above 0 when costs are given"),
        ({"order_cost": float("nan")}, "order cost must be a finite number"),
        ({"shortage_penalty": 1e13}, "shortage penalty must be a finite number from 0.0 to 1000000000000.0"),
        ({"unit": "=cmd"}, "unit name must be 1 to 24 letters"),
        ({"unit": "x" * 25}, "unit name must be 1 to 24 letters"),
        ({"period": "fortnight"}, "period must be one of"),
        ({"demand": CountLaw("poisson", mean=0.0)}, "demand must have some chance of at least one unit"),
        ({"demand": CountLaw("table", table=((0, 1.0),))}, "demand must have some chance of at least one unit"),
        (
            {"demand": CountLaw("negative_binomial", mean=100.0, variance=5e4)},
            "demand mean must be smaller or less spread out",
        ),
        ({"demand": None}, "demand law is required"),
    ],
)
def test_bad_parameters_name_the_input_and_its_range(changes, message):
    with pytest.raises(ValueError, match=message):
        plan(**changes)


def test_the_widest_demand_allowed_is_checked_on_the_numbers_alone():
    # Every Poisson mean the form takes fits; an erratic negative binomial can reach past MAX_DEMAND_WIDTH.
    assert CountLaw("poisson", mean=1e4).width_bound() <= MAX_DEMAND_WIDTH
    plan(demand=CountLaw("poisson", mean=1e4))
    assert CountLaw("negative_binomial", mean=100.0, variance=3e4).width_bound() <= MAX_DEMAND_WIDTH
    assert CountLaw("negative_binomial", mean=100.0, variance=5e4).width_bound() > MAX_DEMAND_WIDTH


def test_json_round_trip_and_unknown_keys():
    table = plan(lead_time=None, lead_time_table=((7, 0.2), (3, 0.8)), review_period=2, measure="fill")
    for params in (IGNITERS, table, ReorderPlanParams(demand=CountLaw("fixed", amount=2), target=0.9, lead_time=1)):
        assert ReorderPlanParams.from_json(params.to_json()) == params
    assert table.lead_time_table == ((3, 0.8), (7, 0.2))  # kept in order of lead time
    with pytest.raises(ValueError, match="unknown keys: colour"):
        ReorderPlanParams.from_json(IGNITERS.to_json() | {"colour": "red"})
    with pytest.raises(ValueError, match="must include target"):
        ReorderPlanParams.from_json({"demand": {"family": "poisson", "mean": 1.0}, "lead_time": 2})


def test_unit_names_are_tidied_and_default_to_units():
    assert plan(unit="  flour   sacks ").unit == "flour sacks"
    assert plan(unit="").unit == "units"


def test_review_policy_needs_a_whole_number_of_review_periods_of_lead_time():
    assert plan().policy_lead_cycles == 4 and plan().review_cycle == 1
    assert plan(lead_time=14, review_period=7).policy_lead_cycles == 2
    assert plan(lead_time=0, review_period=7).policy_lead_cycles == 0
    assert plan(lead_time=3, review_period=7).policy_lead_cycles is None
    assert plan(lead_time=None, lead_time_table=((3, 1.0),)).policy_lead_cycles is None


def test_laws_are_the_stated_ones():
    # Negative binomial from mean and variance: p = mean / variance, n = mean p / (1 - p) (scipy.stats.nbinom).
    law = IGNITERS.demand_law()
    counts = np.arange(0, 20)
    np.testing.assert_allclose(law.probs[:20], stats.nbinom.pmf(counts, 0.075, 0.2), rtol=1e-12)
    lead = plan(lead_time=None, lead_time_table=((2, 0.25), (5, 0.75))).lead_time_law()
    assert (lead.lowest, lead.highest, lead.probs[0], lead.probs[-1]) == (2, 5, 0.25, 0.75)
    assert plan().mean_lead_time == 4.0
    assert plan(lead_time=None, lead_time_table=((2, 0.25), (5, 0.75))).mean_lead_time == pytest.approx(4.25)
