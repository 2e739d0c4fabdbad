"""Reorder-plan forms: every bad input gets its own message at once, nothing is saved, nothing is computed."""

import pytest
from django.urls import reverse

import walkmath as wm
from planner.forms import scenario_initial
from planner.kinds import get_kind
from planner.kinds.reorder_plan.forms import DemandLeadTimeForm, ReorderPlanForm, WhatIfForm
from planner.models import Scenario
from tests.conftest import example_scenario

NEW = reverse("scenario_new_kind", kwargs={"kind": "reorder_plan"})
GOOD = {
    "title": "Oven igniters",
    "notes": "",
    "period": "day",
    "unit": "igniters",
    "demand_family": "negative_binomial",
    "demand_mean": "0.3",
    "demand_variance": "1.5",
    "lead_time_method": "fixed",
    "lead_time": "4",
    "review_period": "0",
    "measure": "cycle",
    "service_target": "99 %",
    "order_quantity": "10",
    "holding": "0.05",
    "order_cost": "4",
    "shortage_penalty": "",
}

BAD = [
    ({"title": ""}, "title", "This field is required."),
    ({"demand_mean": ""}, "demand_mean", "Required for a negative binomial demand law."),
    ({"demand_mean": "-1"}, "demand_mean", "mean must be a finite number from 0.0"),
    ({"demand_variance": "0.2"}, "demand_variance", "variance must exceed the mean"),
    ({"demand_mean": "0"}, "demand_mean", "demand must have some chance of at least one unit"),
    ({"demand_family": "poisson", "demand_mean": "0"}, "demand_mean", "demand must have some chance of at least one"),
    ({"demand_family": "table", "demand_table": "0: 0.5, 2: 0.4"}, "demand_table", "count table probabilities must"),
    ({"demand_family": "table", "demand_table": "two: half"}, "demand_table", "Write each row as 'value: probability'"),
    ({"demand_family": "fixed", "demand_amount": ""}, "demand_amount", "Required for a fixed demand law."),
    (
        {"demand_variance": "200000", "demand_mean": "100"},
        "demand_mean",
        "demand mean must be smaller or less spread out",
    ),
    ({"lead_time": ""}, "lead_time", "Required for this choice."),
    ({"lead_time": "0"}, "lead_time", "lead time must be at least 1 period when the stock is watched all the time"),
    ({"lead_time": "400"}, "lead_time", "Ensure this value is less than or equal to 365."),
    ({"lead_time_method": "table", "lead_time_table": ""}, "lead_time_table", "Required for this choice."),
    (
        {"lead_time_method": "table", "lead_time_table": "3: 0.5, 4: 0.2"},
        "lead_time_table",
        "lead time table probabilities must sum to 1",
    ),
    ({"review_period": "-1"}, "review_period", "Ensure this value is greater than or equal to 0."),
    ({"service_target": "100"}, "service_target", "Give a percentage above 0 and below 100"),
    ({"service_target": "high"}, "service_target", "Give a percentage, e.g. 5"),
    ({"measure": "fill", "order_quantity": ""}, "order_quantity", "Required for a fill-rate target"),
    ({"order_quantity": "0"}, "order_quantity", "Ensure this value is greater than or equal to 1."),
    ({"holding": "0"}, "holding", "holding cost must be above 0 when costs are given"),
    ({"order_cost": "-3"}, "order_cost", "Ensure this value is greater than or equal to 0."),
    ({"unit": "=SUM(A1)"}, "unit", "unit name must be 1 to 24 letters"),
    ({"period": "fortnight"}, "period", "Select a valid choice."),
]


def test_good_input_gives_parameters_with_the_target_as_a_fraction():
    form = ReorderPlanForm(GOOD)
    assert form.is_valid(), form.errors
    params = form.cleaned_data["params"]
    assert (params.target, params.lead_time, params.unit, params.order_quantity) == (0.99, 4, "igniters", 10)
    assert (params.holding, params.order_cost, params.shortage_penalty) == (0.05, 4.0, None)
    # The scenario list's stored target mirrors the plan's: the shortfall allowed.
    assert form.cleaned_data["stockout_target"] == pytest.approx(0.01, rel=1e-12)
    table = ReorderPlanForm(GOOD | {"lead_time_method": "table", "lead_time_table": "3: 0.5, 6: 0.5", "lead_time": ""})
    assert table.is_valid(), table.errors
    assert table.cleaned_data["params"].lead_time_table == ((3, 0.5), (6, 0.5))
    blank_review = ReorderPlanForm(GOOD | {"review_period": "", "unit": ""})
    assert blank_review.is_valid() and blank_review.cleaned_data["params"].review_period == 0
    assert blank_review.cleaned_data["params"].unit == "units"


