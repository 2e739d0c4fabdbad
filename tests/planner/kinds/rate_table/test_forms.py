"""Rate-table forms: every line that does not read and every broken rule named at once; nothing saved or computed."""

from fractions import Fraction

import pytest
from django.urls import reverse

from planner.formatting import probability
from planner.forms import scenario_initial
from planner.kinds import get_kind
from planner.kinds.rate_table.forms import RateTableForm, TableFields, WhatIfForm, parse_rate_table
from planner.models import Scenario

pytestmark = pytest.mark.django_db

NEW = reverse("scenario_new_kind", kwargs={"kind": "rate_table"})
PREVIEW = reverse("kind_preview", kwargs={"kind": "rate_table"})
TABLE = "0: 0.006, 0\n1: 0.006, 0.08\n2: 0.006, 0.05\n3: 0.004, 0.04\n4: 0, 0.04"
GOOD = {
    "rates": TABLE,
    "shortage_at": "2",
    "start_failed": "0",
    "mission": "168",
    "availability_target": "99.5",
    "stockout_target": "5 %",
    "title": "Dough mixers",
    "notes": "",
    "time_unit": "hour",
}

BAD = [
    ({"rates": ""}, "rates", "This field is required."),
    ({"rates": "0: 0.006\n1: 0, 0.08"}, "rates", "Line 1 ('0: 0.006'): write each row as 'failed: failure rate,"),
    ({"rates": "0: 0.006, 0\n2: 0, 0.08"}, "rates", "Line 2 ('2: 0, 0.08') is for 2 failed; the rows count"),
    ({"rates": "0: 0.006, 0\n1: 0.003, 0.08"}, "rates", "The row for 1 failed: the last row is every unit failed"),
    ({"rates": "0: 0.006, 0\n1: 0, 0"}, "rates", "The row for 1 failed: the repair rate must be above 0"),
    ({"shortage_at": "0"}, "shortage_at", "Ensure this value is greater than or equal to 1."),
    ({"shortage_at": "5"}, "shortage_at", "shortage level must be a whole number from 1 to 4"),
    ({"start_failed": "2"}, "start_failed", "units failed at the start must be a whole number from 0 to 1"),
    ({"start_failed": "-1"}, "start_failed", "Ensure this value is greater than or equal to 0."),
    ({"mission": "0"}, "mission", "mission length must be above 0"),
    ({"mission": "soon"}, "mission", "Enter a number."),
    ({"availability_target": "100"}, "availability_target", "Give a percentage above 0 and below 100"),
    ({"stockout_target": "ten"}, "stockout_target", "Give a percentage"),
    ({"time_unit": "fortnight"}, "time_unit", "Select a valid choice."),
    ({"title": ""}, "title", "This field is required."),
]


@pytest.mark.parametrize(("changes", "field", "message"), BAD)
def test_each_bad_input_is_named_and_nothing_is_saved(client, owner, changes, field, message):
    client.force_login(owner)
    response = client.post(NEW, GOOD | changes)
    assert response.status_code == 200
    assert message in " ".join(response.context["form"].errors[field])
    assert not Scenario.objects.exists()


def test_every_line_that_does_not_read_is_named_at_once():
    with pytest.raises(Exception) as caught:
        parse_rate_table("0: 0.006, 0\n1: fast, 0.08\n5: 0, 0.1\n3 0.1 0.1; 3: 0, 1e-2")
    messages = caught.value.messages
    assert [message.split(" (")[0] for message in messages] == ["Line 2", "Line 3", "Line 4", "Line 5"]
    assert "should be for 2 failed" in messages[1] and "should be for 4 failed" in messages[3]
    assert parse_rate_table("0:0.5,0 ; 1 = 0   2e-1\n\n2: 0 0.25") == ((0.5, 0.0, 0.0), (0.0, 0.2, 0.25))


def test_many_unreadable_lines_are_counted_after_the_first_eight():
    with pytest.raises(Exception) as caught:
        parse_rate_table("\n".join(f"{k}: x, y" for k in range(12)))
    assert len(caught.value.messages) == 9 and caught.value.messages[-1] == "… and 4 more lines that do not read."


def test_every_bad_input_shows_on_the_first_submit():
    data = GOOD | {"rates": "0: 0.006, 1\n1: 0, 0", "mission": "0", "availability_target": "0", "stockout_target": ""}
    form = RateTableForm(data)
    assert not form.is_valid()
    assert {"rates", "mission", "availability_target", "stockout_target"} <= set(form.errors)
    assert len(form.errors["rates"]) == 2  # the row for 0 failed (a repair rate) and for 1 failed (no repairs)


