"""Safe concurrent editing: a version number on each plan, compare-and-set saves (planner/services.py), the
conflict page that shows what changed and keeps the refused values, an edit of a deleted plan (views)."""

import re

import pytest
from django.test import Client
from django.urls import reverse

from planner import services
from planner.models import Scenario, ScenarioVersion
from walkmath import ComputeTooLarge

pytestmark = pytest.mark.django_db


def edit_values(scenario, **changes) -> dict:
    """What the edit form of ``scenario`` sends unchanged (the small example's fields), with ``changes``."""
    values = {
        "version": str(scenario.version),
        "kind": scenario.kind,
        "title": scenario.title,
        "notes": scenario.notes,
        "period": "day",
        "start": "4",
        "low": "0",
        "high": "8",
        "below": "lost",
        "above": "spill",
        "horizon": "12",
        "step_method": "nearest",
        "up": "0.3",
        "down": "0.4",
        "demand_family": "poisson",
        "stockout_target": "5",
        "overflow_target": "5",
    }
    return values | changes


def signed_in(user) -> Client:
    browser = Client()
    browser.force_login(user)
    return browser


def edit_url(scenario) -> str:
    return reverse("scenario_edit", args=[scenario.pk])


# Services


def test_every_save_raises_the_version_and_records_it(scenario, outsider, small_params):
    first = ScenarioVersion.objects.get(scenario=scenario)
    assert (scenario.version, first.number, first.saved_by, first.title) == (1, 1, scenario.owner, "Rye loaf shelf")
    services.scenario_update(
        scenario=scenario,
        title="Rye loaf shelf, winter",
        params=small_params.replace(start=6),
        notes="Back shelf.",
        stockout_target=0.05,
        overflow_target=0.05,
        based_on=1,
        editor=outsider,
    )
    fresh = Scenario.objects.get(pk=scenario.pk)
    assert fresh.version == scenario.version == 2
    second = ScenarioVersion.objects.get(scenario=scenario, number=2)
    assert (second.saved_by, second.title, second.parameters["start"]) == (outsider, "Rye loaf shelf, winter", 6)
    assert second.headline_risk == fresh.headline_risk and second.saved_at == fresh.updated


def update(scenario, params, **extra):
    return services.scenario_update(
        scenario=scenario, title="Rye, later", params=params, stockout_target=0.05, overflow_target=0.05, **extra
    )


def test_a_save_from_a_stale_version_is_refused_and_writes_nothing(scenario, small_params):
    update(Scenario.objects.get(pk=scenario.pk), small_params.replace(start=5), based_on=1)
    with pytest.raises(services.EditConflict) as caught:
        update(Scenario.objects.get(pk=scenario.pk), small_params.replace(start=2), based_on=1)
    assert caught.value.current.version == 2 and caught.value.based_on == 1
    fresh = Scenario.objects.get(pk=scenario.pk)
    assert (fresh.version, fresh.params.start) == (2, 5)
    assert list(fresh.versions.values_list("number", flat=True)) == [2, 1]


def test_a_save_of_a_deleted_plan_raises_plan_gone(scenario, small_params):
    stale = Scenario.objects.get(pk=scenario.pk)
    services.scenario_delete(scenario=scenario)
    with pytest.raises(services.PlanGone):
        update(stale, small_params, based_on=1)
    assert not Scenario.objects.exists() and not ScenarioVersion.objects.exists()


def test_a_script_may_save_over_any_version(scenario, small_params):
    update(Scenario.objects.get(pk=scenario.pk), small_params, based_on=1)
    update(Scenario.objects.get(pk=scenario.pk), small_params.replace(start=3))  # load_demo's way
    assert Scenario.objects.get(pk=scenario.pk).version == 3


def test_a_plan_too_large_to_compute_keeps_its_version(scenario, small_params, settings):
    settings.PLANNER_COMPUTE_CAP = 1000
    settings.PLANNER_BACKGROUND_CAP = 1_000  # too large for a background worker too (tests/planner/background)
    with pytest.raises(ComputeTooLarge):
        update(Scenario.objects.get(pk=scenario.pk), small_params.replace(horizon=400), based_on=1)
    assert Scenario.objects.get(pk=scenario.pk).version == 1 and ScenarioVersion.objects.count() == 1


