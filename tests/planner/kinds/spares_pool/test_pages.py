"""The spares pool's pages: results with the cautions and recommendation, what-if JSON, every CSV table."""

import csv
import io

import pytest
from django.urls import reverse

from planner.kinds import get_kind
from planner.kinds.spares_pool.whatif import apply_changes, describe_changes
from planner.services import scenario_create
from tests.conftest import spares_example
from tests.planner.page_text import results_page

pytestmark = pytest.mark.django_db

CHARTS = {"availability", "mission", "spares_risk", "failed", "crews", "start"}


@pytest.fixture
def pool(owner):
    return scenario_create(owner=owner, kind="spares_pool", title="Oven igniters", params=spares_example())


def test_results_show_the_recommendation_figures_charts_and_the_safety_caution(client, pool):
    page, text = results_page(client, pool, CHARTS)
    assert 'id="spares-caution"' in page and "planner/_cautions.html" not in page
    assert "independently" in text and "exponential" in text and "as good as new" in text
    assert "licensed professionals" in text and "applicable standards" in text
    # the small example: 3 needed, 1 cold spare, MTBF 400 h, 24 h repairs, one crew, 200 h mission
    assert "Recommendation. Keep 3 spares (2 more than planned) with 1 repair crew" in text
    for figure in ("availability", "mission-risk", "smallest-spares", "smallest-crews", "first-shortage"):
        assert f'data-figure="{figure}"' in page


def test_whatif_json_follows_the_changes_in_the_planners_words(client, pool):
    client.force_login(pool.owner)
    url = reverse("scenario_outlook_json", args=[pool.pk])
    base = client.get(url).json()
    body = client.get(url, {"spares": "3", "crews": "2", "mission": "100", "title": "ignored"}).json()
    assert set(body["figures"]) == set(body["summaries"]) == CHARTS
    assert body["params"]["spares"] == 3 and body["params"]["crews"] == 2
    assert body["changes"] == ["spares 1 → 3", "repair crews 1 → 2", "mission 200 hours → 100 hours"]
    assert body["figures"]["mission"]["data"][0]["y"] != base["figures"]["mission"]["data"][0]["y"]
    assert "The 3 spares and 2 repair crews planned meet both targets" in body["headline_html"]
    bad = client.get(url, {"failure": "0"})
    assert bad.status_code == 400 and "MTBF must be a number from 1e-09" in bad.json()["error"]


@pytest.mark.parametrize("table", list(get_kind("spares_pool").tables))
def test_every_table_downloads_as_csv(client, pool, table):
    client.force_login(pool.owner)
    response = client.get(reverse("scenario_csv", args=[pool.pk, table]))
    assert response.status_code == 200 and response["Content-Type"] == "text/csv; charset=utf-8"
    assert response["Content-Disposition"] == f'attachment; filename="oven-igniters-{table}.csv"'
    rows = list(csv.reader(io.StringIO(response.content.decode())))
    assert rows[0][0] == "scenario" and len(rows) > 1 and rows[1][0] == "Oven igniters"
    assert rows[1][-2:] == ["saved plan", ""]


def test_the_failed_unit_table_holds_a_law_at_every_time(client, pool):
    client.force_login(pool.owner)
    response = client.get(reverse("scenario_csv", args=[pool.pk, "failed-by-time"]), {"spares": "2"})
    assert response["Content-Disposition"] == 'attachment; filename="oven-igniters-whatif-failed-by-time.csv"'
    rows = list(csv.reader(io.StringIO(response.content.decode())))[1:]
    by_time = {}
    for row in rows:
        by_time.setdefault(row[1], []).append(float(row[3]))
    assert len(by_time) == 41 and all(len(law) == 6 for law in by_time.values())  # 0..5 failed: 3 + 2 spares
    assert all(sum(law) == pytest.approx(1.0, abs=1e-13) for law in by_time.values())
    assert rows[0][-1] == "spares 1 → 2"


def test_whatif_changes_are_described_in_the_pools_own_terms(small_spares_params):
    params = small_spares_params.replace(failure_style="rate", failure=0.0025, time_unit="day")
    variant = apply_changes(params, {"failure": 0.005, "repair": 12.0, "units": 4, "colour": "red"})
    assert describe_changes(params, variant) == [
        "units needed 3 → 4",
        "failure rate 0.0025 per day → 0.005 per day",
        "mean repair time 24 days → 12 days",
    ]
    with pytest.raises(ValueError, match="mean repair time must be a number"):
        apply_changes(params, {"repair": -1.0})
