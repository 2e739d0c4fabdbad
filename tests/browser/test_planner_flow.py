"""The analyst's path in a real browser: sign in, describe a walk, read the charts, try a what-if, download."""

import csv
import io
from pathlib import Path

import pytest

from planner.models import Scenario
from tests.conftest import PASSWORD

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]


def sign_in(page, live_server, username):
    page.goto(f"{live_server.url}/accounts/login/")
    page.fill("input[name=username]", username)
    page.fill("input[name=password]", PASSWORD)
    page.click("button[type=submit]")
    page.wait_for_url(f"{live_server.url}/")


def test_sign_in_create_read_whatif_download(page, live_server, owner):
    sign_in(page, live_server, "olwen")
    page.click("text=New scenario")
    page.fill("input[name=title]", "Honey jars: market stall")
    page.fill("input[name=start]", "6")
    page.fill("input[name=high]", "12")
    page.fill("input[name=horizon]", "25")
    page.select_option("select[name=below]", "lost")
    page.check("input[name=step_method][value=nearest]")
    page.fill("input[name=up]", "0.3")
    page.fill("input[name=down]", "0.4")
    # The live preview draws the step law before the form is sent.
    page.wait_for_selector("#preview-chart .main-svg")
    assert "Mean change -0.100" in page.inner_text("#preview-summary")
    page.click("button:has-text('Save and see the risk')")
    scenario_url = f"{live_server.url}/scenarios/{Scenario.objects.get().pk}/"
    page.wait_for_url(scenario_url)

    for chart in ("outlook", "risk", "start", "horizon", "normal"):
        page.wait_for_selector(f"#fig-{chart}.js-plotly-plot .main-svg")
    assert page.locator("#fig-risk .scatterlayer .trace").count() >= 2
    before = page.inner_text("[data-figure=stockout] .value")

    page.fill("#whatif-form input[name=start]", "2")
    page.wait_for_function(
        "before => document.querySelector('[data-figure=stockout] .value').textContent.trim() !== before",
        arg=before.strip(),
    )
    assert page.inner_text("#whatif-status").startswith("Updated")
    assert "Start 2 units" in page.inner_text(".walk-summary")

    # A value outside the band gets the engine's message, not a broken page.
    page.fill("#whatif-form input[name=start]", "40")
    page.wait_for_selector("#whatif-status.error")
    assert "start level must be a whole number from 0 to 12" in page.inner_text("#whatif-status")
    page.fill("#whatif-form input[name=start]", "2")
    page.wait_for_selector("#whatif-status.done")

    with page.expect_download() as info:
        page.click("a.csv-link[data-table=risk-curves]")
    download = info.value
    assert download.suggested_filename == "honey-jars-market-stall-risk-curves.csv"
    rows = list(csv.reader(io.StringIO(Path(download.path()).read_text(encoding="utf-8"))))
    assert rows[0][1] == "period" and len(rows) == 1 + 26
    assert rows[1][0] == "Honey jars: market stall"

    page.click("button:has-text('Save as new scenario')")
    page.wait_for_selector("text=Saved the what-if")
    variant = Scenario.objects.exclude(title="Honey jars: market stall").get()
    assert variant.walk_params.start == 2 and variant.walk_params.high == 12


def test_outsider_sees_not_found(page, live_server, owner, outsider, small_params):
    from planner.services import scenario_create

    scenario = scenario_create(owner=owner, title="Private yeast tubs", params=small_params)
    sign_in(page, live_server, "ivo")
    response = page.goto(f"{live_server.url}/scenarios/{scenario.pk}/")
    assert response.status == 404
    assert "Private yeast tubs" not in page.content()
