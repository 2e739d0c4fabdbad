"""Spares-pool forms: every bad input gets its own message at once, nothing is saved, nothing is computed."""

import pytest
from django.urls import reverse

from planner.forms import scenario_initial
from planner.kinds import get_kind
from planner.kinds.spares_pool.forms import PoolFields, SparesPoolForm, WhatIfForm
from planner.models import Scenario

pytestmark = pytest.mark.django_db

NEW = reverse("scenario_new_kind", kwargs={"kind": "spares_pool"})
PREVIEW = reverse("kind_preview", kwargs={"kind": "spares_pool"})
GOOD = {
    "title": "Oven igniters",
    "notes": "",
    "time_unit": "hour",
    "units": "6",
    "spares": "2",
    "crews": "1",
    "standby": "cold",
    "failure_style": "mtbf",
    "failure": "2000",
    "standby_failure": "",
    "repair_style": "mean",
    "repair": "48",
    "mission": "720",
    "availability_target": "99.9",
    "stockout_target": "1 %",
}

BAD = [
    ({"title": ""}, "title", "This field is required."),
    ({"units": "six"}, "units", "Enter a whole number."),
    ({"units": "0"}, "units", "Ensure this value is greater than or equal to 1."),
    ({"spares": "-1"}, "spares", "Ensure this value is greater than or equal to 0."),
    ({"crews": "0"}, "crews", "Ensure this value is greater than or equal to 1."),
    ({"failure": "0"}, "failure", "MTBF must be a number from 1e-09"),
    ({"repair": "-3"}, "repair", "mean repair time must be a number from 1e-09"),
    ({"mission": "0"}, "mission", "mission length must be above 0"),
    ({"standby": "warm"}, "standby_failure", "Required for warm spares."),
    ({"standby": "warm", "standby_failure": "100"}, "standby_failure", "standby MTBF must be at least the MTBF"),
    ({"standby": "lukewarm"}, "standby", "Select a valid choice."),
    ({"availability_target": "100"}, "availability_target", "Give a percentage above 0 and below 100"),
    ({"stockout_target": "ten"}, "stockout_target", "Give a percentage"),
    ({"time_unit": "fortnight"}, "time_unit", "Select a valid choice."),
]


@pytest.mark.parametrize(("changes", "field", "message"), BAD)
def test_each_bad_input_is_named_and_nothing_is_saved(client, owner, changes, field, message):
    client.force_login(owner)
    response = client.post(NEW, GOOD | changes)
    assert response.status_code == 200
    errors = response.context["form"].errors
    assert message in " ".join(errors[field])
    assert not Scenario.objects.exists()


def test_every_bad_input_shows_on_the_first_submit():
    data = GOOD | {"failure": "0", "repair": "-3", "mission": "0", "units": "0", "standby": "warm"}
    form = SparesPoolForm(data)
    assert not form.is_valid()
    assert {"failure", "repair", "mission", "units", "standby_failure"} <= set(form.errors)


def test_a_good_form_saves_the_pool_with_percent_targets(client, owner):
    client.force_login(owner)
    response = client.post(NEW, GOOD | {"standby": "warm", "standby_failure": "8000", "time_unit": "day"})
    scenario = Scenario.objects.get()
    assert response.status_code == 302 and response["Location"] == scenario.get_absolute_url()
    params = scenario.params
    assert (params.units, params.spares, params.standby, params.time_unit) == (6, 2, "warm", "day")
    assert params.warm_failure_rate == 1 / 8000 and params.availability_target == pytest.approx(0.999)
    assert scenario.stockout_target == pytest.approx(0.01) and scenario.headline_span == "720 days"
    assert 0 < scenario.headline_risk < 1


def test_labels_follow_the_time_unit():
    assert "Mission length (days)" in str(PoolFields(GOOD | {"time_unit": "day"})["mission"].label)
    hours = SparesPoolForm()
    assert "Mission length (hours)" in str(hours["mission"].label) and "overflow_target" not in hours.fields


def test_the_edit_form_starts_from_the_saved_pool(client, owner):
    from tests.conftest import example_scenario

    scenario = example_scenario(owner, "spares_pool")
    initial = scenario_initial(scenario, get_kind("spares_pool"))
    form = SparesPoolForm(initial=initial)
    assert form["availability_target"].value() == pytest.approx(0.999)
    client.force_login(owner)
    page = client.get(reverse("scenario_edit", args=[scenario.pk])).content.decode()
    assert 'name="availability_target" value="99.9"' in page and 'name="mission" value="200.0"' in page
    saved = client.post(
        reverse("scenario_edit", args=[scenario.pk]),
        GOOD | {"title": "Oven igniters", "spares": "4", "version": str(scenario.version)},
    )
    assert saved.status_code == 302 and Scenario.objects.get(pk=scenario.pk).params.spares == 4


def test_untouched_form_shows_no_error(client, owner):
    client.force_login(owner)
    page = client.get(NEW).content.decode()
    assert "field-error" not in page and "error-box" not in page
    assert "Units needed in service" in page and 'id="preview-chart"' in page


def test_preview_shows_the_long_run_law_of_units_failed(client, owner):
    # one unit, no spare: the two-state model, available mu / (lambda + mu) = 400 / 410 of the time
    # (common practice: the repairable component's steady-state availability)
    client.force_login(owner)
    query = {k: v for k, v in GOOD.items() if k not in ("title", "notes")}
    body = client.get(PREVIEW, query | {"units": "1", "spares": "0", "failure": "400", "repair": "10"}).json()
    assert body["ready"] and body["steps"] == [0, 1]
    assert body["probs"] == pytest.approx([400 / 410, 10 / 410], rel=1e-14)
    assert body["x_title"] == "units failed, in the long run" and "availability 97.6 %" in body["summary"]
    waiting = client.get(PREVIEW, {"standby": "cold", "failure_style": "mtbf", "repair_style": "mean"}).json()
    assert waiting == {"ready": False, "message": get_kind("spares_pool").preview_waiting}
    bad = client.get(PREVIEW, query | {"failure": "0"})
    assert bad.status_code == 400 and "MTBF" in bad.json()["errors"]["failure"][0]


def test_whatif_form_parses_only_what_is_given():
    form = WhatIfForm({"spares": "4", "crews": "", "mission": "1000", "failure": ""})
    assert form.is_valid() and form.changes() == {"spares": 4, "mission": 1000.0}
    assert not WhatIfForm({"spares": "-2"}).is_valid()
