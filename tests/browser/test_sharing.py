"""Sharing in a real browser: the owner shares a plan with a second person, who finds it under "Shared with
you", reads it with its charts, and has no way to change it."""

import pytest

from tests.browser.test_edit_conflict import sign_in
from tests.browser.test_pages_and_whatif import wait_for_charts

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]


def test_the_owner_shares_and_the_second_person_sees_it_read_only(page, browser, live_server, scenario, outsider):
    sign_in(page, live_server, "olwen")
    page.goto(f"{live_server.url}/scenarios/{scenario.pk}/")
    page.click("#plan-actions >> text=Share")
    page.fill("#share-form input[name=person]", "ivo")
    page.check("#share-form input[name=role][value=viewer]")
    page.click("#share-form button[type=submit]")
    page.wait_for_selector("#shares tr[data-share]")
    assert "ivo" in page.inner_text("#shares") and "can view" in page.inner_text("#shares")

    second = browser.new_context().new_page()
    try:
        sign_in(second, live_server, "ivo")
        row = second.wait_for_selector(f"#shared-with-me tr[data-shared='{scenario.pk}']")
        assert "Rye loaf shelf" in row.inner_text() and "olwen" in row.inner_text()
        second.click(f"#shared-with-me tr[data-shared='{scenario.pk}'] a")
        wait_for_charts(second)
        assert "Shared with you by olwen" in second.inner_text("#shared-by")
        # no edit, share or delete; the history is open to viewers
        assert second.locator("#plan-actions a").all_inner_texts() == ["History"]
        refused = second.goto(f"{live_server.url}/scenarios/{scenario.pk}/edit/")
        assert refused.status == 403 and second.is_visible("[data-error-page='403']")
    finally:
        second.context.close()


def test_a_read_only_link_opens_in_a_fresh_browser(page, browser, live_server, scenario):
    sign_in(page, live_server, "olwen")
    page.goto(f"{live_server.url}/scenarios/{scenario.pk}/sharing/")
    page.fill("#link-form input[name=label]", "for the board")
    page.fill("#link-form input[name=days]", "7")
    page.click("#link-form button[type=submit]")
    address = page.input_value("#new-link-address")
    assert address.startswith(f"{live_server.url}/view/")

    # A fresh context: no session, no cookies; the page fixture's policy checks do not cover it, so it
    # collects what the Content-Security-Policy refuses itself.
    reader = browser.new_context(accept_downloads=True).new_page()
    refused = []
    reader.on("console", lambda m: refused.append(m.text) if "Content Security Policy" in m.text else None)
    try:
        response = reader.goto(address)
        assert response.status == 200
        wait_for_charts(reader)
        assert "Rye loaf shelf" in reader.inner_text("h1")
        assert reader.locator("form").count() == 0 and reader.locator("#whatif-form").count() == 0
        with reader.expect_download() as info:
            reader.click("a.csv-link[data-table=risk-curves] >> nth=0")
        assert info.value.suggested_filename == "rye-loaf-shelf-risk-curves.csv"
    finally:
        reader.context.close()
    assert not refused
