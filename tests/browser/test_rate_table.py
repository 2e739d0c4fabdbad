"""A maintenance planner's task in a real browser, at 1366 and 390 px: type a rate table for the dough
mixers, read the availability and the recommendation, try faster repairs, download a CSV. Selectors are
ids, names and data attributes; the few texts checked are the planner's own words."""

import csv
import io
from pathlib import Path

import pytest

from planner.models import Scenario
from tests.browser.test_pages_and_whatif import open_new_form, overflow, try_whatif, wait_for_charts

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]

WIDTHS = {"desktop": 1366, "phone": 390}
FORM = {
    "title": "Dough mixers: a week",
    "rates": "0: 0.006, 0\n1: 0.006, 0.08\n2: 0.006, 0.05\n3: 0.004, 0.04\n4: 0, 0.04",
    "shortage_at": "2",
    "mission": "168",
    "start_failed": "0",
    "availability_target": "99.5",
    "stockout_target": "5 %",
}


@pytest.mark.parametrize("width", WIDTHS.values(), ids=WIDTHS.keys())
def test_planner_tables_the_mixers_and_asks_for_faster_repairs(page, live_server, owner, width):
    open_new_form(page, live_server, "rate_table", width)
    page.select_option("select[name=time_unit]", "hour")
    for name, value in FORM.items():
        page.fill(f"#scenario-form [name={name}]", value)
    # the live preview shows the long-run law of units failed before the form is sent
    page.wait_for_selector("#scenario-form[data-preview-state=shown]", state="attached", timeout=60_000)
    assert "availability 99 %" in page.inner_text("#preview-summary")
    assert overflow(page)[0] <= overflow(page)[1], "the form scrolls sideways"
    page.click("#scenario-form button[type=submit].primary")
    page.wait_for_url(f"{live_server.url}/scenarios/{Scenario.objects.get().pk}/")
    assert Scenario.objects.get().params.repair_rates == (0.0, 0.08, 0.05, 0.04, 0.04)

    # every chart drawn, the page within the screen's width; the figure by repair speed says what would do
    wait_for_charts(page)
    assert overflow(page)[0] <= overflow(page)[1], "the results page scrolls sideways"
    assert "1.5 times as fast as tabled" in page.get_attribute("#fig-repair_speed", "aria-label")
    # the availability, the one-sentence recommendation and the caution, in the planner's words
    assert page.inner_text("[data-figure=availability] .value").strip() == "99 %"
    advice = page.inner_text("#recommendation")
    assert advice.startswith("Recommendation. As tabled the pool is available 99 % of the time")
    assert "repairs 1.5 times as fast at every number failed would meet both targets" in advice
    assert page.is_visible("#pool-caution")

    # what-if: repairs twice as fast; the headline follows and says it is a what-if
    try_whatif(page, "repair_speed", "2")
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
