"""From a history file to a plan, in a real browser, on a desktop and on a phone.

Sign in, upload two years of daily rye flour in and out (the demo file, 731 rows), check the preview and
save it, fit it, give the start stock, capacity and horizon, read the risk with its credible range, and
make a stock plan from the fit in one click; a bad file is refused on the page with its row and column.
Selectors are ids, names and data attributes; the few texts checked are the planner's own words.
"""

from pathlib import Path

import pytest
from django.conf import settings

from planner.models import SavedHistory, Scenario
from tests.browser.test_planner_flow import WIDTHS, no_sideways_scroll, sign_in

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]

DEMO_FILE = Path(settings.BASE_DIR) / "fixtures" / "demo_history_rye_flour.csv"


@pytest.mark.parametrize("width", WIDTHS.values(), ids=WIDTHS.keys())
def test_analyst_uploads_a_history_fits_it_and_makes_a_plan(page, live_server, owner, width):
    page.set_viewport_size({"width": width, "height": 900})
    sign_in(page, live_server, "olwen")
    page.click("#histories-link")
    page.click("text=Upload a history")
    page.set_input_files("input[name=file]", str(DEMO_FILE))
    page.select_option("select[name=period]", "day")
    page.fill("input[name=title]", "Rye flour, two years")
    page.click("#upload-form button[type=submit]")

    # The preview: rows as read and a chart of them; nothing saved yet.
    page.wait_for_selector("#fig-series .main-svg")
    assert "731 rows of units in and out" in page.inner_text("#preview-summary")
    assert page.locator("#history-rows tbody tr").count() == 16  # 10 first, a gap row, 5 last
    assert no_sideways_scroll(page)
    assert not SavedHistory.objects.exists()
    page.click("#save-history")
    page.wait_for_selector("#fit-link")
    history = SavedHistory.objects.get()
    assert history.rows == 731 and history.owner == owner

    # The fit: the recommended laws and why, then the risk with its credible range.
    page.click("#fit-link")
    page.wait_for_selector("#recommendation")
    assert page.inner_text("[data-choice=demand]") == "negative binomial"
    page.fill("#range-form input[name=start]", "200")
    page.fill("#range-form input[name=high]", "400")
    page.fill("#range-form input[name=horizon]", "28")
    page.click("#range-form button[type=submit]")
    page.wait_for_selector("#fig-risk .main-svg")
    assert " to " in page.inner_text("#stockout-range")
    draws = int(page.inner_text("#draws"))
    assert draws >= 20 and "seed 1" in page.inner_text("#draws-note")
    assert "budget affords" in page.inner_text("#draws-note")
    assert page.locator("#fig-freq-demand .main-svg").count() >= 1
    assert page.locator("#fig-weekdays .main-svg").count() >= 1
    assert no_sideways_scroll(page)
    risk = page.inner_text("[data-figure=stockout] .value").strip()

    # One click: a stock plan with the fitted laws, and its results page shows the same risk.
    page.click("#plan-from-fit button[data-kind=stock_plan]")
    page.wait_for_selector("[data-figure=stockout] .value")
    scenario = Scenario.objects.get()
    assert page.url == f"{live_server.url}/scenarios/{scenario.pk}/"
    assert page.inner_text("[data-figure=stockout] .value").strip() == risk
    assert scenario.params.start == 200 and scenario.params.high == 400 and scenario.params.horizon == 28
    # the new plan's cross-check panel: exact beside the normal approximation and the simulation
    page.wait_for_selector("#cross-check[data-state=done] #cross-check-table tbody tr", timeout=60_000)
    assert no_sideways_scroll(page)


def test_a_bad_file_is_refused_on_the_page(page, live_server, owner, tmp_path):
    bad = tmp_path / "flour.csv"
    bad.write_text("date,in,out\n2025-03-03,30,29\n2025-03-04,thirty,28\n", encoding="utf-8")
    page.set_viewport_size({"width": 390, "height": 900})
    sign_in(page, live_server, "olwen")
    page.goto(f"{live_server.url}/histories/new/")
    page.set_input_files("input[name=file]", str(bad))
    page.click("#upload-form button[type=submit]")
    page.wait_for_selector("[data-field=file] .field-error")
    assert page.inner_text("[data-field=file] .field-error") == "Row 3, column in: 'thirty' is not a whole number"
    assert no_sideways_scroll(page)
    assert not SavedHistory.objects.exists()


def test_a_file_over_the_limit_is_stopped_before_it_is_sent(page, live_server, owner):
    sign_in(page, live_server, "olwen")
    page.goto(f"{live_server.url}/histories/new/")
    line = b"2025-03-03,30,29\n"
    big = b"date,in,out\n" + line * (3 * 2**20 // len(line))
    page.set_input_files("input[name=file]", {"name": "flour.csv", "mimeType": "text/csv", "buffer": big})
    sent = []
    page.on("request", lambda request: sent.append(request) if request.method == "POST" else None)
    page.click("#upload-form button[type=submit]")
    page.wait_for_selector("#upload-size-error:not([hidden])")
    assert page.inner_text("#upload-size-error").startswith("The file flour.csv is 3.0 MB; a history file may be at")
    assert not sent and not SavedHistory.objects.exists()
