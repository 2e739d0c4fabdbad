"""History views: every URL for the owner, another signed-in user (404) and anonymous (sign in first);
the list, the history page, the fit page, the CSV downloads and a plan made from the fit.

Outside references named beside each check: scipy.stats (Poisson pmf, chi-square quantiles for Garwood's
interval), numpy for counts and means, the csv module (RFC 4180) for the downloads.
"""

import csv
import html
import io
import re

import numpy as np
import pytest
from django.urls import reverse
from django.utils.html import escape
from scipy import stats

from planner.history.fit import MAX_DRAWS, MIN_DRAWS
from planner.models import SavedHistory, Scenario

pytestmark = pytest.mark.django_db

RANGE = {"start": "40", "high": "90", "horizon": "21"}

# (url name, extra kwargs, method, data) for every URL that shows or changes one history.
HISTORY_VIEWS = [
    ("history_detail", {}, "get", {}),
    ("history_fit", {}, "get", RANGE),
    ("history_plan_create", {"kind": "stock_plan"}, "post", RANGE),
    ("history_delete", {}, "get", {}),
    ("history_delete", {}, "post", {}),
] + [("history_csv", {"table": table}, "get", RANGE) for table in ("history", "laws", "frequencies", "range")]
# Pages of no one history: anonymous users sign in first; signed-in users see only their own.
OWN_PAGES = [("history_list", "get"), ("history_new", "get"), ("history_new", "post"), ("history_save", "post")]


def url_for(name, history, extra):
    return reverse(name, kwargs={"pk": history.pk} | extra)


@pytest.mark.parametrize(("name", "extra", "method", "data"), HISTORY_VIEWS)
def test_outsider_gets_404_and_changes_nothing(client, history, outsider, name, extra, method, data):
    client.force_login(outsider)
    response = getattr(client, method)(url_for(name, history, extra), data)
    assert response.status_code == 404
    assert SavedHistory.objects.filter(pk=history.pk, title="Rye flour, spring").exists()
    assert not Scenario.objects.exists()


@pytest.mark.parametrize(("name", "extra", "method", "data"), HISTORY_VIEWS)
def test_anonymous_is_sent_to_sign_in(client, history, name, extra, method, data):
    response = getattr(client, method)(url_for(name, history, extra), data)
    assert response.status_code == 302 and response["Location"].startswith(reverse("login") + "?next=")
    assert SavedHistory.objects.count() == 1 and not Scenario.objects.exists()


@pytest.mark.parametrize(("name", "extra", "method", "data"), HISTORY_VIEWS)
def test_owner_is_answered(client, history, name, extra, method, data):
    client.force_login(history.owner)
    response = getattr(client, method)(url_for(name, history, extra), data)
    assert response.status_code in (200, 302)


@pytest.mark.parametrize(("name", "method"), OWN_PAGES)
def test_pages_without_a_history_need_sign_in(client, name, method):
    response = getattr(client, method)(reverse(name))
    assert response.status_code == 302 and response["Location"].startswith(reverse("login"))


def test_a_missing_history_and_an_unknown_table_are_404(client, history):
    client.force_login(history.owner)
    assert client.get(reverse("history_fit", args=[history.pk + 1000])).status_code == 404
    assert client.get(reverse("history_csv", args=[history.pk, "nothing"])).status_code == 404
    plan = reverse("history_plan_create", args=[history.pk, "no-such-kind"])
    assert client.post(plan, RANGE).status_code == 404
    assert client.get(reverse("history_plan_create", args=[history.pk, "stock_plan"])).status_code == 405


def test_list_shows_only_own_histories_and_home_links_to_it(client, history, outsider):
    client.force_login(outsider)
    assert b"Rye flour, spring" not in client.get(reverse("history_list")).content
    client.force_login(history.owner)
    page = client.get(reverse("history_list")).content.decode()
    assert "Rye flour, spring" in page and history.get_absolute_url() in page and "84" in page
    home = client.get(reverse("scenario_list")).content.decode()
    assert f'href="{reverse("history_list")}"' in home and 'id="histories-link"' in home


def test_history_page_shows_rows_chart_and_links(client, history):
    client.force_login(history.owner)
    page = words(client.get(history.get_absolute_url()).content.decode())
    assert "84 rows of units in and out, one a day, from 3 Mar 2025 to 25 May 2025" in page
    assert 'id="fig-series"' in page and reverse("history_fit", args=[history.pk]) in page


