"""Every page at desk and phone widths, the chart toolbars, stale what-if requests, our 404 page.

Selectors are ids, names and data attributes, not English wording:
login form ``input[name=username]``, ``input[name=password]``, ``button[type=submit]``;
form page ``#scenario-form`` (its ``data-preview-state``);
results page ``#results[data-outlook-url]``, ``#whatif-form`` (its ``data-state``),
``#whatif-form input[name=start]``, ``#whatif-title`` (the new scenario's name, sent as ``title``),
``#whatif-cancel``, ``#headline``, chart divs ``#fig-<name>``
drawn by plotly (``.js-plotly-plot``, ``.modebar``, ``.gtitle``); error pages ``[data-error-page]``
with a ``[data-way-back]`` link. The page fixture fails any test whose page fetched from outside
this machine.
"""

import contextlib
import json
from urllib.parse import urlsplit

import pytest

from planner import services
from tests.conftest import PASSWORD

pytestmark = [pytest.mark.browser, pytest.mark.django_db(transaction=True)]

WIDTHS = [1366, 390]
TOOLBAR_BUTTONS = 4  # zoom, pan, reset axes, download image


def sign_in(page, live_server, username="olwen"):
    page.goto(f"{live_server.url}/accounts/login/")
    page.fill("input[name=username]", username)
    page.fill("input[name=password]", PASSWORD)
    page.click("button[type=submit]")
    page.wait_for_url(f"{live_server.url}/", timeout=60_000)


def open_new_form(page, live_server, kind: str, width: int) -> None:
    """At ``width`` px, sign in and open the new-scenario form of ``kind`` from the list of kinds."""
    page.set_viewport_size({"width": width, "height": 900})
    sign_in(page, live_server)
    page.goto(f"{live_server.url}/scenarios/new/")
    page.click(f"main a[href='/scenarios/new/{kind}/']")
    page.wait_for_selector("#scenario-form")


def try_whatif(page, name: str, value: str, watch: str = "[data-figure=mission-risk] .value") -> None:
    """Type ``value`` into the what-if input ``name``; return once the figure ``watch`` has changed and the
    panel is done."""
    before = page.inner_text(watch).strip()
    page.fill(f"#whatif-form input[name={name}]", value)
    page.wait_for_function(
        "([selector, before]) => document.querySelector(selector).textContent.trim() !== before",
        arg=[watch, before],
    )
    page.wait_for_selector("#whatif-form[data-state=done]")


def overflow(page) -> tuple[int, int]:
    return tuple(page.evaluate("[document.documentElement.scrollWidth, window.innerWidth]"))


def wait_for_charts(page):
    # A generous bound (not a speed check): the first page of a session parses plotly.js cold,
    # on a machine other jobs may be loading.
    page.wait_for_selector("#results .js-plotly-plot .main-svg", timeout=60_000)
    # every figure the page carries (#figures, keyed by name) drawn into its #fig-<name>
    page.wait_for_function(
        "() => Object.keys(JSON.parse(document.getElementById('figures').textContent))"
        ".every(name => document.querySelector('#fig-' + name + ' .main-svg'))",
        timeout=60_000,
    )


@pytest.mark.parametrize("width", WIDTHS)
def test_no_page_scrolls_sideways(page, live_server, scenario, width):
    page.set_viewport_size({"width": width, "height": 900})
    page.goto(f"{live_server.url}/accounts/login/")
    seen = {"sign-in": overflow(page)}
    sign_in(page, live_server)
    base = f"{live_server.url}/scenarios/{scenario.pk}"
    link_token = services.link_create(scenario=scenario, label="for the board")[1]
    for name, url in [
        ("list", f"{live_server.url}/"),
        ("new", f"{live_server.url}/scenarios/new/"),
        ("results", f"{base}/"),
        ("edit", f"{base}/edit/"),
        ("delete", f"{base}/delete/"),
        ("sharing", f"{base}/sharing/"),
        ("history", f"{base}/history/"),
        ("version", f"{base}/history/1/"),
        ("read-only link", f"{live_server.url}/view/{link_token}/"),
        ("not found", f"{live_server.url}/no/such/page/"),
    ]:
        page.goto(url)
        if name == "new" and not page.query_selector("#scenario-form"):
            # a page that lists the kinds first: follow the first kind to its form
            page.click("main a[href^='/scenarios/new/']:not([href='/scenarios/new/'])")
            page.wait_for_selector("#scenario-form")
        if name in {"results", "read-only link"}:
            wait_for_charts(page)
        if name in {"new", "edit"}:
            # the live preview has answered (shown, or waiting for inputs on an untouched form)
            page.wait_for_selector(
                "#scenario-form[data-preview-state]:not([data-preview-state=busy])", state="attached", timeout=60_000
            )
        seen[name] = overflow(page)
    too_wide = {name: sizes for name, sizes in seen.items() if sizes[0] > sizes[1]}
    assert not too_wide, f"pages wider than the {width} px window: {too_wide}"


