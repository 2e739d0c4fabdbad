"""Every view of every kind: the owner sees and edits, another signed-in user gets 404, anonymous signs in first."""

import csv
import io
import re

import pytest
from django.urls import reverse

import walkmath as wm
from planner.formatting import probability
from planner.kinds import all_kinds, get_kind
from planner.models import Scenario
from tests.conftest import PASSWORD, example_scenario

pytestmark = pytest.mark.django_db

# (kind, url name, extra kwargs, method) for every URL that shows or changes one scenario, for every kind.
SCENARIO_VIEWS = [
    (kind.key, name, extra, method)
    for kind in all_kinds()
    for name, extra, method in [
        ("scenario_results", {}, "get"),
        ("scenario_edit", {}, "get"),
        ("scenario_edit", {}, "post"),
        ("scenario_delete", {}, "get"),
        ("scenario_delete", {}, "post"),
        ("scenario_outlook_json", {}, "get"),
        ("scenario_cross_check_json", {}, "get"),  # 404 for the owner of a kind without a cross-check
        ("scenario_variant_save", {}, "post"),
    ]
    + [("scenario_csv", {"table": table}, "get") for table in [*kind.tables, *kind.check_tables]]
]
KIND_VIEWS = [(name, kind.key) for kind in all_kinds() for name in ("scenario_new_kind", "kind_preview")]


@pytest.fixture
def any_scenario(owner, kind):
    """One saved scenario of the kind under test (each kind's own small example, tests/conftest.py)."""
    return example_scenario(owner, kind)


def url_for(name, scenario, extra):
    return reverse(name, kwargs={"pk": scenario.pk} | extra)


@pytest.mark.parametrize(("kind", "name", "extra", "method"), SCENARIO_VIEWS)
def test_outsider_gets_404_and_changes_nothing(client, any_scenario, outsider, name, extra, method):
    client.force_login(outsider)
    data = {"title": "Taken over", "start": "2"}
    response = getattr(client, method)(url_for(name, any_scenario, extra), data)
    assert response.status_code == 404
    assert Scenario.objects.get(pk=any_scenario.pk).title == any_scenario.title
    assert Scenario.objects.count() == 1


@pytest.mark.parametrize(("kind", "name", "extra", "method"), SCENARIO_VIEWS)
def test_anonymous_is_sent_to_sign_in(client, any_scenario, name, extra, method):
    response = getattr(client, method)(url_for(name, any_scenario, extra))
    assert response.status_code == 302
    assert response["Location"].startswith(reverse("login") + "?next=")
    assert Scenario.objects.count() == 1


@pytest.mark.parametrize(("kind", "name", "extra", "method"), SCENARIO_VIEWS)
def test_owner_is_answered(client, any_scenario, name, extra, method):
    client.force_login(any_scenario.owner)
    data = {"title": f"{any_scenario.title}, copy"} if name == "scenario_variant_save" else {}
    response = getattr(client, method)(url_for(name, any_scenario, extra), data)
    kind = get_kind(any_scenario.kind)
    if name == "scenario_cross_check_json" and not kind.check_template:
        assert response.status_code == 404  # this kind has no cross-check
    else:
        assert response.status_code in (200, 302)


@pytest.mark.parametrize(("name", "kind"), KIND_VIEWS)
def test_kind_pages_need_sign_in_and_answer_the_owner(client, owner, name, kind):
    url = reverse(name, kwargs={"kind": kind})
    response = client.get(url)
    assert response.status_code == 302 and response["Location"].startswith(reverse("login"))
    client.force_login(owner)
    assert client.get(url).status_code == 200
    assert client.get(reverse(name, kwargs={"kind": "no-such-kind"})).status_code == 404


@pytest.mark.parametrize("name", ["scenario_list", "scenario_new"])
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


def test_list_shows_only_own_scenarios_with_their_stored_headline(client, scenario, outsider, monkeypatch):
    def never(*args, **kwargs):
        raise AssertionError("the list recomputed a plan")

    monkeypatch.setattr(wm.BandedWalk, "outlook", never)
    client.force_login(outsider)
    assert b"Rye loaf shelf" not in client.get(reverse("scenario_list")).content
    client.force_login(scenario.owner)
    page = client.get(reverse("scenario_list")).content.decode()
    assert "Rye loaf shelf" in page and "over 12 days" in page
    assert probability(scenario.headline_risk) in page


