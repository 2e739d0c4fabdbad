"""The reorder plan in a real browser, on a desktop and on a phone: state a slow, lumpy spare part, read the
recommendation and the exact-against-normal chart, try a what-if, download a CSV.

Selectors are ids, names and data attributes; the few texts checked are the planner's own words.
"""

import csv
import io
from pathlib import Path

import pytest

from planner.models import Scenario
from tests.browser.test_planner_flow import WIDTHS, no_sideways_scroll, sign_in

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]


def wait_for_charts(page):
    # A generous bound (not a speed check): plotly.js parses cold on a machine other jobs may be loading.
    page.wait_for_function(
        "() => Object.keys(JSON.parse(document.getElementById('figures').textContent))"
        ".every(name => document.querySelector('#fig-' + name + ' .main-svg'))",
        timeout=60_000,
    )


@pytest.mark.parametrize("width", WIDTHS.values(), ids=WIDTHS.keys())
def test_analyst_sets_a_reorder_point_for_oven_igniters(page, live_server, owner, width):
    page.set_viewport_size({"width": width, "height": 900})
    sign_in(page, live_server, "olwen")
    page.goto(f"{live_server.url}/scenarios/new/")
    page.click("main a[href='/scenarios/new/reorder_plan/']")
    # The form's script has run (it marks the preview's state) before inputs are shown or hidden.
    page.wait_for_selector("#scenario-form[data-preview-state]", state="attached", timeout=60_000)
    page.fill("input[name=title]", "Oven igniters")
    page.fill("input[name=unit]", "igniters")
    page.select_option("select[name=demand_family]", "negative_binomial")
    page.fill("input[name=demand_mean]", "0.3")
    page.fill("input[name=demand_variance]", "1.5")
    page.check("input[name=lead_time_method][value=fixed]")
    assert page.is_hidden("input[name=lead_time_table]")  # the table shows only when lead times vary
    page.fill("input[name=lead_time]", "4")
    page.check("input[name=measure][value=cycle]")
    page.fill("input[name=service_target]", "99 %")
    page.fill("input[name=order_quantity]", "10")
    # The live preview shows the demand over the lead time before the form is sent.
    page.wait_for_selector("#scenario-form[data-preview-state=shown]", timeout=60_000)
    assert "Demand over the lead time" in page.inner_text("#preview-summary")
    assert no_sideways_scroll(page)
    page.click("#scenario-form button[type=submit].primary")
    scenario = Scenario.objects.get()
    page.wait_for_url(f"{live_server.url}/scenarios/{scenario.pk}/")

    # The recommendation, in the trade's words, and the gap to the normal rule.
    recommendation = page.inner_text("#recommendation")
    assert "Reorder when the stock on hand plus on order falls to 12 igniters" in recommendation
    assert "normal rule would reorder at 7 igniters" in recommendation
    assert "−5 igniters" in page.inner_text("[data-figure=gap] .value")
    # The exact-against-normal chart, with both reorder points marked.
    wait_for_charts(page)
    traces = page.evaluate("document.getElementById('fig-service').data.map(trace => trace.name)")
    assert "exact reorder point: 12 igniters" in traces and "normal rule's reorder point: 7 igniters" in traces
    assert "12 igniters" in page.get_attribute("#fig-service", "aria-label")
    assert no_sideways_scroll(page)

    # A CSV of the service by reorder point.
    with page.expect_download() as info:
        page.click("a.csv-link[data-table=service-by-reorder-point] >> nth=0")
    download = info.value
    assert download.suggested_filename == "oven-igniters-service-by-reorder-point.csv"
    rows = list(csv.reader(io.StringIO(Path(download.path()).read_text(encoding="utf-8"))))
    assert rows[0][1] == "reorder point [igniters]"
    by_point = {int(row[1]): float(row[3]) for row in rows[1:]}
    assert by_point[12] >= 0.99 > by_point[11]

    # What-if: a longer lead time moves the reorder point; the page says what changed.
    before = page.inner_text("[data-figure=reorder-point] .value").strip()
    page.fill("#whatif-form input[name=lead_time]", "8")
    page.wait_for_function(
        "before => document.querySelector('[data-figure=reorder-point] .value').textContent.trim() !== before",
        arg=before,
    )
    page.wait_for_selector("#whatif-form[data-state=done]")
    assert "lead time 4 days → 8 days" in page.inner_text("#whatif-changes")
    assert no_sideways_scroll(page)


def test_analyst_plans_bread_crates_whose_sales_are_lost(page, live_server, owner):
    # A harbour-shop shelf of bread crates: a customer who finds it empty buys elsewhere (lost sales).
    page.set_viewport_size({"width": WIDTHS["desktop"], "height": 900})
    sign_in(page, live_server, "olwen")
    page.goto(f"{live_server.url}/scenarios/new/reorder_plan/")
    page.wait_for_selector("#scenario-form[data-preview-state]", state="attached", timeout=60_000)
    page.fill("input[name=title]", "Harbour shop crates")
    page.fill("input[name=unit]", "crates")
    page.select_option("select[name=demand_family]", "poisson")
    page.fill("input[name=demand_mean]", "1.5")
    page.check("input[name=lead_time_method][value=fixed]")
    page.fill("input[name=lead_time]", "2")
    page.check("input[name=measure][value=cycle]")
    page.fill("input[name=service_target]", "95 %")
    page.check("input[name=unmet][value=lost]")
    page.click("#scenario-form button[type=submit].primary")
    scenario = Scenario.objects.get()
    page.wait_for_url(f"{live_server.url}/scenarios/{scenario.pk}/")
    assert scenario.parameters["unmet"] == "lost"

    recommendation = page.inner_text("#recommendation")
    assert "With sales lost when the shelf is empty, each day, order the stock back up to" in recommendation
    assert "unmet demand is lost" in page.inner_text("#plan-summary")
    wait_for_charts(page)
    axis = page.evaluate("document.getElementById('fig-stock').layout.xaxis.title.text")
    assert axis.startswith("stock on hand (crates")
    assert no_sideways_scroll(page)

    # What-if: customers wait instead; the page says what changed.
    page.select_option("#whatif-form select[name=unmet]", "backorder")
    page.wait_for_selector("#whatif-form[data-state=done]")
    page.wait_for_function(
        "() => (document.getElementById('whatif-changes') || {}).textContent?.includes('customers wait')"
    )
    assert "when the shelf is empty: the sale is lost → customers wait" in page.inner_text("#whatif-changes")