def test_deleting_a_history(client, history):
    client.force_login(history.owner)
    response = client.post(reverse("history_delete", args=[history.pk]))
    assert response.status_code == 302 and not SavedHistory.objects.exists()


# -- the fit page ------------------------------------------------------------------------------------


def fit_page(client, history, query=RANGE) -> str:
    client.force_login(history.owner)
    response = client.get(reverse("history_fit", args=[history.pk]), query)
    assert response.status_code == 200
    return response.content.decode()


def test_fit_page_recommends_a_law_in_the_trades_words(client, history):
    page = fit_page(client, history)
    values = np.array(history.series["out"])
    assert 'data-choice="demand">Poisson law</b>' in page
    # The reason quotes the counts' mean and variance (numpy's mean and population variance).
    assert escape(f"variance {np.var(values):.3g} against a mean of {values.mean():.3g} units a day") in page
    for word in ("walk", "step law", "band"):
        assert not re.search(rf"\b{word}\b", strip_tags(page), re.I), word


def words(page: str) -> str:
    """The page's text as a reader sees it: entities decoded, runs of white space as one space."""
    return re.sub(r"\s+", " ", html.unescape(page))


def strip_tags(page: str) -> str:
    """The page's visible words: scripts (chart data) and tags removed."""
    page = re.sub(r"<script.*?</script>", " ", page, flags=re.S)
    return re.sub(r"<[^>]+>", " ", page)


def test_fit_page_shows_the_poisson_mean_with_garwoods_interval(client, history):
    page = fit_page(client, history)
    values = np.array(history.series["out"])
    total, days = int(values.sum()), values.size
    # Garwood (1936): exact 95 % limits chi2(0.025; 2x) / 2 and chi2(0.975; 2x + 2) / 2, per day here.
    low, high = stats.chi2.ppf(0.025, 2 * total) / (2 * days), stats.chi2.ppf(0.975, 2 * total + 2) / (2 * days)
    assert f"{low:.3g} to {high:.3g}" in page and "95 % exact (Garwood)" in page


def test_fit_page_states_draws_seed_and_what_the_budget_affords(client, history):
    page = fit_page(client, history)
    draws = int(re.search(r'id="draws">(\d+)<', page)[1])
    affordable = int(re.search(r"this page's budget affords (\d+)", words(page))[1])
    assert MIN_DRAWS <= draws <= MAX_DRAWS and draws == min(affordable, MAX_DRAWS)
    assert "seed 1" in page
    assert re.search(r'id="stockout-range">[^<]+ to [^<]+<', page)
    assert re.search(r'id="overflow-range">[^<]+ to [^<]+<', page)
    assert 'id="fig-risk"' in page and "credible range" in page


def test_a_small_budget_gives_the_risk_without_its_range_and_says_why(client, history, settings):
    from walkmath import BandedWalk, StepLaw

    # Room for the fitted laws' own risk but not for the range's draws (priced by walkmath's cost model).
    walk = BandedWalk(StepLaw.poisson(12.0), start=40, low=0, high=90, below="lost", above="spill")
    settings.PLANNER_COMPUTE_CAP = 2 * walk.cost(21, "outlook").units
    page = fit_page(client, history)
    assert 'id="draws">0<' in page and "A credible range needs at least 20 draws" in page
    assert 'data-figure="stockout"' in page and 'id="stockout-range"' not in page


def test_a_budget_too_small_for_the_risk_is_refused_with_what_to_change(client, history, settings):
    settings.PLANNER_COMPUTE_CAP = 1000
    page = fit_page(client, history)
    assert 'id="range-error"' in page and "this page's budget" in words(page) and "shorten the horizon" in page


def test_range_inputs_out_of_range_name_their_fields(client, history):
    page = fit_page(client, history, {"start": "50", "high": "30", "horizon": "0"})
    assert "Capacity must be at least the start stock (50); or leave it empty." in page
    assert "Ensure this value is greater than or equal to 1." in page
    assert 'id="fig-risk"' not in page


def test_an_empty_query_uses_a_week_of_mean_demand_and_four_weeks(client, history):
    page = fit_page(client, history, {})
    mean_out = np.mean(history.series["out"])
    assert f'name="start" value="{int(np.ceil(7 * mean_out))}"' in page and 'name="horizon" value="28"' in page


def test_a_level_history_plans_with_the_observed_changes(client, level_history):
    page = fit_page(client, level_history, {"start": "40", "horizon": "14"})
    assert 'data-choice="change">the amounts as observed</b>' in page
    assert "The level moved both ways" in page
    assert "A level series does not separate demand from deliveries" in page