def test_new_scenario_lists_every_kind_or_goes_to_the_only_one(client, owner, monkeypatch):
    client.force_login(owner)
    page = client.get(reverse("scenario_new")).content.decode()
    for kind in all_kinds():
        assert reverse("scenario_new_kind", kwargs={"kind": kind.key}) in page and kind.label in page
    monkeypatch.setattr("planner.views.all_kinds", lambda: [get_kind("stock_plan")])
    response = client.get(reverse("scenario_new"))
    assert response.status_code == 302
    assert response["Location"] == reverse("scenario_new_kind", kwargs={"kind": "stock_plan"})


def test_owner_sees_results_with_figures_text_alternatives_and_cautions(client, scenario):
    client.force_login(scenario.owner)
    response = client.get(url_for("scenario_results", scenario, {}))
    page = response.content.decode()
    assert response.status_code == 200
    assert 'id="figures"' in page and "planner/js/plotly.min.js" in page
    assert "Decision support only" in page and "licensed professionals" in page
    assert 'id="cross-check"' in page and 'id="fig-cross-check"' in page  # filled by its own request
    for chart in ("outlook", "risk", "start", "horizon"):
        assert f'id="fig-{chart}"' in page and f'id="fig-{chart}-summary"' in page
    assert "can serve that day" in page  # the order of events within a period
    assert 'id="whatif-title"' in page
    assert "cdn" not in page.lower()
    # The words on screen (the shared page frame around <main> is not this app's page).
    main = page[page.index("<main") : page.index("</main>")]
    text = re.sub(r"<[^>]+>", " ", re.sub(r"<script.*?</script>", " ", main, flags=re.S))
    for word in ("walk", "step law", "band", "below low", "P(up one)", "periods"):
        assert word not in text, word


def test_untouched_form_shows_no_error(client, owner):
    client.force_login(owner)
    page = client.get(reverse("scenario_new_kind", kwargs={"kind": "stock_plan"})).content.decode()
    assert "field-error" not in page and "error-box" not in page
    assert "Horizon (days)" in page and "Safety floor" in page


def test_owner_creates_a_scenario_with_percent_targets(client, owner):
    client.force_login(owner)
    data = {
        "title": "Croissant trays",
        "period": "week",
        "start": "3",
        "low": "0",
        "high": "",
        "below": "stop",
        "above": "spill",
        "horizon": "15",
        "step_method": "table",
        "step_table": "-1: 0.5, 0: 0.25, 1: 0.25",
        "demand_family": "poisson",
        "arrivals_family": "none",
        "stockout_target": "1%",
        "overflow_target": "0.5 %",
    }
    response = client.post(reverse("scenario_new_kind", kwargs={"kind": "stock_plan"}), data)
    scenario = Scenario.objects.get()
    assert response.status_code == 302 and response["Location"] == scenario.get_absolute_url()
    assert scenario.owner == owner and scenario.params.table == ((-1, 0.5), (0, 0.25), (1, 0.25))
    assert (scenario.stockout_target, scenario.overflow_target, scenario.params.period) == (0.01, 0.005, "week")
    assert scenario.headline_risk > 0 and scenario.headline_span == "15 weeks"
    page = client.get(scenario.get_absolute_url()).content.decode()
    assert "over 15 weeks" in page and "1 %" in page