# Pages


def test_a_stale_form_is_refused_with_what_changed_and_keeps_its_values(scenario, outsider):
    olwen, also_olwen = signed_in(scenario.owner), signed_in(scenario.owner)  # two tabs, or two people
    first = olwen.post(edit_url(scenario), edit_values(scenario, title="Rye loaf shelf, winter"))
    assert first.status_code == 302
    second = also_olwen.post(edit_url(scenario), edit_values(scenario, notes="Move to the front shelf."))
    assert second.status_code == 409
    page = second.content.decode()
    assert 'id="edit-conflict"' in page and "Nothing was saved" in page
    assert "You started from version 1; it is now version 2." in page
    # the row for the field saved meanwhile: as opened, as saved now, as in the refused form
    row = re.search(r'<tr data-field="title">(.*?)</tr>', page, flags=re.S).group(1)
    assert re.findall(r"<td>(.*?)</td>", row) == ["Name", "Rye loaf shelf", "Rye loaf shelf, winter", "Rye loaf shelf"]
    assert 'data-field="notes"' not in page.split('id="scenario-form"')[0]  # notes were not saved by anyone else
    # nothing lost: the refused values are in the form, which now names the current version
    assert "Move to the front shelf." in page and 'name="version" value="2"' in page
    fresh = Scenario.objects.get(pk=scenario.pk)
    assert (fresh.title, fresh.notes, fresh.version) == ("Rye loaf shelf, winter", "Back shelf.", 2)
    # after reading the table, the second editor keeps both changes and saves again
    again = edit_values(fresh, title="Rye loaf shelf, winter", notes="Move to the front shelf.")
    assert also_olwen.post(edit_url(scenario), again).status_code == 302
    fresh = Scenario.objects.get(pk=scenario.pk)
    assert (fresh.title, fresh.notes, fresh.version) == ("Rye loaf shelf, winter", "Move to the front shelf.", 3)


def test_a_form_without_its_version_is_treated_as_stale(scenario):
    values = edit_values(scenario, notes="From an old tab.")
    del values["version"]
    response = signed_in(scenario.owner).post(edit_url(scenario), values)
    page = response.content.decode()
    assert response.status_code == 409 and "did not say which version it started from" in page
    row = re.search(r'<tr data-field="notes">(.*?)</tr>', page, flags=re.S).group(1)
    assert re.findall(r"<td>(.*?)</td>", row) == ["Notes", "Back shelf.", "From an old tab."]
    assert Scenario.objects.get(pk=scenario.pk).version == 1


def test_an_invalid_form_keeps_the_version_it_started_from(scenario):
    browser = signed_in(scenario.owner)
    response = browser.post(edit_url(scenario), edit_values(scenario, start="99"))
    assert response.status_code == 200 and b'name="version" value="1"' in response.content


def test_an_edit_of_a_deleted_plan_says_so_and_keeps_the_values(scenario):
    browser = signed_in(scenario.owner)
    values = edit_values(scenario, notes="Edited in another tab.")
    services.scenario_delete(scenario=Scenario.objects.get(pk=scenario.pk))
    response = browser.post(edit_url(scenario), values)
    page = response.content.decode()
    assert response.status_code == 404 and 'id="plan-gone"' in page and "Nothing was saved" in page
    assert "Edited in another tab." in page
    new_url = reverse("scenario_new_kind", kwargs={"kind": "stock_plan"})
    assert f'action="{new_url}"' in page
    # saving from that page makes a new plan with those values
    saved = browser.post(new_url, values)
    assert saved.status_code == 302 and Scenario.objects.get().notes == "Edited in another tab."


def test_an_outsider_posting_an_edit_learns_nothing(scenario, outsider):
    response = signed_in(outsider).post(edit_url(scenario), edit_values(scenario, title="Taken over"))
    # the same page as for a deleted plan: nothing says the plan exists
    assert response.status_code == 404 and b"Rye loaf shelf" not in response.content.replace(b"Taken over", b"")
    assert Scenario.objects.get(pk=scenario.pk).title == "Rye loaf shelf"