# -- CSV downloads ----------------------------------------------------------------------------------


def download(client, history, table, query=RANGE) -> list[dict]:
    client.force_login(history.owner)
    response = client.get(reverse("history_csv", args=[history.pk, table]), query)
    assert response.status_code == 200 and response["Content-Type"] == "text/csv; charset=utf-8"
    assert response["Content-Disposition"] == f'attachment; filename="rye-flour-spring-{table}.csv"'
    return list(csv.DictReader(io.StringIO(response.content.decode())))


def test_history_csv_has_every_row_as_read(client, history):
    rows = download(client, history, "history")
    assert [int(row["in"]) for row in rows] == history.series["in"]
    assert [int(row["change"]) for row in rows] == (np.subtract(history.series["in"], history.series["out"])).tolist()
    assert rows[0]["history"] == "Rye flour, spring" and rows[0]["date"] == "2025-03-03"


def test_frequencies_csv_against_numpy_counts_and_scipy_poisson(client, history):
    rows = [row for row in download(client, history, "frequencies") if row["series"] == "Demand (out)"]
    values = np.array(history.series["out"])
    seen = np.bincount(values)
    assert [int(row["periods seen"]) for row in rows[:-1]] == seen.tolist()
    # Expected periods under the Poisson fit: n x scipy.stats.poisson.pmf(k, mean); the last row is k and above.
    expected = values.size * stats.poisson.pmf(np.arange(seen.size), values.mean())
    np.testing.assert_allclose([float(row["expected, Poisson"]) for row in rows[:-1]], expected, rtol=1e-10)
    assert rows[-1]["and above"] == "yes"


def test_laws_csv_holds_the_fits_and_their_tests(client, history):
    rows = download(client, history, "laws")
    demand = {(row["law"], row["quantity"]): row for row in rows if row["series"] == "Demand (out)"}
    values = np.array(history.series["out"])
    assert float(demand[("Poisson law", "mean")]["value"]) == pytest.approx(values.mean(), rel=1e-12)
    assert demand[("Poisson law", "mean")]["recommended"] == "yes"
    assert ("Poisson law", "chi-square p-value") in demand
    assert 0 <= float(demand[("Poisson law", "chi-square p-value")]["value"]) <= 1


def test_range_csv_matches_the_page(client, history):
    page = fit_page(client, history)
    rows = download(client, history, "range")
    assert len(rows) == 22 and rows[0]["period"] == "0" and rows[-1]["period"] == "21"
    draws = re.search(r'id="draws">(\d+)<', page)[1]
    assert rows[-1]["draws"] == draws and rows[-1]["seed"] == "1" and rows[-1]["capacity"] == "90"
    last = rows[-1]
    low, high = float(last["stock-out, 90 % low"]), float(last["stock-out, 90 % high"])
    assert 0 <= low <= float(last["stock-out, median"]) <= high <= 1


def test_range_csv_refuses_bad_inputs_with_their_names(client, history):
    client.force_login(history.owner)
    response = client.get(reverse("history_csv", args=[history.pk, "range"]), {"start": "-1", "horizon": "5"})
    assert (
        response.status_code == 400 and b"start: Ensure this value is greater than or equal to 0." in response.content
    )


def test_csv_neutralises_a_formula_in_the_name(client, owner):
    from planner.history.services import history_create
    from tests.planner.history.conftest import levels_csv, parse

    history = history_create(owner=owner, title="=HYPERLINK(1)", parsed=parse(levels_csv()))
    client.force_login(owner)
    body = client.get(reverse("history_csv", args=[history.pk, "history"])).content.decode()
    # OWASP, "CSV Injection": a leading apostrophe keeps spreadsheets from reading a formula.
    assert list(csv.reader(io.StringIO(body)))[1][0] == "'=HYPERLINK(1)"


# -- a plan from the fit ----------------------------------------------------------------------------