def test_owner_edits_a_scenario(client, scenario):
    client.force_login(scenario.owner)
    page = client.get(url_for("scenario_edit", scenario, {}))
    assert page.status_code == 200 and b'value="Rye loaf shelf"' in page.content
    assert b'name="stockout_target" value="5"' in page.content
    assert b'name="version" value="1"' in page.content  # the version this edit starts from
    data = {
        "version": "1",
        "title": "Rye loaf shelf",
        "period": "day",
        "start": "5",
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
    assert client.post(url_for("scenario_edit", scenario, {}), data).status_code == 302
    assert Scenario.objects.get(pk=scenario.pk).params.start == 5


def test_owner_deletes_a_scenario(client, scenario):
    client.force_login(scenario.owner)
    assert b"Delete" in client.get(url_for("scenario_delete", scenario, {})).content
    assert client.post(url_for("scenario_delete", scenario, {})).status_code == 302
    assert not Scenario.objects.exists()


def test_outlook_json_follows_the_whatif_values(client, scenario):
    client.force_login(scenario.owner)
    url = url_for("scenario_outlook_json", scenario, {})
    base = client.get(url).json()
    assert base["changes"] == []
    changed = client.get(url, {"start": "2", "horizon": "20", "title": "ignored"})
    assert changed.status_code == 200 and "compute;dur=" in changed["Server-Timing"]
    body = changed.json()
    assert body["params"]["start"] == 2 and body["params"]["horizon"] == 20
    assert set(body["figures"]) == set(body["summaries"]) == {"outlook", "risk", "start", "horizon"}
    assert set(body["figures"]["risk"]) == {"data", "layout"}
    assert body["figures"]["risk"]["data"][0]["y"] != base["figures"]["risk"]["data"][0]["y"]
    assert "over 20 days" in body["headline_html"]
    assert body["changes"] == ["start stock 4 → 2 units", "horizon 12 days → 20 days"]


@pytest.mark.parametrize(
    ("query", "message"),
    [
        ({"start": "9"}, "start stock must be a whole number from 0 to 8"),
        ({"up": "0.9"}, "chance of one up + chance of one down must be at most 1"),
        ({"horizon": "-3"}, "horizon"),
    ],
)
def test_outlook_json_answers_400_with_the_message(client, scenario, query, message):
    client.force_login(scenario.owner)
    response = client.get(url_for("scenario_outlook_json", scenario, {}), query)
    assert response.status_code == 400
    assert message in response.json()["error"]


def test_cost_refusal_names_what_to_shorten_on_every_page(client, scenario, settings):
    settings.PLANNER_COMPUTE_CAP = 1_000_000
    settings.PLANNER_BACKGROUND_CAP = 1_000_000  # too large for a background worker too (tests/planner/background)
    client.force_login(scenario.owner)
    response = client.get(url_for("scenario_outlook_json", scenario, {}), {"horizon": "50"})
    assert response.status_code == 400
    error = response.json()["error"]
    assert "too large to work out in one request" in error and "shorten the horizon (now 50 days)" in error
    page = client.get(url_for("scenario_results", scenario, {}))
    assert page.status_code == 200 and b"too large to work out" in page.content
    csv_response = client.get(url_for("scenario_csv", scenario, {"table": "risk-curves"}))
    assert csv_response.status_code == 400


def test_save_as_new_needs_a_name(client, scenario):
    client.force_login(scenario.owner)
    url = url_for("scenario_variant_save", scenario, {})
    nameless = client.post(url, {"start": "6", "high": "", "no_capacity": "on"}, follow=True)
    assert Scenario.objects.count() == 1 and "give the new plan a name" in nameless.content.decode()
    response = client.post(url, {"start": "6", "high": "", "no_capacity": "on", "title": "Rye shelf, no limit"})
    variant = Scenario.objects.exclude(pk=scenario.pk).get()
    assert response.status_code == 302 and response["Location"] == variant.get_absolute_url()
    assert variant.title == "Rye shelf, no limit"
    assert (variant.params.start, variant.params.high) == (6, None)
    assert variant.headline_risk is not None
    assert Scenario.objects.get(pk=scenario.pk).params.start == 4
    bad = client.post(url, {"start": "99", "title": "Too many"})
    assert bad.status_code == 302 and Scenario.objects.count() == 2


def test_csv_download_names_a_whatif_as_such(client, scenario):
    client.force_login(scenario.owner)
    for table in ("stock-by-period", "risk-curves", "risk-by-start"):
        response = client.get(url_for("scenario_csv", scenario, {"table": table}))
        assert response.status_code == 200
        assert response["Content-Type"] == "text/csv; charset=utf-8"
        assert response["Content-Disposition"] == f'attachment; filename="rye-loaf-shelf-{table}.csv"'
        rows = list(csv.reader(io.StringIO(response.content.decode())))
        assert rows[0][0] == "scenario" and len(rows) > 2 and rows[1][-2] == "saved plan"
    whatif = client.get(url_for("scenario_csv", scenario, {"table": "risk-curves"}), {"horizon": "3"})
    assert whatif["Content-Disposition"] == 'attachment; filename="rye-loaf-shelf-whatif-risk-curves.csv"'
    rows = list(csv.reader(io.StringIO(whatif.content.decode())))
    assert len(rows) == 1 + 4 and rows[1][-2:] == ["what-if", "horizon 12 days → 3 days"]
    same = client.get(url_for("scenario_csv", scenario, {"table": "risk-curves"}), {"horizon": "12"})
    assert same["Content-Disposition"] == 'attachment; filename="rye-loaf-shelf-risk-curves.csv"'
    assert client.get(url_for("scenario_csv", scenario, {"table": "recipes"})).status_code == 404
    assert client.get(url_for("scenario_csv", scenario, {"table": "risk-curves"}), {"start": "99"}).status_code == 400


PREVIEW = reverse("kind_preview", kwargs={"kind": "stock_plan"})


def test_preview_of_the_change_law(client, owner):
    client.force_login(owner)
    query = {"step_method": "nearest", "up": "0.2", "down": "0.5", "demand_family": "poisson"}
    body = client.get(PREVIEW, query).json()
    assert body["ready"] and body["steps"] == [-1, 0, 1] and body["probs"] == pytest.approx([0.5, 0.3, 0.2], rel=1e-15)
    assert body["mean"] == pytest.approx(-0.3, rel=1e-12)
    bad = client.get(PREVIEW, query | {"up": "0.6"})
    assert bad.status_code == 400 and "must be at most 1" in bad.json()["errors"]["down"][0]


def test_untouched_preview_is_not_an_error(client, owner):
    client.force_login(owner)
    response = client.get(PREVIEW, {"step_method": "net", "demand_family": "poisson", "arrivals_family": "none"})
    assert response.status_code == 200 and response.json()["ready"] is False


def test_preview_with_many_large_profile_factors_is_refused_before_building(client, owner):
    client.force_login(owner)
    factors = ", ".join(str(90 + i) for i in range(40))
    query = {"step_method": "net", "demand_family": "poisson", "demand_mean": "9000", "profile": factors}
    response = client.get(PREVIEW, query)
    assert response.status_code == 400 and "profile" in response.json()["errors"]


@pytest.mark.parametrize("mean", ["0", "0.0"])
def test_negative_binomial_demand_with_mean_zero_does_not_fail(client, owner, mean):
    client.force_login(owner)
    query = {"step_method": "net", "demand_family": "negative_binomial", "demand_mean": mean, "demand_variance": "2"}
    body = client.get(PREVIEW, query).json()
    assert body["steps"] == [0] and body["probs"] == [1.0]


def test_admin_lists_scenarios_for_staff(client, scenario, django_user_model):
    staff = django_user_model.objects.create_superuser("marit", password=PASSWORD)
    client.force_login(staff)
    assert b"Rye loaf shelf" in client.get("/admin/planner/scenario/").content


def test_a_plan_with_no_demand_at_all_shows_its_results(client, owner):
    # Negative binomial demand with mean 0 is a point mass at 0: the stock never moves.
    client.force_login(owner)
    data = {
        "title": "Spare oven gloves",
        "period": "month",
        "start": "4",
        "low": "0",
        "high": "",
        "below": "backorder",
        "above": "spill",
        "horizon": "12",
        "step_method": "net",
        "demand_family": "negative_binomial",
        "demand_mean": "0",
        "demand_variance": "1",
        "arrivals_family": "none",
        "stockout_target": "1",
        "overflow_target": "1",
    }
    response = client.post(reverse("scenario_new_kind", kwargs={"kind": "stock_plan"}), data)
    assert response.status_code == 302, response.content.decode()[:2000]
    scenario = Scenario.objects.get()
    assert scenario.headline_risk == 0.0
    page = client.get(scenario.get_absolute_url()).content.decode()
    assert "over 12 months" in page and "no finite average" in page


def test_hover_values_use_the_formatter(client, scenario):
    client.force_login(scenario.owner)
    body = client.get(url_for("scenario_outlook_json", scenario, {})).json()
    trace = body["figures"]["risk"]["data"][0]
    assert trace["customdata"] == [probability(value) for value in trace["y"]]


def test_a_plan_too_large_to_compute_is_not_saved_and_says_why(client, owner, settings):
    settings.PLANNER_COMPUTE_CAP = 1_000_000
    settings.PLANNER_BACKGROUND_CAP = 1_000_000  # too large for a background worker too (tests/planner/background)
    client.force_login(owner)
    data = {
        "title": "Flour by the gram",
        "period": "day",
        "start": "50",
        "low": "0",
        "high": "",
        "below": "backorder",
        "above": "spill",
        "horizon": "200",
        "step_method": "nearest",
        "up": "0.3",
        "down": "0.3",
        "demand_family": "poisson",
        "stockout_target": "1",
        "overflow_target": "1",
    }
    response = client.post(reverse("scenario_new_kind", kwargs={"kind": "stock_plan"}), data)
    page = response.content.decode()
    assert response.status_code == 200 and "Nothing was saved" in page and "set a capacity" in page
    assert not Scenario.objects.exists()
