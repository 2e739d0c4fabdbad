"""A reliability engineer's task in a real browser, at 1366 and 390 px: state a spares pool, read the
recommendation and the charts, try a what-if, download a CSV. Selectors are ids, names and data
attributes; the few texts checked are the planner's own words."""

import csv
import io
from pathlib import Path

import pytest

from planner.models import Scenario
from tests.browser.test_pages_and_whatif import open_new_form, overflow, try_whatif, wait_for_charts

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]

WIDTHS = {"desktop": 1366, "phone": 390}


@pytest.mark.parametrize("width", WIDTHS.values(), ids=WIDTHS.keys())
def test_engineer_sizes_the_igniter_pool_and_downloads_its_table(page, live_server, owner, width):
    open_new_form(page, live_server, "spares_pool", width)
    page.fill("input[name=title]", "Oven igniters: winter")
    page.select_option("select[name=time_unit]", "hour")
    page.fill("input[name=units]", "6")
    page.fill("input[name=spares]", "1")
    page.fill("input[name=crews]", "1")
    page.check("input[name=standby][value=warm]")
    page.select_option("select[name=failure_style]", "mtbf")
    page.fill("input[name=failure]", "2000")
    page.fill("input[name=standby_failure]", "8000")
    page.select_option("select[name=repair_style]", "mean")
    page.fill("input[name=repair]", "48")
    page.fill("input[name=mission]", "720")
    page.fill("input[name=availability_target]", "99.9")
    page.fill("input[name=stockout_target]", "1 %")
    # the live preview shows the long-run law of units failed before the form is sent
    page.wait_for_selector("#scenario-form[data-preview-state=shown]", state="attached", timeout=60_000)
    assert "availability" in page.inner_text("#preview-summary")
    assert overflow(page)[0] <= overflow(page)[1]
    page.click("#scenario-form button[type=submit].primary")
    scenario = Scenario.objects.get()
    page.wait_for_url(f"{live_server.url}/scenarios/{scenario.pk}/")
    assert scenario.params.warm_failure_rate == 1 / 8000

    # the caution, the one-sentence recommendation and the charts, in the planner's words
    assert page.is_visible("#spares-caution")
    advice = page.inner_text("#recommendation")
    assert advice.startswith("Recommendation. Keep 3 spares (2 more than planned) with 1 repair crew")
    wait_for_charts(page)
    assert page.locator("#fig-availability .main-svg").count() >= 1
    assert "spares" in page.get_attribute("#fig-availability", "aria-label")
    assert overflow(page)[0] <= overflow(page)[1], "the results page scrolls sideways"

    # what-if: three spares; the headline follows and says it is a what-if
    try_whatif(page, "spares", "3")
    assert "spares 1 → 3" in page.inner_text("#whatif-changes")
    assert "meet both targets" in page.inner_text("#recommendation")

    # the what-if's CSV names itself as one and records the changed input
    with page.expect_download() as info:
        page.click("a.csv-link[data-table=by-spares] >> nth=0")
    download = info.value
    assert download.suggested_filename == "oven-igniters-winter-whatif-by-spares.csv"
    rows = list(csv.reader(io.StringIO(Path(download.path()).read_text(encoding="utf-8"))))
    assert rows[0][1] == "spares" and rows[1][-2:] == ["what-if", "spares 1 → 3"]
    assert overflow(page)[0] <= overflow(page)[1]
