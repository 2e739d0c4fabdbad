"""The rate-table pool's pages: results with the cautions and recommendation, what-if JSON, every CSV table."""

import re

import pytest
from django.urls import reverse

from planner.kinds import get_kind
from planner.kinds.rate_table.whatif import apply_changes, describe_changes
from planner.services import scenario_create
from tests.conftest import rate_table_example
from tests.planner.page_text import download, results_page

pytestmark = pytest.mark.django_db

CHARTS = {"mission", "long_run", "failed", "repair_speed", "start"}


@pytest.fixture
def pool(owner):
    return scenario_create(owner=owner, kind="rate_table", title="Proofing-cabinet fans", params=rate_table_example())


def test_results_show_the_recommendation_figures_charts_and_the_safety_caution(client, pool):
    page, text = results_page(client, pool, CHARTS)
    figures = re.findall(r'data-figure="([a-z-]+)"', page)
    assert figures[:3] == ["availability", "mission-risk", "repair-speed"] and len(figures) == 7
    assert "Recommendation. As tabled the pool is available" in text
    # the cautions: the assumptions in the trade's words, and the deferral to standards and licensed practice
    caution = text[text.index("Decision support only.") :]
    assert 'id="pool-caution"' in page and "planner/_cautions.html" not in page
    for words in ("exponential", "as good as new", "depends only on how many are failed", "licensed professionals"):
        assert words in caution, words


def test_whatif_json_follows_the_changes_in_the_planners_words(client, pool):
    client.force_login(pool.owner)
    url = reverse("scenario_outlook_json", args=[pool.pk])
    base = client.get(url).json()
    query = {"repair_speed": "1.5", "failure_factor": "1", "mission": "100", "start_failed": "1", "title": "ignored"}
    body = client.get(url, query).json()
    assert set(body["figures"]) == set(body["summaries"]) == CHARTS
    assert body["params"]["repair_rates"] == [0.0, 0.05 * 1.5, 0.05 * 1.5, 0.04 * 1.5]
    assert body["changes"] == ["repair rates × 1.5", "mission 200 hours → 100 hours", "units failed at the start 0 → 1"]
    assert body["figures"]["mission"]["data"][0]["y"] != base["figures"]["mission"]["data"][0]["y"]
    assert "What-if: repair rates × 1.5" in body["headline_html"]
    for bad, words in [
        ({"repair_speed": "0"}, "repair speed must be a finite number above 0"),
        ({"shortage_at": "9"}, "shortage level must be a whole number from 1 to 3"),
        ({"start_failed": "2"}, "units failed at the start must be a whole number from 0 to 1"),
    ]:
        refused = client.get(url, bad)
        assert refused.status_code == 400 and words in refused.json()["error"]


def test_every_table_downloads_as_csv_and_a_whatif_names_itself(client, pool):
    for table in get_kind("rate_table").tables:
        response, rows = download(client, pool, table)
        assert response["Content-Disposition"] == f'attachment; filename="proofing-cabinet-fans-{table}.csv"'
        assert rows[0][0] == "scenario" and len(rows) > 1 and rows[1][0] == "Proofing-cabinet fans"
        assert rows[1][-2:] == ["saved plan", ""]
    response, rows = download(client, pool, "by-failed", {"failure_factor": "2"})
    assert response["Content-Disposition"] == 'attachment; filename="proofing-cabinet-fans-whatif-by-failed.csv"'
    assert [float(row[2]) for row in rows[1:]] == [0.006, 0.004, 0.002, 0.0] and rows[1][-1] == "failure rates × 2"
    assert sum(float(row[5]) for row in rows[1:]) == pytest.approx(1.0, abs=1e-15)


def test_whatif_changes_are_described_in_the_pools_own_terms():
    params = rate_table_example()
    variant = apply_changes(params, {"failure_factor": 0.5, "shortage_at": 3, "colour": "red"})
    assert describe_changes(params, variant) == ["failure rates × 0.5", "short at 2 or more failed → 3 or more failed"]
    edited = params.replace(repair_rates=(0.0, 0.05, 0.06, 0.04))
    assert describe_changes(params, edited) == ["repair rates changed"]
    assert describe_changes(params, apply_changes(params, {"repair_speed": 1.0})) == []
    with pytest.raises(ValueError, match="failure rate factor must be a finite number above 0"):
        apply_changes(params, {"failure_factor": -1.0})


def test_a_pool_too_large_for_one_request_is_not_saved(client, owner):
    client.force_login(owner)
    rows = "\n".join([f"{k}: {1e6 if k < 1000 else 0}, {0 if k == 0 else 1e6}" for k in range(1001)])
    data = {"title": "Everything at once", "rates": rows, "shortage_at": "900", "mission": "10000000"}
    data |= {"availability_target": "99", "stockout_target": "1", "time_unit": "hour"}
    response = client.post(reverse("scenario_new_kind", kwargs={"kind": "rate_table"}), data)
    assert response.status_code == 200
    assert "Nothing was saved. This pool is too large to work out in one request" in response.content.decode()
