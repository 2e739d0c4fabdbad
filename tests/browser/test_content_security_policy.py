"""Pages with the Content-Security-Policy on (planner/security.py) in a real browser. The page fixture fails
any test whose page had something refused, so every browser test checks the charts, their toolbars and the
what-if panel under the policy; these cover the pages the other tests do not open."""

import pytest

from tests.conftest import PASSWORD

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]


def test_the_bare_error_page_keeps_its_inline_styles(page, live_server, owner):
    # A form sent without its CSRF token gets the bare 403 page (error_bare.html: inline styles only).
    page.goto(f"{live_server.url}/accounts/login/")
    page.evaluate("document.querySelector('input[name=csrfmiddlewaretoken]').remove()")
    page.fill("input[name=username]", "olwen")
    page.fill("input[name=password]", PASSWORD)
    page.click("button[type=submit]")
    page.wait_for_selector("[data-error-page='403']")
    # the page's own colours, which only its inline <style> sets
    assert page.evaluate("getComputedStyle(document.body).backgroundColor") == "rgb(247, 243, 234)"


def test_the_admin_pages_work_under_the_policy(page, live_server, scenario, django_user_model):
    django_user_model.objects.create_superuser("marit", password=PASSWORD)
    page.goto(f"{live_server.url}/admin/login/")
    page.fill("input[name=username]", "marit")
    page.fill("input[name=password]", PASSWORD)
    page.click("input[type=submit]")
    page.wait_for_url(f"{live_server.url}/admin/")
    page.goto(f"{live_server.url}/admin/planner/scenario/")
    page.wait_for_selector("#result_list")
    page.goto(f"{live_server.url}/admin/planner/scenario/{scenario.pk}/change/")
    page.wait_for_selector("#scenario_form")


def test_the_api_documentation_page_draws_from_our_own_files(page, live_server):
    page.goto(f"{live_server.url}/api/docs")
    page.wait_for_selector(".swagger-ui .info .title", timeout=60_000)
    assert "Fluctuation Planner API" in page.inner_text(".swagger-ui .info .title")
    assert page.locator(".opblock").count() >= 8  # every operation listed
