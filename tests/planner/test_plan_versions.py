"""Plan history: every save keeps a version (who, when, what changed); view one and bring it back
(planner/version_diff.py, the history views, services.scenario_restore)."""

import re

import pytest
from django.test import Client
from django.urls import reverse

from planner import services, version_diff
from planner.kinds import get_kind
from planner.models import Scenario, ScenarioVersion
from tests.planner.test_edit_conflicts import edit_values

pytestmark = pytest.mark.django_db


def browser_for(user) -> Client:
    browser = Client()
    browser.force_login(user)
    return browser


def save(browser, scenario, **changes):
    fresh = Scenario.objects.get(pk=scenario.pk)
    response = browser.post(reverse("scenario_edit", args=[scenario.pk]), edit_values(fresh, **changes))
    assert response.status_code == 302, response.content[:300]


@pytest.fixture
def edited(scenario, cast):
    """Version 1 by Olwen; version 2 by Bryn (start stock 4 -> 6, name); version 3 by Olwen (target 5 % -> 1 %)."""
    save(browser_for(cast["editor"]), scenario, start="6", title="Rye loaf shelf, winter")
    save(browser_for(scenario.owner), scenario, start="6", title="Rye loaf shelf, winter", stockout_target="1")
    return Scenario.objects.get(pk=scenario.pk)


def history_rows(page: str) -> dict[int, str]:
    return {int(n): row for n, row in re.findall(r'<tr data-version="(\d+)">(.*?)</tr>', page, flags=re.S)}


def test_every_save_is_listed_with_who_when_and_what_changed(edited, cast):
    page = browser_for(cast["viewer"]).get(reverse("scenario_history", args=[edited.pk])).content.decode()
    rows = history_rows(page)
    assert sorted(rows) == [1, 2, 3]
    assert "olwen" in rows[1] and "First saved." in rows[1]
    assert "bryn" in rows[2]
    assert "Start stock (units): 4 → 6" in rows[2] and "Name: Rye loaf shelf → Rye loaf shelf, winter" in rows[2]
    assert "Stock-out target (%): 5 → 1" in rows[3] and "Start stock" not in rows[3]
    assert "(now)" in rows[3] and "(now)" not in rows[2]
    # each version's stored headline: the same number the engine gives for that version's parameters
    for version in ScenarioVersion.objects.filter(scenario=edited):
        params = get_kind("stock_plan").params_from_json(version.parameters)
        assert version.headline_risk == params.walk().outlook(params.horizon).stockout[-1]


def test_a_version_page_shows_its_values_and_what_bringing_it_back_would_change(edited, cast):
    page = browser_for(cast["viewer"]).get(reverse("scenario_version", args=[edited.pk, 1])).content.decode()
    assert "Saved" in page and "olwen" in page
    restoring = page.split('id="restoring"')[1].split("</section>")[0]
    start = re.search(r'<tr data-field="start">(.*?)</tr>', restoring, flags=re.S).group(1)
    assert re.findall(r"<td>(.*?)</td>", start) == ["Start stock (units)", "6", "4"]
    assert 'data-field="stockout_target"' in restoring
    assert 'id="restore-form"' not in page  # a viewer sees no way to restore
    values = page.split('id="version-values"')[1]
    assert "<td>Start stock (units)</td><td>4</td>" in values
    editor_page = browser_for(cast["editor"]).get(reverse("scenario_version", args=[edited.pk, 1])).content.decode()
    assert 'id="restore-form"' in editor_page and 'name="version" value="3"' in editor_page
    current = browser_for(cast["editor"]).get(reverse("scenario_version", args=[edited.pk, 3])).content.decode()
    assert "The plan now holds the same values as this version." in current


def test_bringing_back_a_version_saves_it_as_the_next_and_loses_nothing(edited, cast):
    browser = browser_for(cast["group editor"])
    response = browser.post(reverse("scenario_version_restore", args=[edited.pk, 1]), {"version": "3"}, follow=True)
    assert "Version 1 is back as version 4" in response.content.decode()
    fresh = Scenario.objects.get(pk=edited.pk)
    first = ScenarioVersion.objects.get(scenario=edited, number=1)
    assert fresh.version == 4
    assert version_diff.snapshot(fresh) == version_diff.snapshot(first)
    assert fresh.headline_risk == first.headline_risk
    fourth = ScenarioVersion.objects.get(scenario=edited, number=4)
    assert (fourth.restored_from, fourth.saved_by) == (1, cast["group editor"])
    assert list(ScenarioVersion.objects.filter(scenario=edited).values_list("number", flat=True)) == [4, 3, 2, 1]
    rows = history_rows(browser.get(reverse("scenario_history", args=[edited.pk])).content.decode())
    assert "Brought back version 1." in rows[4] and "Start stock (units): 6 → 4" in rows[4]


def test_bringing_back_from_a_stale_page_is_refused(edited, cast):
    browser = browser_for(cast["editor"])
    response = browser.post(reverse("scenario_version_restore", args=[edited.pk, 1]), {"version": "2"}, follow=True)
    assert "Nothing was restored" in response.content.decode() and "now version 3" in response.content.decode()
    assert Scenario.objects.get(pk=edited.pk).version == 3
    assert browser.post(reverse("scenario_version_restore", args=[edited.pk, 1]), {}).status_code == 302
    assert Scenario.objects.get(pk=edited.pk).version == 3  # no version named: refused too


def test_unknown_versions_are_404(edited):
    browser = browser_for(edited.owner)
    assert browser.get(reverse("scenario_version", args=[edited.pk, 9])).status_code == 404
    assert browser.post(reverse("scenario_version_restore", args=[edited.pk, 9]), {"version": "3"}).status_code == 404


def test_a_version_whose_parameters_no_longer_fit_is_not_restored(edited):
    ScenarioVersion.objects.filter(scenario=edited, number=1).update(parameters={"start": 5, "horizon": -1})
    browser = browser_for(edited.owner)
    response = browser.post(reverse("scenario_version_restore", args=[edited.pk, 1]), {"version": "3"}, follow=True)
    assert response.status_code == 200 and "cannot be worked out now" in response.content.decode()
    assert Scenario.objects.get(pk=edited.pk).version == 3


def test_differences_use_the_forms_words(scenario, small_params):
    before = version_diff.snapshot(scenario)
    after = before | {"parameters": small_params.replace(high=None, below="backorder").to_json(), "notes": ""}
    changed = {
        d.name: (d.label, d.before, d.after) for d in version_diff.differences(get_kind("stock_plan"), before, after)
    }
    assert changed["high"] == ("Capacity (units)", "8", "—")
    assert changed["notes"] == ("Notes", "Back shelf.", "—")
    assert changed["below"][0] == "Demand the stock cannot meet" and changed["below"][1] != "lost"  # the choice's words
    assert set(changed) == {"high", "notes", "below"}
    assert version_diff.differences(get_kind("stock_plan"), before, before) == []


def test_deleting_a_plan_deletes_its_history(edited):
    services.scenario_delete(scenario=edited)
    assert not ScenarioVersion.objects.exists()