def test_one_click_makes_a_stock_plan_with_the_fitted_laws(client, history):
    client.force_login(history.owner)
    response = client.post(reverse("history_plan_create", args=[history.pk, "stock_plan"]), RANGE)
    scenario = Scenario.objects.get()
    assert response.status_code == 302 and response["Location"] == scenario.get_absolute_url()
    params = scenario.params
    assert (params.start, params.high, params.horizon, params.period) == (40, 90, 21, "day")
    assert (params.below, params.above, params.step_method) == ("lost", "spill", "net")
    # The Poisson maximum-likelihood mean is the average count (any statistics text; numpy's mean here).
    assert params.demand.family == "poisson"
    assert params.demand.mean == pytest.approx(np.mean(history.series["out"]), rel=1e-12)
    assert params.arrivals.mean == pytest.approx(np.mean(history.series["in"]), rel=1e-12)
    assert "Made from the history “Rye flour, spring”" in scenario.notes
    assert scenario.owner == history.owner and scenario.headline_risk is not None


def test_one_click_makes_a_reorder_plan_with_the_fitted_demand(client, history):
    client.force_login(history.owner)
    response = client.post(reverse("history_plan_create", args=[history.pk, "reorder_plan"]), RANGE)
    scenario = Scenario.objects.get()
    assert response.status_code == 302 and response["Location"] == scenario.get_absolute_url()
    assert scenario.kind == "reorder_plan"
    # The Poisson maximum-likelihood mean is the average count (any statistics text; numpy's mean here).
    assert scenario.params.demand.mean == pytest.approx(np.mean(history.series["out"]), rel=1e-12)
    assert "set your own with Edit" in scenario.notes and "turned away" not in scenario.notes
    assert client.get(scenario.get_absolute_url()).status_code == 200


def test_the_plans_stockout_risk_is_the_fit_pages(client, history):
    page = fit_page(client, history)
    shown = re.search(r'data-figure="stockout">.*?class="value">([^<]+)<', page, re.S)[1]
    client.post(reverse("history_plan_create", args=[history.pk, "stock_plan"]), RANGE)
    results = client.get(Scenario.objects.get().get_absolute_url()).content.decode()
    assert re.search(r'data-figure="stockout">.*?class="value">([^<]+)<', results, re.S)[1] == shown


def test_a_plan_that_cannot_be_made_writes_nothing_and_says_why(client, history, settings):
    settings.PLANNER_COMPUTE_CAP = 1000
    settings.PLANNER_BACKGROUND_CAP = 1_000  # too large for a background worker too (tests/planner/background)
    client.force_login(history.owner)
    response = client.post(reverse("history_plan_create", args=[history.pk, "stock_plan"]), RANGE, follow=True)
    assert not Scenario.objects.exists()
    assert "No plan was made." in response.content.decode()
    bad = client.post(reverse("history_plan_create", args=[history.pk, "stock_plan"]), {"start": "x"}, follow=True)
    assert "No plan was made: Enter a whole number." in bad.content.decode() and not Scenario.objects.exists()


# -- records the engine cannot fit ----------------------------------------------------------------


@pytest.fixture
def jumpy_history(owner):
    from planner.history.services import history_create
    from tests.planner.history.conftest import parse

    # Whole numbers the reader accepts (up to 10^9) but too wide for the engine's laws.
    data = b"date,level\n2025-03-03,0\n2025-03-04,1000000000\n2025-03-05,0\n"
    return history_create(owner=owner, title="Flour by the gram", parsed=parse(data))


def test_records_too_wide_to_fit_are_explained_not_a_server_error(client, jumpy_history):
    client.force_login(jumpy_history.owner)
    page = words(client.get(reverse("history_fit", args=[jumpy_history.pk]), RANGE).content.decode())
    assert "These records cannot be fitted: history must span at most 1,048,577 whole numbers" in page
    assert "Count in larger units" in page
    response = client.get(reverse("history_csv", args=[jumpy_history.pk, "laws"]))
    assert response.status_code == 400 and b"These records cannot be fitted" in response.content
    assert client.get(reverse("history_csv", args=[jumpy_history.pk, "history"])).status_code == 200
    made = client.post(reverse("history_plan_create", args=[jumpy_history.pk, "stock_plan"]), RANGE, follow=True)
    assert "No plan was made. These records cannot be fitted: history must span" in words(made.content.decode())
    assert not Scenario.objects.exists()


def test_a_history_of_nothing_moving_still_fits(client, owner):
    from planner.history.services import history_create
    from tests.planner.history.conftest import parse

    still = history_create(
        owner=owner, title="Closed for winter", parsed=parse(b"date,in,out\n2025-01-06,0,0\n2025-01-07,0,0\n")
    )
    client.force_login(owner)
    page = words(client.get(reverse("history_fit", args=[still.pk]), {"start": "5", "horizon": "7"}).content.decode())
    assert 'data-figure="stockout"' in page and "0 %" in page
