"""A maintenance planner's task in a real browser, at 1366 and 390 px: type a rate table for the dough
mixers, read the availability and the recommendation, try faster repairs, download a CSV. Selectors are
ids, names and data attributes; the few texts checked are the planner's own words."""

import csv
import io
from pathlib import Path

import pytest

from planner.models import Scenario
from tests.browser.test_pages_and_whatif import overflow, sign_in, wait_for_charts

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]

WIDTHS = {"desktop": 1366, "phone": 390}
MIXERS = "0: 0.006, 0\n1: 0.006, 0.08\n2: 0.006, 0.05\n3: 0.004, 0.04\n4: 0, 0.04"


def value_changes(page, selector: str, before: str) -> None:
    page.wait_for_function(
        "([selector, before]) => document.querySelector(selector).textContent.trim() !== before",
        arg=[selector, before],
    )


@pytest.mark.parametrize("width", WIDTHS.values(), ids=WIDTHS.keys())
def test_planner_tables_the_mixers_and_asks_for_faster_repairs(page, live_server, owner, width):
    page.set_viewport_size({"width": width, "height": 900})
    sign_in(page, live_server)
    page.goto(f"{live_server.url}/scenarios/new/")
    page.click("main a[href='/scenarios/new/rate_table/']")
    page.wait_for_selector("#scenario-form")
    page.fill("input[name=title]", "Dough mixers: a week")
    page.select_option("select[name=time_unit]", "hour")
    page.fill("textarea[name=rates]", MIXERS)
    page.fill("input[name=shortage_at]", "2")
    page.fill("input[name=mission]", "168")
    page.fill("input[name=start_failed]", "0")
    page.fill("input[name=availability_target]", "99.5")
    page.fill("input[name=stockout_target]", "5 %")
    # the live preview shows the long-run law of units failed before the form is sent
    page.wait_for_selector("#scenario-form[data-preview-state=shown]", state="attached", timeout=60_000)
    assert "availability 99 %" in page.inner_text("#preview-summary")
    assert overflow(page)[0] <= overflow(page)[1], "the form scrolls sideways"
    page.click("#scenario-form button[type=submit].primary")
    page.wait_for_url(f"{live_server.url}/scenarios/{Scenario.objects.get().pk}/")
    assert Scenario.objects.get().params.repair_rates == (0.0, 0.08, 0.05, 0.04, 0.04)

    # the caution, the availability and the one-sentence recommendation, in the planner's words
    assert page.is_visible("#pool-caution")
    assert page.inner_text("[data-figure=availability] .value").strip() == "99 %"
    advice = page.inner_text("#recommendation")
    assert advice.startswith("Recommendation. As tabled the pool is available 99 % of the time")
    assert "repairs 1.5 times as fast at every number failed would meet both targets" in advice
    wait_for_charts(page)
    assert page.locator("#fig-repair_speed .main-svg").count() >= 1
    assert "1.5 times as fast as tabled" in page.get_attribute("#fig-repair_speed", "aria-label")
    assert overflow(page)[0] <= overflow(page)[1], "the results page scrolls sideways"

    # what-if: repairs twice as fast; the headline follows and says it is a what-if
    before = page.inner_text("[data-figure=mission-risk] .value").strip()
    page.fill("#whatif-form input[name=repair_speed]", "2")
    value_changes(page, "[data-figure=mission-risk] .value", before)
    page.wait_for_selector("#whatif-form[data-state=done]")
    assert "repair rates × 2" in page.inner_text("#whatif-changes")
    assert page.inner_text("#recommendation").startswith("Recommendation. The pool as tabled meets both targets")

    # the what-if's CSV names itself as one and records the changed input
    with page.expect_download() as info:
        page.click("a.csv-link[data-table=by-failed] >> nth=0")
    download = info.value
    assert download.suggested_filename == "dough-mixers-a-week-whatif-by-failed.csv"
    rows = list(csv.reader(io.StringIO(Path(download.path()).read_text(encoding="utf-8"))))
    assert rows[0][1] == "units failed" and [float(row[3]) for row in rows[1:]] == [0.0, 0.16, 0.1, 0.08, 0.08]
    assert rows[1][-2:] == ["what-if", "repair rates × 2"]
    assert overflow(page)[0] <= overflow(page)[1]
