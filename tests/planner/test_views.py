"""Every view: the owner sees and edits, another signed-in user gets 404, anonymous is sent to sign in."""

import csv
import io
import json

import pytest
from django.urls import reverse

from planner.models import Scenario
from tests.conftest import PASSWORD

pytestmark = pytest.mark.django_db

# (url name, needs a scenario pk, extra kwargs, method)
SCENARIO_VIEWS = [
    ("scenario_results", {}, "get"),
    ("scenario_edit", {}, "get"),
    ("scenario_edit", {}, "post"),
    ("scenario_delete", {}, "get"),
    ("scenario_delete", {}, "post"),
    ("scenario_outlook_json", {}, "get"),
    ("scenario_variant_save", {}, "post"),
    ("scenario_csv", {"table": "risk-curves"}, "get"),
]


def url_for(name, scenario, extra):
    return reverse(name, kwargs={"pk": scenario.pk} | extra)


@pytest.mark.parametrize(("name", "extra", "method"), SCENARIO_VIEWS)
def test_outsider_gets_404_and_changes_nothing(client, scenario, outsider, name, extra, method):
    client.force_login(outsider)
    response = getattr(client, method)(url_for(name, scenario, extra), {"title": "Taken over", "start": "2"})
    assert response.status_code == 404
    assert Scenario.objects.get(pk=scenario.pk).title == "Rye loaf shelf"
    assert Scenario.objects.count() == 1


@pytest.mark.parametrize(("name", "extra", "method"), SCENARIO_VIEWS)
def test_anonymous_is_sent_to_sign_in(client, scenario, name, extra, method):
    url = url_for(name, scenario, extra)
    response = getattr(client, method)(url)
    assert response.status_code == 302
    assert response["Location"].startswith(reverse("login") + "?next=")
    assert Scenario.objects.count() == 1


@pytest.mark.parametrize("name", ["scenario_list", "scenario_new", "step_law_preview"])
def test_anonymous_is_sent_to_sign_in_for_pages_without_a_scenario(client, name):
    response = client.get(reverse(name))
    assert response.status_code == 302 and response["Location"].startswith(reverse("login"))


def test_sign_in_and_out(client, owner):
    page = client.get(reverse("login"))
    assert page.status_code == 200 and b"Sign in" in page.content
    response = client.post(reverse("login"), {"username": "olwen", "password": PASSWORD})
    assert response.status_code == 302
    assert client.get(reverse("scenario_list")).status_code == 200
    assert client.post(reverse("logout")).status_code == 302
    assert client.get(reverse("scenario_list")).status_code == 302
    wrong = client.post(reverse("login"), {"username": "olwen", "password": "stale bread"})
    assert wrong.status_code == 200 and b"correct username and password" in wrong.content


def test_list_shows_only_own_scenarios(client, scenario, outsider):
    client.force_login(outsider)
    assert b"Rye loaf shelf" not in client.get(reverse("scenario_list")).content
    client.force_login(scenario.owner)
    assert b"Rye loaf shelf" in client.get(reverse("scenario_list")).content


def test_owner_sees_results_with_figures_and_cautions(client, scenario):
    client.force_login(scenario.owner)
    response = client.get(url_for("scenario_results", scenario, {}))
    page = response.content.decode()
    assert response.status_code == 200
    assert 'id="figures"' in page and "planner/js/plotly.min.js" in page
    assert "Decision support only" in page and "licensed professionals" in page
    for chart in ("outlook", "risk", "start", "horizon", "normal"):
        assert f'id="fig-{chart}"' in page
    assert "cdn" not in page.lower()


def test_owner_creates_a_scenario(client, owner):
    client.force_login(owner)
    assert client.get(reverse("scenario_new")).status_code == 200
    data = {
        "title": "Croissant trays",
        "start": "3",
        "low": "0",
        "high": "",
        "below": "stop",
        "above": "spill",
        "horizon": "15",
        "step_method": "table",
        "step_table": "-1: 0.5, 0: 0.25, 1: 0.25",
        "arrivals_family": "poisson",
        "demand_family": "poisson",
        "stockout_target": "0.1",
        "overflow_target": "0.1",
    }
    response = client.post(reverse("scenario_new"), data)
    scenario = Scenario.objects.get()
    assert response.status_code == 302 and response["Location"] == scenario.get_absolute_url()
    assert scenario.owner == owner and scenario.walk_params.table == ((-1, 0.5), (0, 0.25), (1, 0.25))


def test_owner_edits_a_scenario(client, scenario):
    client.force_login(scenario.owner)
    page = client.get(url_for("scenario_edit", scenario, {}))
    assert page.status_code == 200 and b'value="Rye loaf shelf"' in page.content
    data = {
        "title": "Rye loaf shelf",
        "start": "5",
        "low": "0",
        "high": "8",
        "below": "lost",
        "above": "spill",
        "horizon": "12",
        "step_method": "nearest",
        "up": "0.3",
        "down": "0.4",
        "arrivals_family": "poisson",
        "demand_family": "poisson",
        "stockout_target": "0.05",
        "overflow_target": "0.05",
    }
    assert client.post(url_for("scenario_edit", scenario, {}), data).status_code == 302
    assert Scenario.objects.get(pk=scenario.pk).walk_params.start == 5


