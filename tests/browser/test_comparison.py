"""Comparing plans in a real browser: tick two plans in the list, compare them, read one chart and one table."""

import pytest

from planner import services
from tests.browser.test_edit_conflict import sign_in

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]


@pytest.mark.parametrize("width", [1366, 390])
def test_two_ticked_plans_side_by_side(page, live_server, scenario, small_params, width):
    oats = services.scenario_create(
        owner=scenario.owner, kind="stock_plan", title="Oat bin", params=small_params.replace(horizon=28)
    )
    page.set_viewport_size({"width": width, "height": 900})
    sign_in(page, live_server)
    for plan in (scenario, oats):
        page.check(f"input[name=plan][value='{plan.pk}']")
    page.click("#compare-form button[type=submit]")
    page.wait_for_selector("#fig-compare .main-svg", timeout=60_000)
    assert page.locator("#fig-compare .scatterlayer .trace").count() == 2
    header = page.text_content("#key-figures thead")
    assert "Rye loaf shelf" in header and "Oat bin" in header
    assert page.evaluate("document.documentElement.scrollWidth <= window.innerWidth")
    with page.expect_download() as info:
        page.click("a.csv-link[href*='key-figures']")
    assert info.value.suggested_filename == "comparison-key-figures.csv"
