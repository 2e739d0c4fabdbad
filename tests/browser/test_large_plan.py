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


def test_cancel_from_the_page(page, live_server, owner):
    scenario = example_scenario(owner, "stock_plan")
    sign_in(page, live_server, "olwen")
    page.goto(f"{live_server.url}{scenario.get_absolute_url()}")
    page.click("#cancel-work")
    page.wait_for_selector("#restart-work")
    assert "Cancelled by olwen." in page.inner_text("#work-message")
    page.click("#restart-work")
    page.wait_for_selector("#run-progress[data-state=queued]")
