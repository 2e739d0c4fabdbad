"""The analyst's task in a real browser, in the trade's words, on a desktop and on a phone.

Sign in, state a flour-silo plan the common way (daily demand, a weekly delivery, start stock,
capacity, lost sales), read the answers, try a what-if, download the what-if's CSV, save it as a
new plan with a name. Selectors are ids, names and data attributes; the few texts checked are the
planner's own words.
"""

import csv
import io
from pathlib import Path

import pytest

from planner.models import Scenario
from tests.conftest import PASSWORD

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]

WIDTHS = {"desktop": 1366, "phone": 390}


def sign_in(page, live_server, username):
    page.goto(f"{live_server.url}/accounts/login/")
    page.fill("input[name=username]", username)
    page.fill("input[name=password]", PASSWORD)
    page.click("button[type=submit]")
    page.wait_for_url(f"{live_server.url}/")


def no_sideways_scroll(page) -> bool:
    return page.evaluate("document.documentElement.scrollWidth <= window.innerWidth")


@pytest.mark.parametrize("width", WIDTHS.values(), ids=WIDTHS.keys())
def test_analyst_plans_a_silo_reads_the_answers_tries_a_whatif_and_saves_it(page, live_server, owner, width):
    page.set_viewport_size({"width": width, "height": 900})
    sign_in(page, live_server, "olwen")
    page.goto(f"{live_server.url}/scenarios/new/stock_plan/")
    page.fill("input[name=title]", "Flour silo: winter")
    page.select_option("select[name=period]", "day")
    page.fill("input[name=start]", "20")
    page.fill("input[name=high]", "40")
    page.fill("input[name=horizon]", "56")
    page.select_option("select[name=below]", "lost")
    page.check("input[name=step_method][value=net]")
    page.select_option("select[name=demand_family]", "poisson")
    page.fill("input[name=demand_mean]", "3")
    page.select_option("select[name=arrivals_family]", "none")
    page.fill("input[name=delivery_every]", "7")
    page.fill("input[name=delivery_size]", "21")
    page.fill("input[name=stockout_target]", "1%")
    page.fill("input[name=overflow_target]", "5 %")
    # The live preview shows the change in one day before the form is sent, with no error.
    page.wait_for_selector("#preview-chart .main-svg")
    assert "error" not in (page.get_attribute("#scenario-form", "data-preview-state") or "")
    assert no_sideways_scroll(page)
    page.click("#scenario-form button[type=submit].primary")
    scenario = Scenario.objects.get()
    page.wait_for_url(f"{live_server.url}/scenarios/{scenario.pk}/")

    # The order of events within a day is stated; the answers are in days and percentages.
    assert page.is_visible("#order-of-events")
    for name in ("stockout", "smallest-start", "smallest-capacity"):
        assert page.inner_text(f"[data-figure={name}]").strip()
    risk = page.inner_text("[data-figure=stockout] .value")
    assert "%" in risk or "× 10" in risk  # the one formatter: percent, or scientific below 0.1 %
    assert "56 days" in page.inner_text("#plan-summary")
    page.wait_for_selector("#figures", state="attached")
    assert page.locator(".js-plotly-plot .main-svg").count() >= 3
    assert no_sideways_scroll(page)
    before = page.inner_text("[data-figure=stockout] .value").strip()

    # What-if: a larger start stock; the headline updates, the status says done.
    page.fill("#whatif-form input[name=start]", "35")
    page.wait_for_function(
        "before => document.querySelector('[data-figure=stockout] .value').textContent.trim() !== before",
        arg=before,
    )
    page.wait_for_selector("#whatif-form[data-state=done]")
    assert "35" in page.inner_text("#whatif-changes")

    # Out of range: the message names the field and the allowed range, and the page keeps working.
    page.fill("#whatif-form input[name=start]", "400")
    page.wait_for_selector("#whatif-form[data-state=error]")
    assert "start stock must be a whole number from 0 to 40" in page.inner_text("#whatif-status")
    page.fill("#whatif-form input[name=start]", "35")
    page.wait_for_selector("#whatif-form[data-state=done]")

    # The what-if's CSV names itself as one and records the changed input.
    with page.expect_download() as info:
        page.click("a.csv-link[data-table=risk-curves] >> nth=0")
    download = info.value
    assert download.suggested_filename == "flour-silo-winter-whatif-risk-curves.csv"
    rows = list(csv.reader(io.StringIO(Path(download.path()).read_text(encoding="utf-8"))))
    assert rows[0][1] == "day" and len(rows) == 1 + 57
    assert any("35" in cell for cell in rows[1])

    # Save as new asks for a name and keeps the what-if's inputs.
    page.fill("#whatif-title", "Flour silo: winter, fuller start")
    page.click("#whatif-save")
    page.wait_for_selector("text=Saved the what-if")
    variant = Scenario.objects.get(title="Flour silo: winter, fuller start")
    assert variant.params.start == 35 and variant.params.high == 40


def test_outsider_sees_not_found(page, live_server, owner, outsider, small_params):
    from planner.services import scenario_create

    scenario = scenario_create(owner=owner, kind="stock_plan", title="Private yeast tubs", params=small_params)
    sign_in(page, live_server, "ivo")
    response = page.goto(f"{live_server.url}/scenarios/{scenario.pk}/")
    assert response.status == 404
    assert "Private yeast tubs" not in page.content()
