"""Stock-plan forms: every bad input gets its own message at once, nothing is saved, nothing is computed."""

import pytest
from django.urls import reverse

import walkmath as wm
from planner.forms import scenario_initial
from planner.kinds import get_kind
from planner.kinds.stock_plan.forms import ChangeLawForm, StockPlanForm, WhatIfForm
from planner.models import Scenario

NEW = reverse("scenario_new_kind", kwargs={"kind": "stock_plan"})
GOOD = {
    "title": "Sourdough starter jars",
    "notes": "",
    "period": "day",
    "start": "5",
    "low": "0",
    "high": "10",
    "below": "lost",
    "above": "spill",
    "horizon": "20",
    "step_method": "nearest",
    "up": "0.3",
    "down": "0.35",
    "arrivals_family": "none",
    "demand_family": "poisson",
    "stockout_target": "5",
    "overflow_target": "10 %",
}
NET = GOOD | {
    "step_method": "net",
    "up": "",
    "down": "",
    "arrivals_family": "fixed",
    "arrivals_amount": "2",
    "demand_family": "poisson",
    "demand_mean": "1.8",
}

BAD = [
    ({"title": ""}, "title", "This field is required."),
    ({"start": "twelve"}, "start", "Enter a whole number."),
    ({"start": "11"}, "start", "start stock must be a whole number from 0 to 10"),
    ({"high": "-1"}, "high", "capacity must be a whole number from 0"),
    ({"horizon": "0"}, "horizon", "Ensure this value is greater than or equal to 1."),
    ({"horizon": "9999"}, "horizon", "Ensure this value is less than or equal to 3650."),
    ({"period": "fortnight"}, "period", "Select a valid choice."),
    ({"up": "0.7"}, "down", "chance of one up + chance of one down must be at most 1"),
    ({"up": "1.2"}, "up", "Ensure this value is less than or equal to 1."),
    ({"down": ""}, "down", "Required for this choice."),
    ({"below": "borrow"}, "below", "Select a valid choice."),
    (
        {"step_method": "table", "step_table": "-1: 0.5, 1: 0.4"},
        "step_table",
        "change table probabilities must sum to 1",
    ),
    ({"step_method": "table", "step_table": "down one: half"}, "step_table", "Write each row as 'value: probability'"),
    ({"step_method": "table", "step_table": ""}, "step_table", "Required for this choice."),
    ({"profile": "1, 2"}, "profile", "demand profile needs Poisson or negative binomial demand"),
    ({"profile": "1, busy"}, "profile", "Write the profile as numbers"),
    ({"delivery_every": "7"}, "delivery_size", "Required for this choice."),
    ({"stockout_target": "0"}, "stockout_target", "Give a percentage above 0 and below 100"),
    ({"overflow_target": "100%"}, "overflow_target", "Give a percentage above 0 and below 100"),
    ({"overflow_target": "0.05 or so"}, "overflow_target", "Give a percentage, e.g. 5"),
]
BAD_NET = [
    ({"demand_mean": ""}, "demand_mean", "Required for a poisson demand law."),
    ({"demand_mean": "-2"}, "demand_mean", "mean must be a finite number from 0.0"),
    (
        {"demand_family": "negative_binomial", "demand_variance": "1.0"},
        "demand_variance",
        "variance must exceed the mean",
    ),
    (
        {"arrivals_family": "table", "arrivals_table": "0: 0.5, -2: 0.5"},
        "arrivals_table",
        "count table values must be whole numbers at least 0",
    ),
    ({"arrivals_amount": ""}, "arrivals_amount", "Required for a fixed supply law."),
    (
        {"demand_family": "fixed", "demand_amount": "2", "profile": "1, 2"},
        "profile",
        "demand profile needs Poisson or negative binomial demand",
    ),
    ({"demand_mean": "9000", "profile": "1, 3"}, "demand_mean", "demand mean must be smaller or less spread out"),
]


