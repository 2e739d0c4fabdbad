"""A plan too large for one page request, in a real browser: its results page shows the progress bar while
it waits for a worker, and fills in by itself (charts drawn) once the worker has worked it out.

The worker is ``manage.py db_worker`` run in this process (``batch=True``) while the page polls, so the
live server and the worker share the in-memory test database.
"""

import pytest
from django.core.management import call_command

from planner.background.models import BackgroundReading
from tests.browser.test_planner_flow import no_sideways_scroll, sign_in
from tests.conftest import example_scenario

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]


@pytest.fixture(autouse=True)
def _small_page_cap(settings):
    settings.TASKS = {"default": {"BACKEND": "django_tasks_db.DatabaseBackend"}}
    settings.PLANNER_COMPUTE_CAP = 1_000  # every example plan is too large for a page; a worker takes it


@pytest.mark.parametrize("width", [1366, 390])
def test_the_results_page_waits_then_fills_in(page, live_server, owner, width):
    page.set_viewport_size({"width": width, "height": 900})
    scenario = example_scenario(owner, "stock_plan")
    sign_in(page, live_server, "olwen")
    page.goto(f"{live_server.url}{scenario.get_absolute_url()}")
    page.wait_for_selector("#run-progress[data-state=queued]")
    assert "Being worked out in the background" in page.inner_text("#run-progress")
    assert page.inner_text("#progress-percent") == "0" and page.is_visible("#cancel-work")
    assert no_sideways_scroll(page)

    call_command("db_worker", batch=True, startup_delay=False, reload=False, interval=0, verbosity=0)
    page.wait_for_selector("#worked-in-background")  # the poll saw it done and reloaded the page
    page.wait_for_selector("#fig-outlook .main-svg")
    assert BackgroundReading.objects.get().status == "done"
    assert "Worked out in the background" in page.inner_text("#worked-in-background")
    assert no_sideways_scroll(page)
    with page.expect_download() as download:
        page.click(".downloads .csv-link >> nth=0")
    assert download.value.path().read_text(encoding="utf-8").count("\n") > 2


def test_a_large_plan_saves_changes_as_a_new_plan_instead_of_redrawing(page, live_server, owner):
    scenario = example_scenario(owner, "stock_plan")
    sign_in(page, live_server, "olwen")
    refused = []
    page.on("response", lambda response: refused.append(response.url) if response.status >= 400 else None)
    page.goto(f"{live_server.url}{scenario.get_absolute_url()}")
    call_command("db_worker", batch=True, startup_delay=False, reload=False, interval=0, verbosity=0)
    page.wait_for_selector("#worked-in-background")
    assert "Change and save as a new plan" in page.inner_text(".whatif")
    assert "Not offered for a plan this large" in page.inner_text("#cross-check-held")  # no request refused
    asked = []
    page.on("request", lambda request: asked.append(request.url) if "/outlook" in request.url else None)
    start = page.locator("#whatif-form input[name=start]")
    start.fill(str(int(start.input_value()) + 1))
    start.press("Enter")
    page.wait_for_selector("#whatif-status.held")
    assert "save these values as a new plan" in page.inner_text("#whatif-status")
    page.wait_for_timeout(600)  # past the what-if's 250 ms wait: a live page would have asked by now
    assert asked == [] and refused == []  # nothing asked that a page request must refuse
    page.fill("#whatif-title", "Bigger start")
    page.click("#whatif-save")
    page.wait_for_selector("#run-progress[data-state=queued]")  # the new plan goes to a worker in turn
    assert page.inner_text("h1") == "Bigger start"


def test_cancel_from_the_page(page, live_server, owner):
    scenario = example_scenario(owner, "stock_plan")
    sign_in(page, live_server, "olwen")
    page.goto(f"{live_server.url}{scenario.get_absolute_url()}")
    page.click("#cancel-work")
    page.wait_for_selector("#restart-work")
    assert "Cancelled by olwen." in page.inner_text("#work-message")
    page.click("#restart-work")
    page.wait_for_selector("#run-progress[data-state=queued]")
