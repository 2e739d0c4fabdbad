"""Comparing 2 to 4 plans: one chart of their stock-out curves, one table of key figures, CSV files; only plans
the user may see; the compute cap shared between the plans."""

import csv
import io

import pytest
from django.test import Client
from django.urls import reverse

from planner import services
from planner.formatting import probability
from planner.kinds import Kind, get_kind

pytestmark = pytest.mark.django_db

COMPARE = reverse("scenario_compare")


@pytest.fixture
def plans(scenario, outsider, small_params):
    """Olwen's rye shelf and Ivo's oat bin (28 days, no capacity), which Ivo shares with Olwen to view."""
    oats = services.scenario_create(
        owner=outsider,
        kind="stock_plan",
        title="Oat bin",
        params=small_params.replace(high=None, below="backorder", horizon=28, start=6),
    )
    services.share_set(scenario=oats, user=scenario.owner, role="viewer")
    return [scenario, oats]


def browser_for(user):
    browser = Client()
    browser.force_login(user)
    return browser


def query(*scenarios):
    return {"plan": [str(s.pk) for s in scenarios]}


def test_the_curves_share_one_chart_and_the_figures_one_table(plans):
    rye, oats = plans
    response = browser_for(rye.owner).get(COMPARE, query(rye, oats))
    assert response.status_code == 200
    figure = response.context["figures"]["compare"]
    assert [trace["name"] for trace in figure["data"]] == ["Rye loaf shelf (days)", "Oat bin (days)"]
    for trace, plan in zip(figure["data"], plans, strict=True):
        # the engine's own curve for each saved plan, every period of its horizon
        assert trace["y"] == plan.params.walk().outlook(plan.params.horizon).stockout.tolist()
        assert trace["x"] == list(range(plan.params.horizon + 1))
    page = response.content.decode()
    table = page.split('id="key-figures"')[1].split("</table>")[0]
    assert "Rye loaf shelf" in table and "Oat bin" in table
    for plan in plans:
        assert probability(plan.headline_risk) in table
    assert "no capacity set" in table and "12 days" in table and "28 days (4 weeks)" in table


def read_csv(response):
    return list(csv.reader(io.StringIO(response.content.decode())))


def test_the_csv_files_hold_the_numbers(plans):
    rye, oats = plans
    browser = browser_for(rye.owner)
    figures = browser.get(reverse("scenario_compare_csv", args=["key-figures"]), query(rye, oats))
    assert figures["Content-Disposition"] == 'attachment; filename="comparison-key-figures.csv"'
    rows = {row[0]: row[1:] for row in read_csv(figures)}
    assert rows["figure"] == ["Rye loaf shelf", "Oat bin"]
    assert [float(v) for v in rows["Stock-out risk over the horizon"]] == [rye.headline_risk, oats.headline_risk]
    assert rows["Capacity"] == ["8", "no limit"]
    curves = read_csv(browser.get(reverse("scenario_compare_csv", args=["risk-curves"]), query(rye, oats)))
    assert len(curves) == 1 + 29  # periods 0..28, the longer horizon
    # row 1 + n is period n: the rye shelf's horizon ends at day 12, the oat bin's goes on
    assert curves[1 + 12][0] == "12" and float(curves[1 + 12][1]) == rye.headline_risk
    assert curves[1 + 13][1] == "" and float(curves[1 + 13][2]) > 0
    assert float(curves[1 + 28][2]) == oats.headline_risk
    assert browser.get(reverse("scenario_compare_csv", args=["recipes"]), query(rye, oats)).status_code == 404


@pytest.mark.parametrize(
    "chosen",
    [["1"], ["1", "1"], ["1", "x"], [str(n) for n in range(1, 6)], []],
    ids=["one", "the same twice", "not a number", "five", "none"],
)
def test_two_to_four_plans_or_a_clear_message(plans, chosen):
    browser = browser_for(plans[0].owner)
    response = browser.get(COMPARE, {"plan": chosen})
    assert response.status_code == 400 and "Choose 2 to 4 plans to compare" in response.content.decode()
    csv_response = browser.get(reverse("scenario_compare_csv", args=["key-figures"]), {"plan": chosen})
    assert csv_response.status_code == 400


def test_a_plan_the_user_may_not_see_makes_the_whole_comparison_404(plans, cast, small_params):
    rye, oats = plans
    private = services.scenario_create(owner=oats.owner, kind="stock_plan", title="Ivo's secret", params=small_params)
    browser = browser_for(rye.owner)
    assert browser.get(COMPARE, query(rye, private)).status_code == 404
    assert browser.get(reverse("scenario_compare_csv", args=["key-figures"]), query(rye, private)).status_code == 404
    assert browser_for(cast["viewer"]).get(COMPARE, query(rye, oats)).status_code == 404  # sees rye, not the oats
    anonymous = Client().get(COMPARE, query(rye, oats))
    assert anonymous.status_code == 302 and anonymous["Location"].startswith(reverse("login"))


def test_the_plans_share_the_compute_cap(plans, settings):
    rye, oats = plans
    job = get_kind("stock_plan").prepare(rye.params, rye.stockout_target, rye.overflow_target)
    settings.PLANNER_COMPUTE_CAP = sum(part.units for part in job.parts() if part.required)  # one rye shelf, exactly
    browser = browser_for(rye.owner)
    assert (
        browser.get(rye.get_absolute_url()).status_code == 200
        and "compute-error" not in browser.get(rye.get_absolute_url()).content.decode()
    )
    page = browser.get(COMPARE, query(rye, oats)).content.decode()
    assert "cannot be worked out here" in page and "each of the 2 plans compared gets that share" in page


def test_titles_are_guarded_in_the_csv(plans):
    rye, oats = plans
    services.scenario_update(
        scenario=rye, title="=1+1", params=rye.params, notes="", stockout_target=0.05, overflow_target=0.05
    )
    response = browser_for(rye.owner).get(reverse("scenario_compare_csv", args=["key-figures"]), query(rye, oats))
    assert read_csv(response)[0] == ["figure", "'=1+1", "Oat bin"]


def test_a_kind_that_is_not_compared_yet_is_listed_with_a_note(plans, monkeypatch):
    rye, oats = plans
    kind = get_kind("stock_plan")
    compared = kind.comparable
    # As for a kind whose package does not provide comparable() (the Kind default): here, the oat bin's.
    monkeypatch.setattr(kind, "comparable", lambda result: None if result.horizon == 28 else compared(result))
    response = browser_for(rye.owner).get(COMPARE, query(rye, oats))
    page = response.content.decode()
    assert response.status_code == 200 and "which the comparison does not show yet" in page
    assert [trace["name"] for trace in response.context["figures"]["compare"]["data"]] == ["Rye loaf shelf (days)"]
    assert Kind().comparable(object()) is None