def test_good_input_gives_parameters_with_targets_as_fractions():
    form = StockPlanForm(GOOD)
    assert form.is_valid(), form.errors
    params = form.cleaned_data["params"]
    assert (params.start, params.high, params.up, params.down, params.period) == (5, 10, 0.3, 0.35, "day")
    assert (form.cleaned_data["stockout_target"], form.cleaned_data["overflow_target"]) == (0.05, 0.1)
    net = StockPlanForm(NET | {"profile": "1, 1.5", "delivery_every": "7", "delivery_size": "9"})
    assert net.is_valid(), net.errors
    assert net.cleaned_data["params"].cycle_length == 14
    alone = StockPlanForm(NET | {"arrivals_family": "none", "arrivals_amount": ""})
    assert alone.is_valid(), alone.errors and alone.cleaned_data["params"].arrivals is None


@pytest.mark.parametrize(("changes", "field", "message"), BAD + BAD_NET)
@pytest.mark.django_db
def test_bad_input_gets_its_message_and_saves_nothing(client, owner, changes, field, message):
    base = NET if (changes, field, message) in BAD_NET else GOOD
    form = StockPlanForm(base | changes)
    assert not form.is_valid()
    assert any(message in error for error in form.errors[field]), form.errors
    client.force_login(owner)
    response = client.post(NEW, base | changes)
    assert response.status_code == 200
    assert message in response.content.decode().replace("&#x27;", "'")
    assert Scenario.objects.count() == 0


def test_every_error_shows_on_the_first_submit():
    blank = StockPlanForm({"step_method": "net", "demand_family": "poisson"})
    assert not blank.is_valid()
    assert {"title", "start", "horizon", "demand_mean", "stockout_target", "overflow_target"} <= set(blank.errors)
    # A bad capacity does not hide a bad change law, nor the other way round.
    both = StockPlanForm(GOOD | {"high": "3", "up": "0.9"})
    assert not both.is_valid()
    assert "start" in both.errors and "down" in both.errors


def test_validation_builds_no_law(monkeypatch):
    def never(*args, **kwargs):
        raise AssertionError("a law was built during validation")

    for name in ("poisson", "negative_binomial", "net", "from_pmf", "fixed", "nearest"):
        monkeypatch.setattr(wm.StepLaw, name, never)
    assert StockPlanForm(NET | {"profile": "1, 1.2, 0.8", "delivery_every": "7", "delivery_size": "9"}).is_valid()


def test_labels_name_the_period():
    week = StockPlanForm(GOOD | {"period": "week"})
    assert week.fields["horizon"].label == "Horizon (weeks)"
    assert week.fields["demand_mean"].label == "Mean demand (units per week)"
    assert StockPlanForm().fields["horizon"].label == "Horizon (days)"


def test_change_law_form_needs_only_the_change_fields():
    form = ChangeLawForm({"step_method": "table", "step_table": "-2: 0.25, 1: 0.75", "demand_family": "poisson"})
    assert form.is_valid(), form.errors
    (law,) = form.cleaned_data["params"].step_laws()
    assert law.prob(-2) == 0.25 and law.prob(1) == 0.75


@pytest.mark.django_db
def test_initial_values_round_trip_through_the_form(scenario):
    initial = scenario_initial(scenario, get_kind(scenario.kind))
    shown = StockPlanForm(initial=initial)
    # What the page puts in each input (targets appear as the percentages an analyst types back).
    data = {name: shown[name].field.widget.format_value(shown[name].value()) or "" for name in shown.fields}
    data = {name: value[0] if isinstance(value, list) else value for name, value in data.items()}  # selects
    form = StockPlanForm(data)
    assert form.is_valid(), form.errors
    assert form.cleaned_data["params"] == scenario.params
    assert form.cleaned_data["stockout_target"] == scenario.stockout_target


def test_whatif_form_only_parses():
    form = WhatIfForm({"start": "7", "up": "0.2", "step_table": "", "title": "ignored"})
    assert form.is_valid()
    assert form.changes() == {"start": 7, "up": 0.2}
    assert WhatIfForm({"no_capacity": "on"}).is_valid()
    assert not WhatIfForm({"start": "seven"}).is_valid()


def test_fields_without_a_label_keep_the_derived_one():
    form = StockPlanForm()
    assert form["notes"].label == "Notes" and not form.fields["title"].help_text
