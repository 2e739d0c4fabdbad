"""ScenarioForm and WhatIfForm: each kind of bad input gets its own message, and nothing is saved."""

import pytest
from django.urls import reverse

from planner.forms import ScenarioForm, StepLawForm, WhatIfForm, scenario_initial
from planner.models import Scenario

GOOD = {
    "title": "Sourdough starter jars",
    "notes": "",
    "start": "5",
    "low": "0",
    "high": "10",
    "below": "lost",
    "above": "spill",
    "horizon": "20",
    "step_method": "nearest",
    "up": "0.3",
    "down": "0.35",
    "arrivals_family": "poisson",
    "demand_family": "poisson",
    "stockout_target": "0.05",
    "overflow_target": "0.1",
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
    ({"start": "11"}, "start", "start level must be a whole number from 0 to 10"),
    ({"high": "-1"}, "high", "capacity must be a whole number from 0"),
    ({"horizon": "0"}, "horizon", "Ensure this value is greater than or equal to 1."),
    ({"horizon": "9999"}, "horizon", "Ensure this value is less than or equal to 3650."),
    ({"up": "0.7"}, "down", "up + down must be at most 1"),
    ({"up": "1.2"}, "up", "Ensure this value is less than or equal to 1."),
    ({"down": ""}, "down", "Required for this choice."),
    ({"below": "borrow"}, "below", "Select a valid choice."),
    ({"step_method": "table", "step_table": "-1: 0.5, 1: 0.4"}, "step_table", "step table probabilities must sum to 1"),
    ({"step_method": "table", "step_table": "down one: half"}, "step_table", "Write each row as 'value: probability'"),
    ({"step_method": "table", "step_table": ""}, "step_table", "Required for this choice."),
    ({"profile": "1, 2"}, "profile", "profile needs the arrivals-and-demand step law"),
    ({"profile": "1, busy"}, "profile", "Write the profile as numbers"),
    ({"delivery_every": "7"}, "delivery_size", "Required for this choice."),
    ({"stockout_target": "0"}, "stockout_target", "Give a probability above 0 and below 1"),
    ({"overflow_target": "1"}, "overflow_target", "Give a probability above 0 and below 1"),
    (
        {
            "high": "",
            "below": "backorder",
            "horizon": "3650",
            "step_method": "table",
            "step_table": "-1000: 0.5, 1000: 0.5",
        },
        "horizon",
        "levels x periods must be at most",
    ),
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
    ({"arrivals_amount": ""}, "arrivals_amount", "Required for a fixed arrivals law."),
    (
        {"demand_family": "fixed", "demand_amount": "2", "profile": "1, 2"},
        "profile",
        "profile needs the arrivals-and-demand step law with Poisson or negative binomial demand",
    ),
]


def test_good_input_gives_parameters():
    form = ScenarioForm(GOOD)
    assert form.is_valid(), form.errors
    params = form.cleaned_data["params"]
    assert (params.start, params.high, params.up, params.down) == (5, 10, 0.3, 0.35)
    net = ScenarioForm(NET | {"profile": "1, 1.5", "delivery_every": "7", "delivery_size": "9"})
    assert net.is_valid(), net.errors
    assert net.cleaned_data["params"].cycle_length == 14


@pytest.mark.parametrize(("changes", "field", "message"), BAD + BAD_NET)
@pytest.mark.django_db
def test_bad_input_gets_its_message_and_saves_nothing(client, owner, changes, field, message):
    base = NET if (changes, field, message) in BAD_NET else GOOD
    form = ScenarioForm(base | changes)
    assert not form.is_valid()
    assert any(message in error for error in form.errors[field]), form.errors
    client.force_login(owner)
    response = client.post(reverse("scenario_new"), base | changes)
    assert response.status_code == 200
    assert message in response.content.decode().replace("&#x27;", "'")
    assert Scenario.objects.count() == 0


def test_step_law_form_needs_only_the_step_fields():
    form = StepLawForm(
        {
            "step_method": "table",
            "step_table": "-2: 0.25, 1: 0.75",
            "arrivals_family": "poisson",
            "demand_family": "poisson",
        }
    )
    assert form.is_valid(), form.errors
    (law,) = form.cleaned_data["params"].step_laws()
    assert law.prob(-2) == 0.25 and law.prob(1) == 0.75


@pytest.mark.django_db
def test_initial_values_round_trip_through_the_form(scenario):
    initial = scenario_initial(scenario)
    data = {key: "" if value is None else str(value) for key, value in initial.items()}
    form = ScenarioForm(data | {"arrivals_family": "poisson", "demand_family": "poisson"})
    assert form.is_valid(), form.errors
    assert form.cleaned_data["params"] == scenario.walk_params


@pytest.mark.django_db
def test_whatif_changes_only_what_is_given(scenario):
    form = WhatIfForm({"start": "7", "up": "0.2"})
    assert form.is_valid()
    variant = form.variant_of(scenario.walk_params)
    assert (variant.start, variant.up, variant.down, variant.high) == (7, 0.2, 0.4, 8)
    assert WhatIfForm({"no_capacity": "on"}).is_valid()
    uncapped = WhatIfForm({"no_capacity": "on"})
    uncapped.is_valid()
    assert uncapped.variant_of(scenario.walk_params).high is None


@pytest.mark.django_db
def test_whatif_refuses_values_outside_the_band(scenario):
    form = WhatIfForm({"start": "9"})
    assert form.is_valid()
    with pytest.raises(ValueError, match="start level must be a whole number from 0 to 8"):
        form.variant_of(scenario.walk_params)
