"""A stale edit in a real browser: two windows open the same plan's form, both save; the second is told what
changed, keeps its values, and saves them once it has looked."""

import pytest

from planner.models import Scenario
from tests.conftest import PASSWORD

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]


def sign_in(page, live_server, username="olwen"):
    page.goto(f"{live_server.url}/accounts/login/")
    page.fill("input[name=username]", username)
    page.fill("input[name=password]", PASSWORD)
    page.click("button[type=submit]")
    page.wait_for_url(f"{live_server.url}/", timeout=60_000)


def test_a_stale_edit_gets_the_conflict_message_and_keeps_its_values(page, browser, live_server, scenario):
    edit = f"{live_server.url}/scenarios/{scenario.pk}/edit/"
    other_window = browser.new_context().new_page()
    try:
        for window in (page, other_window):
            sign_in(window, live_server)
            window.goto(edit)
        # The other window saves a new name first.
        other_window.fill("input[name=title]", "Rye loaf shelf, winter")
        other_window.click("#scenario-form button[type=submit].primary")
        other_window.wait_for_url(f"{live_server.url}/scenarios/{scenario.pk}/")
    finally:
        other_window.context.close()

    page.fill("textarea[name=notes]", "Move to the front shelf.")
    page.click("#scenario-form button[type=submit].primary")
    page.wait_for_selector("#edit-conflict")
    assert "Nothing was saved" in page.inner_text("#edit-conflict")
    assert page.inner_text("#edit-conflict tr[data-field=title]").split("\t")[1:] == [
        "Rye loaf shelf",
        "Rye loaf shelf, winter",
        "Rye loaf shelf",
    ]
    assert page.input_value("textarea[name=notes]") == "Move to the front shelf."  # nothing lost
    assert Scenario.objects.get(pk=scenario.pk).notes == "Back shelf."

    # Having read the table, keep the other window's name too and save.
    page.fill("input[name=title]", "Rye loaf shelf, winter")
    page.click("#scenario-form button[type=submit].primary")
    page.wait_for_url(f"{live_server.url}/scenarios/{scenario.pk}/")
    fresh = Scenario.objects.get(pk=scenario.pk)
    assert (fresh.title, fresh.notes, fresh.version) == ("Rye loaf shelf, winter", "Move to the front shelf.", 3)