@pytest.mark.parametrize("width", WIDTHS)
def test_chart_toolbars_hold_only_local_tools_and_leave_titles_clear(page, live_server, scenario, width):
    page.set_viewport_size({"width": width, "height": 900})
    sign_in(page, live_server)
    page.goto(f"{live_server.url}/scenarios/{scenario.pk}/")
    wait_for_charts(page)
    origin = urlsplit(live_server.url).netloc
    charts = page.evaluate(
        """() => [...document.querySelectorAll('#results .js-plotly-plot')].map(el => {
             const box = e => { if (!e) return null; const r = e.getBoundingClientRect();
                                return [r.left, r.top, r.right, r.bottom]; };
             return {
               id: el.id,
               name: el.getAttribute('aria-label') || el.getAttribute('aria-labelledby'),
               buttons: el.querySelectorAll('.modebar-btn').length,
               links: [...el.querySelectorAll('a[href]')].map(a => a.href),
               logo: el.querySelectorAll('.plotlylogo').length,
               modebar: box(el.querySelector('.modebar')),
               title: box(el.querySelector('.gtitle')),
             };
           })"""
    )
    assert len(charts) >= 2
    for chart in charts:
        assert chart["buttons"] == TOOLBAR_BUTTONS, chart
        assert chart["logo"] == 0, chart
        assert chart["name"], chart  # screen readers get the chart's name
        assert all(urlsplit(link).netloc == origin for link in chart["links"]), chart
        mode, title = chart["modebar"], chart["title"]
        assert mode is not None and title is not None, chart
        overlap = min(mode[2], title[2]) > max(mode[0], title[0]) and min(mode[3], title[3]) > max(mode[1], title[1])
        assert not overlap, f"the toolbar covers the title of {chart['id']} at {width} px: {chart}"


def test_download_image_button_works_offline(page, live_server, scenario):
    sign_in(page, live_server)
    page.goto(f"{live_server.url}/scenarios/{scenario.pk}/")
    wait_for_charts(page)
    chart = page.locator("#results .js-plotly-plot").first
    chart.hover()
    with page.expect_download() as info:
        # zoom, pan and reset set a layout attribute (data-attr); the image button is the one that does not
        chart.locator(".modebar-btn:not([data-attr])").click()
    assert info.value.suggested_filename.endswith(".png")


def held_outlook_requests(page):
    """Route what-if requests so the test decides when each is answered; returns the held routes."""
    held = []
    page.route("**/outlook.json*", lambda route: held.append(route))
    return held


def wait_until(page, predicate, what: str):
    for _ in range(200):
        if predicate():
            return
        page.wait_for_timeout(50)
    raise AssertionError(f"timed out waiting for {what}")


def answer_for(page, live_server, scenario, start: int) -> dict:
    outlook_url = page.get_attribute("#results", "data-outlook-url")
    response = page.request.get(f"{live_server.url}{outlook_url}?start={start}")
    assert response.ok
    return json.loads(response.body())


def headline_is(page, html: str) -> bool:
    # Compare through the browser's own serialisation, so attribute quoting does not matter.
    return page.evaluate(
        "html => { const d = document.createElement('div'); d.innerHTML = html;"
        " return d.innerHTML === document.getElementById('headline').innerHTML; }",
        html,
    )


def test_stale_what_if_is_aborted_and_its_late_answer_never_lands(page, live_server, scenario):
    page.set_viewport_size({"width": 1366, "height": 900})
    sign_in(page, live_server)
    page.goto(f"{live_server.url}/scenarios/{scenario.pk}/")
    wait_for_charts(page)
    older, newer = answer_for(page, live_server, scenario, 1), answer_for(page, live_server, scenario, 7)
    assert older["headline_html"] != newer["headline_html"]  # else this test could not tell them apart

    failed = []
    page.on("requestfailed", lambda request: failed.append((request.url, request.failure)))
    held = held_outlook_requests(page)
    page.fill("#whatif-form input[name=start]", "1")
    wait_until(page, lambda: len(held) == 1, "the first what-if request")
    assert page.get_attribute("#whatif-form", "data-state") == "busy"
    assert page.is_visible("#whatif-cancel")

    page.fill("#whatif-form input[name=start]", "7")
    wait_until(page, lambda: len(held) == 2, "the second what-if request")
    assert "start=7" in held[1].request.url
    held[1].fulfill(status=200, content_type="application/json", body=json.dumps(newer))
    page.wait_for_selector("#whatif-form[data-state=done]")
    assert headline_is(page, newer["headline_html"])

    # The first request was aborted by the browser; even if its answer arrives now, it must not land.
    wait_until(page, lambda: any("start=1" in url for url, _ in failed), "the first request to be aborted")
    with contextlib.suppress(Exception):  # an aborted request may refuse an answer; either way it must not land
        held[0].fulfill(status=200, content_type="application/json", body=json.dumps(older))
    page.wait_for_timeout(500)
    assert headline_is(page, newer["headline_html"])
    assert page.get_attribute("#whatif-form", "data-state") == "done"