def test_a_good_form_saves_the_pool_with_percent_targets(client, owner):
    client.force_login(owner)
    response = client.post(NEW, GOOD | {"time_unit": "day", "start_failed": ""})
    scenario = Scenario.objects.get()
    assert response.status_code == 302 and response["Location"] == scenario.get_absolute_url()
    params = scenario.params
    assert params.failure_rates == (0.006, 0.006, 0.006, 0.004, 0.0) and params.repair_rates[1] == 0.08
    assert (params.shortage_at, params.start_failed, params.time_unit) == (2, 0, "day")
    assert params.availability_target == pytest.approx(0.995) and scenario.stockout_target == pytest.approx(0.05)
    assert scenario.headline_span == "168 days" and 0 < scenario.headline_risk < 1


def test_labels_follow_the_time_unit():
    days = TableFields(GOOD | {"time_unit": "day"})
    assert "per day" in str(days["rates"].label) and "once in 500 days" in str(days["rates"].help_text)
    hours = RateTableForm()
    assert "Mission length (hours)" in str(hours["mission"].label) and "overflow_target" not in hours.fields


def test_the_edit_form_starts_from_the_saved_table(client, owner):
    from tests.conftest import example_scenario

    scenario = example_scenario(owner, "rate_table")
    form = RateTableForm(initial=scenario_initial(scenario, get_kind("rate_table")))
    assert form["rates"].value() == "0: 0.003, 0\n1: 0.002, 0.05\n2: 0.001, 0.05\n3: 0, 0.04"
    client.force_login(owner)
    page = client.get(reverse("scenario_edit", args=[scenario.pk])).content.decode()
    assert "1: 0.002, 0.05" in page and 'name="availability_target" value="99.9"' in page
    saved = client.post(
        reverse("scenario_edit", args=[scenario.pk]), GOOD | {"shortage_at": "3", "version": str(scenario.version)}
    )
    assert saved.status_code == 302 and Scenario.objects.get(pk=scenario.pk).params.shortage_at == 3


@pytest.mark.parametrize(
    ("rates", "shortage_at", "expected"),
    [
        # one unit failing at 1/400 an hour, repaired at 1/10: available mu / (lambda + mu) = 400 / 410 of the
        # time (common practice: a repairable unit's steady-state availability)
        ("0: 0.0025, 0\n1: 0, 0.1", "1", [Fraction(400, 410), Fraction(10, 410)]),
        # M/M/1/2 with lambda = 1/2, mu = 1: p_n proportional to (1/2)^n (from memory, the M/M/1/K form)
        ("0: 0.5, 0\n1: 0.5, 1\n2: 0, 1", "2", [Fraction(4, 7), Fraction(2, 7), Fraction(1, 7)]),
    ],
)
def test_an_untouched_form_waits_and_the_preview_shows_the_long_run_law(client, owner, rates, shortage_at, expected):
    client.force_login(owner)
    page = client.get(NEW).content.decode()
    assert "field-error" not in page and "error-box" not in page and 'id="preview-chart"' in page
    body = client.get(PREVIEW, {"time_unit": "hour", "rates": rates, "shortage_at": shortage_at}).json()
    assert body["ready"] and body["steps"] == list(range(len(expected)))
    assert body["probs"] == pytest.approx([float(p) for p in expected], rel=1e-14)
    short = sum(expected[int(shortage_at) :])
    assert (
        body["x_title"] == "units failed, in the long run" and f"short {probability(float(short))}" in body["summary"]
    )


def test_preview_waits_for_missing_inputs_and_names_a_bad_row(client, owner):
    client.force_login(owner)
    waiting = client.get(PREVIEW, {"time_unit": "hour", "rates": TABLE}).json()
    assert waiting == {"ready": False, "message": get_kind("rate_table").preview_waiting}
    bad = client.get(PREVIEW, {"rates": "0: 1, 0\n1: 1, 1", "shortage_at": "1"})
    assert bad.status_code == 400 and "the last row is every unit failed" in bad.json()["errors"]["rates"][0]


def test_whatif_form_parses_only():
    form = WhatIfForm({"repair_speed": "1.5", "mission": "", "start_failed": "1", "colour": "red"})
    assert form.is_valid() and form.changes() == {"repair_speed": 1.5, "start_failed": 1}
    assert not WhatIfForm({"shortage_at": "0"}).is_valid()