@pytest.mark.parametrize(("changes", "field", "message"), BAD)
@pytest.mark.django_db
def test_bad_input_gets_its_message_and_saves_nothing(client, owner, changes, field, message):
    form = ReorderPlanForm(GOOD | changes)
    assert not form.is_valid()
    assert any(message in error for error in form.errors.get(field, [])), form.errors
    client.force_login(owner)
    response = client.post(NEW, GOOD | changes)
    assert response.status_code == 200
    assert message in response.content.decode().replace("&#x27;", "'")
    assert Scenario.objects.count() == 0


def test_every_error_shows_on_the_first_submit():
    blank = ReorderPlanForm({"demand_family": "poisson", "lead_time_method": "fixed", "measure": "cycle"})
    assert not blank.is_valid()
    assert {"title", "demand_mean", "lead_time", "service_target"} <= set(blank.errors)
    # A bad lead time does not hide a bad demand law or a bad target, nor the other way round.
    three = ReorderPlanForm(GOOD | {"demand_variance": "0.1", "lead_time": "0", "holding": "0"})
    assert not three.is_valid()
    assert {"demand_variance", "lead_time", "holding"} <= set(three.errors)


def test_validation_builds_no_law(monkeypatch):
    def never(*args, **kwargs):
        raise AssertionError("a law was built during validation")

    for name in ("poisson", "negative_binomial", "from_pmf", "fixed"):
        monkeypatch.setattr(wm.StepLaw, name, never)
    assert ReorderPlanForm(GOOD).is_valid()
    assert ReorderPlanForm(GOOD | {"lead_time_method": "table", "lead_time_table": "2: 1"}).is_valid()


def test_labels_name_the_period():
    week = ReorderPlanForm(GOOD | {"period": "week"})
    assert week.fields["lead_time"].label == "Lead time (weeks)"
    assert week.fields["holding"].label == "Holding cost (per unit per week)"
    assert ReorderPlanForm().fields["review_period"].label == "Review period (days)"
    assert "stockout_target" not in ReorderPlanForm().fields  # the plan's own service target replaces it


def test_preview_form_needs_only_demand_and_lead_time():
    form = DemandLeadTimeForm(
        {"demand_family": "poisson", "demand_mean": "2", "lead_time_method": "fixed", "lead_time": "3"}
    )
    assert form.is_valid(), form.errors
    params = form.cleaned_data["params"]
    assert (params.lead_time, params.review_period, params.demand.mean) == (3, 0, 2.0)


@pytest.mark.django_db
def test_initial_values_round_trip_through_the_form(owner):
    scenario = example_scenario(owner, "reorder_plan")
    initial = scenario_initial(scenario, get_kind(scenario.kind))
    shown = ReorderPlanForm(initial=initial)
    # What the page puts in each input (the target appears as the percentage an analyst types back).
    data = {name: shown[name].field.widget.format_value(shown[name].value()) or "" for name in shown.fields}
    data = {name: value[0] if isinstance(value, list) else value for name, value in data.items()}  # selects
    form = ReorderPlanForm(data)
    assert form.is_valid(), form.errors
    assert form.cleaned_data["params"] == scenario.params
    assert form.cleaned_data["stockout_target"] == pytest.approx(scenario.stockout_target, rel=1e-12)


def test_whatif_form_only_parses():
    form = WhatIfForm({"lead_time": "6", "demand_mean": "", "order_quantity": "12", "title": "ignored"})
    assert form.is_valid()
    assert form.changes() == {"lead_time": 6, "order_quantity": 12}
    assert not WhatIfForm({"lead_time": "six"}).is_valid()
    assert not WhatIfForm({"order_quantity": "0"}).is_valid()