def test_owner_deletes_a_scenario(client, scenario):
    client.force_login(scenario.owner)
    assert b"Delete" in client.get(url_for("scenario_delete", scenario, {})).content
    assert client.post(url_for("scenario_delete", scenario, {})).status_code == 302
    assert not Scenario.objects.exists()


def test_outlook_json_follows_the_whatif_values(client, scenario):
    client.force_login(scenario.owner)
    url = url_for("scenario_outlook_json", scenario, {})
    base = client.get(url).json()
    changed = client.get(url, {"start": "2", "horizon": "20"})
    assert changed.status_code == 200 and "outlook;dur=" in changed["Server-Timing"]
    body = changed.json()
    assert body["params"]["start"] == 2 and body["params"]["horizon"] == 20
    assert set(body["figures"]) == {"outlook", "risk", "start", "horizon", "normal"}
    assert body["figures"]["risk"]["data"][0]["y"] != base["figures"]["risk"]["data"][0]["y"]
    assert "by period 20" in body["headline_html"]


@pytest.mark.parametrize(
    ("query", "message"),
    [
        ({"start": "9"}, "start level must be a whole number from 0 to 8"),
        ({"up": "0.9"}, "up + down must be at most 1"),
        ({"horizon": "-3"}, "horizon"),
        ({"horizon": "3650", "no_capacity": "on"}, "levels x periods must be at most 2,000,000"),
    ],
)
def test_outlook_json_answers_400_with_the_message(client, scenario, settings, query, message):
    settings.PLANNER_COMPUTE_CAP = 2_000_000
    client.force_login(scenario.owner)
    response = client.get(url_for("scenario_outlook_json", scenario, {}), query)
    assert response.status_code == 400
    assert message in response.json()["error"]


def test_outlook_json_reports_the_compute_cap(client, scenario, settings):
    settings.PLANNER_COMPUTE_CAP = 100
    client.force_login(scenario.owner)
    response = client.get(url_for("scenario_outlook_json", scenario, {}), {"horizon": "50"})
    assert response.status_code == 400
    assert "levels x periods must be at most 100" in response.json()["error"]
    page = client.get(url_for("scenario_results", scenario, {}))
    assert page.status_code == 200 and b"levels x periods must be at most 100" in page.content


def test_save_variant_keeps_the_whatif_as_a_new_scenario(client, scenario):
    client.force_login(scenario.owner)
    response = client.post(
        url_for("scenario_variant_save", scenario, {}), {"start": "6", "high": "", "no_capacity": "on"}
    )
    variant = Scenario.objects.exclude(pk=scenario.pk).get()
    assert response.status_code == 302 and response["Location"] == variant.get_absolute_url()
    assert (variant.walk_params.start, variant.walk_params.high) == (6, None)
    assert Scenario.objects.get(pk=scenario.pk).walk_params.start == 4
    bad = client.post(url_for("scenario_variant_save", scenario, {}), {"start": "99"})
    assert bad.status_code == 302 and Scenario.objects.count() == 2


def test_csv_download(client, scenario):
    client.force_login(scenario.owner)
    for table in ("level-law", "risk-curves", "risk-by-start"):
        response = client.get(url_for("scenario_csv", scenario, {"table": table}))
        assert response.status_code == 200
        assert response["Content-Type"] == "text/csv; charset=utf-8"
        assert response["Content-Disposition"] == f'attachment; filename="rye-loaf-shelf-{table}.csv"'
        rows = list(csv.reader(io.StringIO(response.content.decode())))
        assert rows[0][0] == "scenario" and len(rows) > 2
    whatif = client.get(url_for("scenario_csv", scenario, {"table": "risk-curves"}), {"horizon": "3"})
    assert len(list(csv.reader(io.StringIO(whatif.content.decode())))) == 1 + 4
    assert client.get(url_for("scenario_csv", scenario, {"table": "recipes"})).status_code == 404
    assert client.get(url_for("scenario_csv", scenario, {"table": "risk-curves"}), {"start": "99"}).status_code == 400


def test_step_law_preview(client, owner):
    client.force_login(owner)
    query = {
        "step_method": "nearest",
        "up": "0.2",
        "down": "0.5",
        "arrivals_family": "poisson",
        "demand_family": "poisson",
    }
    body = json.loads(client.get(reverse("step_law_preview"), query).content)
    assert body["steps"] == [-1, 0, 1] and body["probs"] == pytest.approx([0.5, 0.3, 0.2], rel=1e-15)
    assert body["mean"] == pytest.approx(-0.3, rel=1e-12)
    bad = client.get(reverse("step_law_preview"), query | {"up": "0.6"})
    assert bad.status_code == 400 and "up + down must be at most 1" in bad.json()["errors"]["down"][0]


def test_admin_lists_scenarios_for_staff(client, scenario, django_user_model):
    staff = django_user_model.objects.create_superuser("marit", password=PASSWORD)
    client.force_login(staff)
    assert b"Rye loaf shelf" in client.get("/admin/planner/scenario/").content
