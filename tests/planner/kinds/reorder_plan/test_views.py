"""The reorder plan through the shared views: create, read the answer, try a what-if, download, preview, refuse."""

import csv
import io
import re

import pytest
from django.urls import reverse
from scipy import stats

from planner.models import Scenario
from tests.planner.kinds.reorder_plan.test_charts import METHOD_WORDS
from tests.planner.kinds.reorder_plan.test_forms import GOOD, NEW

pytestmark = pytest.mark.django_db


@pytest.fixture
def igniters(client, owner):
    client.force_login(owner)
    response = client.post(NEW, GOOD)
    scenario = Scenario.objects.get()
    assert response.status_code == 302 and response["Location"] == scenario.get_absolute_url()
    return scenario


def test_saved_plan_stores_its_headline_for_the_list(client, igniters):
    # Stock-out chance in an order cycle at the exact reorder point: P(D > 12), D negative binomial over
    # 4 days (n = 0.3, p = 0.2; scipy.stats.nbinom), against the target's 1 %.
    assert igniters.kind == "reorder_plan"
    assert igniters.headline_risk == pytest.approx(stats.nbinom.sf(12, 0.3, 0.2), rel=1e-10)
    assert igniters.stockout_target == pytest.approx(0.01) and igniters.meets_target
    listing = client.get(reverse("scenario_list")).content.decode()
    assert "Oven igniters" in listing and "over an order cycle" in listing and "Reorder plan" in listing


def test_results_page_recommends_in_the_trade_s_words(client, igniters):
    page = client.get(igniters.get_absolute_url()).content.decode()
    assert "Reorder when the stock on hand plus on order falls to 12 igniters or fewer" in page
    assert "the usual normal rule would reorder at 7 igniters and reach only 96.8 %" in page
    for name in ("service", "leadtime", "orderupto", "stock"):
        assert f'id="fig-{name}"' in page
    for table in ("service-by-reorder-point", "lead-time-demand", "order-up-to", "long-run-stock"):
        assert reverse("scenario_csv", kwargs={"pk": igniters.pk, "table": table}) in page
    assert "Decision support only" in page and "licensed professionals" in page  # the cautions
    assert 'data-figure="gap"' in page and "−5 igniters" in page


def test_whatif_answers_with_new_figures_and_says_what_changed(client, igniters):
    url = reverse("scenario_outlook_json", kwargs={"pk": igniters.pk})
    reply = client.get(url, {"lead_time": "6", "order_quantity": "10", "title": "ignored"})
    assert reply.status_code == 200
    data = reply.json()
    assert data["changes"] == ["lead time 4 days → 6 days"]
    assert set(data["figures"]) == {"service", "leadtime", "orderupto", "stock"}
    assert "What-if: lead time 4 days → 6 days" in data["headline_html"]
    assert "Recommendation." in data["headline_html"]
    bad = client.get(url, {"lead_time": "-1"})
    assert bad.status_code == 400 and "lead_time" in bad.json()["fields"]
    zero = client.get(url, {"lead_time": "0"})
    assert zero.status_code == 400 and "lead time must be at least 1 period" in zero.json()["error"]


def test_csv_download_of_a_whatif(client, igniters):
    url = reverse("scenario_csv", kwargs={"pk": igniters.pk, "table": "service-by-reorder-point"})
    response = client.get(url, {"review_period": "7"})
    assert response.status_code == 200
    assert response["Content-Disposition"] == 'attachment; filename="oven-igniters-whatif-service-by-reorder-point.csv"'
    rows = list(csv.reader(io.StringIO(response.content.decode(), newline="")))
    assert (
        rows[0][1] == "reorder point [igniters]" and rows[1][-1] == "review period watched all the time → every 7 days"
    )


def test_preview_shows_demand_over_the_lead_time(client, owner):
    client.force_login(owner)
    url = reverse("kind_preview", kwargs={"kind": "reorder_plan"})
    fields = {"demand_family": "poisson", "demand_mean": "4", "lead_time_method": "fixed", "lead_time": "1"}
    reply = client.get(url, fields).json()
    assert reply["ready"] and reply["steps"][:3] == [0, 1, 2]
    assert reply["probs"][4] == pytest.approx(stats.poisson.pmf(4, 4.0), rel=1e-12)
    assert reply["x_title"] == "demand over the lead time (units)" and "mean 4 units" in reply["summary"]
    assert client.get(url, fields | {"demand_mean": ""}).json() == {
        "ready": False,
        "message": "Fill in the inputs to see the preview here.",
    }
    bad = client.get(url, fields | {"lead_time": "0"})
    assert bad.status_code == 400 and "lead time must be at least 1 period" in bad.json()["errors"]["lead_time"][0]


def test_a_plan_too_large_for_the_server_is_refused_politely(client, igniters, settings):
    settings.PLANNER_COMPUTE_CAP = 10_000
    settings.PLANNER_BACKGROUND_CAP = 10_000  # too large for a background worker too (tests/planner/background)
    page = client.get(igniters.get_absolute_url()).content.decode()
    assert "These results cannot be worked out as set." in page
    assert "too large to work out in one request" in page and "shorten the lead time" in page
    response = client.post(
        reverse("scenario_edit", kwargs={"pk": igniters.pk}),
        GOOD | {"lead_time": "9", "version": str(igniters.version)},
    )
    assert response.status_code == 200 and "Nothing was saved." in response.content.decode()
    assert Scenario.objects.get().params.lead_time == 4


def test_optional_figures_left_out_say_so(client, igniters, settings):
    # Room for the reorder point and the review policy, not for the cheapest-policy search.
    settings.PLANNER_COMPUTE_CAP = 200_000_000
    page = client.get(igniters.get_absolute_url()).content.decode()
    assert "Not shown: the cheapest policy on your costs (too large a search for one request)" in page
    assert 'data-figure="order-up-to"' in page and 'data-figure="cheapest"' not in page


def test_pages_speak_the_trade_s_words(client, igniters):
    # What a reader sees (tags, attributes and the chart data left aside): no method words.
    for url in (igniters.get_absolute_url(), reverse("scenario_edit", kwargs={"pk": igniters.pk}), NEW):
        html = client.get(url).content.decode()
        html = re.sub(r"<script.*?</script>", " ", html, flags=re.DOTALL)
        text = re.sub(r"<[^>]+>", " ", html)
        assert "Reorder" in text or "reorder" in text
        assert not METHOD_WORDS.search(text), METHOD_WORDS.search(text)


def test_counted_stock_says_how_holding_is_charged(client, owner):
    client.force_login(owner)
    client.post(NEW, GOOD | {"review_period": "2", "lead_time": "4"})
    page = client.get(Scenario.objects.get().get_absolute_url()).content.decode()
    assert "holding charged on the stock left at each count" in page
    assert "At each count (every 2 days)" in page
