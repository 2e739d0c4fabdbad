"""A portfolio run in a real browser: upload a table of items, see the refused row, start the run, watch
the progress bar climb to 100 % while a worker drains the queue chunk by chunk, filter the results and
download them as CSV (read back with the csv module, RFC 4180).

The worker is ``manage.py db_worker`` run in this process one task at a time (``--max-tasks 1``: a
chunk's pricing or its work), so the live server and the worker share the in-memory test database and the
page is seen between chunks.
"""

import csv
import io

import pytest
from django.core.management import call_command

from planner.portfolio import services
from planner.portfolio.models import PortfolioRun
from tests.browser.test_planner_flow import no_sideways_scroll, sign_in
from tests.planner.portfolio.helpers import portfolio_csv

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]


@pytest.fixture(autouse=True)
def _database_queue(settings):
    settings.TASKS = {"default": {"BACKEND": "django_tasks_db.DatabaseBackend"}}
    settings.PORTFOLIO_CHUNK_ITEMS = 2


def _one_task():
    call_command("db_worker", batch=True, max_tasks=1, startup_delay=False, reload=False, interval=0, verbosity=0)


def test_upload_watch_progress_filter_and_download(page, live_server, owner, tmp_path):
    table = tmp_path / "shelf.csv"
    table.write_bytes(portfolio_csv())  # 12 good rows, 1 bad
    sign_in(page, live_server, "olwen")
    page.click("#portfolios-link")
    page.click("text=Upload a table of items")
    page.set_input_files("input[name=file]", str(table))
    page.fill("input[name=title]", "Store shelf")
    page.click("#upload-form button[type=submit]")

    page.wait_for_selector("#start-run")
    assert "Row 14, column lead time: -3 is out of range" in page.inner_text("#refused-rows")
    page.click("#start-run")
    page.wait_for_selector("#cancel-run")
    run = PortfolioRun.objects.get(title="Store shelf")
    seen = []
    while run.chunks.filter(status="waiting").exists():
        _one_task()  # a chunk's pricing (no row done: none is over the cap) or its work
        done = services.run_progress(run)["done"]
        if seen and done == int(seen[-1]):
            continue
        page.wait_for_function(
            "n => Number(document.getElementById('progress-done').textContent.replace(/,/g, '')) >= n", arg=done
        )
        seen.append(page.inner_text("#progress-done").replace(",", ""))
    page.wait_for_selector("#run-progress[data-state=finished]")  # the page reloads once the run closes
    assert page.get_attribute("#progress-bar", "value") == "100.0"
    assert page.inner_text("#progress-percent") == "100"
    assert len(seen) >= 3 and [int(n) for n in seen] == sorted(int(n) for n in seen)  # the bar moved in steps
    page.wait_for_selector("#fig-risk .main-svg")
    page.set_viewport_size({"width": 390, "height": 900})  # a phone: the page stays within its width
    page.reload()
    page.wait_for_selector("#fig-risk .main-svg")
    assert no_sideways_scroll(page)
    page.set_viewport_size({"width": 1366, "height": 900})
    page.reload()

    page.select_option("#results-filter select[name=kind]", "spares")
    page.click("#results-filter button[type=submit]")
    page.wait_for_url("**kind=spares**")
    codes = page.locator("#results-table tbody td:nth-child(2)").all_inner_texts()
    assert sorted(code.split()[0] for code in codes) == ["SPR-0", "SPR-1"]

    with page.expect_download() as download:
        page.click("#download-csv")
    rows = list(csv.reader(io.StringIO(download.value.path().read_text(encoding="utf-8"))))
    assert rows[0][1] == "item" and sorted(row[1] for row in rows[1:]) == ["SPR-0", "SPR-1"]
    stored = {r.item.code: r for r in run.results.select_related("item")}
    for row in rows[1:]:  # worked out; the availability and smallest spares as stored, at full precision
        assert row[5] == "yes" and float(row[15]) == stored[row[1]].availability
        assert int(row[16]) == stored[row[1]].smallest_spares
