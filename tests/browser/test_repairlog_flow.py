"""From a repair log to a spares pool, in a real browser, on a desktop and on a phone.

Sign in, upload the co-operative's oven-igniter log (the demo file: 29 failures over two years) with the
units in service, spares and the record's start and end, see the fitted failure and repair rates with their
intervals and the availability with its credible range, and make a spares pool in one click; a bad log is
refused on the page naming its row and column, and nothing is saved. Selectors are ids, names and data
attributes; the few texts checked are the planner's own words.
"""

from pathlib import Path

import pytest
from django.conf import settings

from planner.models import SavedRepairLog, Scenario
from tests.browser.test_planner_flow import WIDTHS, no_sideways_scroll, sign_in

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]

DEMO_FILE = Path(settings.BASE_DIR) / "fixtures" / "demo_repairlog_oven_igniters.csv"


def fill_frame(page, *, units="6", spares="2", start="2024-01-01", end="2025-12-31"):
    page.select_option("select[name=time_unit]", "day")
    page.fill("input[name=units]", units)
    page.fill("input[name=spares]", spares)
    page.fill("input[name=record_start]", start)
    page.fill("input[name=record_end]", end)


@pytest.mark.parametrize("width", WIDTHS.values(), ids=WIDTHS.keys())
def test_engineer_uploads_a_repair_log_sees_the_fit_and_makes_a_spares_pool(page, live_server, owner, width):
    page.set_viewport_size({"width": width, "height": 900})
    sign_in(page, live_server, "olwen")
    page.click("#histories-link")
    page.click("#repairlog-new")
    page.set_input_files("input[name=file]", str(DEMO_FILE))
    fill_frame(page)
    page.fill("input[name=title]", "Oven igniters")
    page.click("#upload-form button[type=submit]")

    page.wait_for_selector("#rates")
    saved = SavedRepairLog.objects.get()
    assert saved.failures == 29 and saved.owner == owner
    assert "29 failures of a pool of 6 units in service and 2 spares" in page.inner_text("#log-summary")
    assert page.locator("#rates tbody tr").count() == 4  # two rates and their mean times
    assert " to " in page.inner_text("#availability-range")
    assert int(page.inner_text("#draws")) >= 50 and "seed 1" in page.inner_text("#draws-note")
    assert page.locator("#log-rows tbody tr").count() == 16  # 10 first, a gap row, 5 last
    assert no_sideways_scroll(page)

    page.fill("#mission-form input[name=mission]", "90")
    page.click("#mission-form button[type=submit]")
    page.wait_for_selector("#plan-from-fit button[data-kind=spares_pool]")
    page.click("#plan-from-fit button[data-kind=spares_pool]")
    page.wait_for_selector("#spares-caution")
    scenario = Scenario.objects.get()
    assert page.url == f"{live_server.url}/scenarios/{scenario.pk}/"
    assert scenario.kind == "spares_pool" and scenario.params.mission == 90.0
    assert (scenario.params.units, scenario.params.spares) == (6, 2)
    assert no_sideways_scroll(page)


def test_a_bad_log_is_refused_on_the_page(page, live_server, owner, tmp_path):
    bad = tmp_path / "igniters.csv"
    bad.write_text("unit,failed,returned\nigniter-01,2024-02-03,2024-02-01\n", encoding="utf-8")
    page.set_viewport_size({"width": 390, "height": 900})
    sign_in(page, live_server, "olwen")
    page.goto(f"{live_server.url}/repair-logs/new/")
    page.set_input_files("input[name=file]", str(bad))
    fill_frame(page)
    page.click("#upload-form button[type=submit]")
    page.wait_for_selector("#upload-errors")
    assert "Row 2, column returned: 2024-02-01 is before the failure (2024-02-03)" in page.inner_text(
        "[data-field=file] .field-error"
    )
    assert not SavedRepairLog.objects.exists()
    assert no_sideways_scroll(page)