def test_cancel_stops_the_request_and_keeps_the_figures(page, live_server, scenario):
    sign_in(page, live_server)
    page.goto(f"{live_server.url}/scenarios/{scenario.pk}/")
    wait_for_charts(page)
    before = page.inner_html("#headline")
    failed = []
    page.on("requestfailed", lambda request: failed.append(request.url))
    held = held_outlook_requests(page)
    page.fill("#whatif-form input[name=start]", "2")
    wait_until(page, lambda: len(held) == 1, "the what-if request")
    page.click("#whatif-cancel")
    page.wait_for_selector("#whatif-form[data-state=cancelled]")
    wait_until(page, lambda: any("outlook.json" in url for url in failed), "the request to be aborted")
    assert not page.is_visible("#whatif-cancel")
    assert page.inner_html("#headline") == before


def test_unusable_what_if_value_shows_the_message_beside_the_inputs(page, live_server, scenario):
    sign_in(page, live_server)
    page.goto(f"{live_server.url}/scenarios/{scenario.pk}/")
    wait_for_charts(page)
    before = page.inner_html("#headline")
    page.fill("#whatif-form input[name=start]", "999")
    page.wait_for_selector("#whatif-form[data-state=error]")
    assert page.inner_text("#whatif-status").strip()
    assert page.locator("#whatif-form #whatif-status").count() == 1  # inside the what-if form
    assert page.inner_html("#headline") == before


def test_save_as_new_sends_the_name_given(page, live_server, scenario):
    sign_in(page, live_server)
    page.goto(f"{live_server.url}/scenarios/{scenario.pk}/")
    wait_for_charts(page)
    name = page.locator("#whatif-form #whatif-title")
    assert name.is_visible() and name.get_attribute("required") is not None
    name.fill("Rye shelf, Saturday stock")
    action = page.get_attribute("#whatif-form", "action")
    with page.expect_request(lambda request: request.method == "POST" and request.url.endswith(action)) as sent:
        page.click("#whatif-form [type=submit]")
    assert "title=Rye+shelf%2C+Saturday+stock" in sent.value.post_data


@pytest.mark.parametrize("width", WIDTHS)
def test_cross_check_panel_fills_in_and_offers_to_check_a_what_if(page, live_server, scenario, width):
    page.set_viewport_size({"width": width, "height": 900})
    sign_in(page, live_server)
    page.goto(f"{live_server.url}/scenarios/{scenario.pk}/")
    wait_for_charts(page)
    page.wait_for_selector("#cross-check[data-state=done] #fig-cross-check .main-svg", timeout=60_000)
    assert page.locator("#cross-check-table tbody tr").count() == 8  # 12 days: eight checkpoints
    assert page.inner_text("#fig-cross-check-summary").strip()
    assert not page.is_visible("#cross-check-run")
    scroll_width, inner_width = overflow(page)
    assert scroll_width <= inner_width

    page.fill("#whatif-form input[name=start]", "2")
    page.wait_for_selector("#whatif-form[data-state=done]")
    page.wait_for_selector("#cross-check-run", state="visible")
    with page.expect_response(lambda response: "cross-check.json?" in response.url and "start=2" in response.url):
        page.click("#cross-check-run")
    page.wait_for_selector("#cross-check[data-state=done]")
    assert "start=2" in page.get_attribute("#cross-check-csv", "href")
    assert page.locator("#cross-check-body .whatif-changes").count() == 1


def test_missing_scenario_gets_our_404_page_with_a_way_back(page, live_server, owner):
    sign_in(page, live_server)
    response = page.goto(f"{live_server.url}/scenarios/987654/")
    assert response.status == 404
    assert page.is_visible("[data-error-page='404']")
    page.click("[data-error-page='404'] [data-way-back]")
    page.wait_for_url(f"{live_server.url}/")
