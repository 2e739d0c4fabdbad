"""planner/security.py and the TLS settings: the Content-Security-Policy on every response, the address the
sign-in throttle counts, https behind a proxy (redirects, CSRF on sign-in, HSTS)."""

import base64
import hashlib
import re

import pytest
from django.template.loader import get_template
from django.test import Client, RequestFactory
from django.urls import reverse

from planner.security import client_address, inline_style_hashes
from tests.conftest import PASSWORD

pytestmark = pytest.mark.django_db

HOST = "planner.bakery.invalid"


def policy(response) -> dict[str, list[str]]:
    header = response["Content-Security-Policy"]
    return {part.split()[0]: part.split()[1:] for part in header.split(";")}


def sha256(text: str) -> str:
    return "'sha256-" + base64.b64encode(hashlib.sha256(text.encode()).digest()).decode() + "'"


def pages(client, scenario):
    client.force_login(scenario.owner)
    results = reverse("scenario_results", args=[scenario.pk])
    return {
        "list": client.get(reverse("scenario_list")),
        "results": client.get(results),
        "form": client.get(reverse("scenario_edit", args=[scenario.pk])),
        "what-if JSON": client.get(reverse("scenario_outlook_json", args=[scenario.pk])),
        "CSV": client.get(reverse("scenario_csv", args=[scenario.pk, "risk-curves"])),
        "not found": client.get("/no/such/page/"),
        "sign-in": Client().get(reverse("login")),
    }


def test_every_response_carries_the_policy_and_it_names_no_other_site(client, scenario):
    for name, response in pages(client, scenario).items():
        directives = policy(response)
        assert directives["default-src"] == ["'self'"], name
        assert directives["script-src"] == ["'self'"], name  # no inline script, no eval
        assert directives["object-src"] == ["'none'"] and directives["frame-ancestors"] == ["'none'"], name
        sources = {source for values in directives.values() for source in values}
        assert "'unsafe-eval'" not in sources, name
        assert not {s for s in sources if "." in s or s.startswith(("http", "*"))}, name  # no host of another site
        # inline styles: only by hash as elements; plotly's style attributes (planner/security.py says why)
        assert "'unsafe-inline'" not in directives["style-src"] + directives["style-src-elem"], name


def test_pages_run_no_inline_script(client, scenario):
    for name, response in pages(client, scenario).items():
        if not response["Content-Type"].startswith("text/html"):
            continue
        body = response.content.decode()
        for tag in re.findall(r"<script\b[^>]*>", body):
            # external files, or data for them (json_script), never code in the page
            assert "src=" in tag or 'type="application/json"' in tag, (name, tag)
        assert not re.search(r"<[^>]+\son[a-z]+=", body), f"an inline event handler on {name}"
        assert "javascript:" not in body, name


def test_the_bare_error_pages_styles_are_allowed_by_their_hash(client):
    # 500.html and 403_csrf.html extend error_bare.html, which links no static file; rendered here with no
    # context at all, as Django does after an error.
    body = get_template("500.html").render()
    blocks = re.findall(r"<style>(.*?)</style>", body, flags=re.S)
    assert len(blocks) == 1
    header = policy(client.get(reverse("login")))
    assert sha256(blocks[0]) in header["style-src-elem"] and sha256(blocks[0]) in header["style-src"]
    assert inline_style_hashes("<style>a{}</style>") == [sha256("a{}")]


@pytest.mark.parametrize(
    ("proxies", "forwarded", "expected"),
    [
        (0, "203.0.113.9", "198.51.100.7"),  # no proxy: X-Forwarded-For is whatever the client wrote
        (1, "203.0.113.9", "203.0.113.9"),
        (1, "192.0.2.66, 203.0.113.9", "203.0.113.9"),  # the client's own entry at the left is ignored
        (2, "192.0.2.66, 203.0.113.9, 10.0.0.2", "203.0.113.9"),
        (2, "203.0.113.9", "198.51.100.7"),  # shorter than the proxy chain: did not come through it
        (1, "", "198.51.100.7"),
    ],
)
def test_the_throttle_counts_the_address_the_outermost_proxy_saw(settings, proxies, forwarded, expected):
    settings.PLANNER_PROXY_COUNT = proxies
    request = RequestFactory().post("/accounts/login/", REMOTE_ADDR="198.51.100.7", HTTP_X_FORWARDED_FOR=forwarded)
    assert client_address(request) == expected


@pytest.fixture
def behind_tls_proxy(settings):
    """The settings README's production example sets, for a proxy that terminates TLS and sets X-Forwarded-Proto."""
    settings.ALLOWED_HOSTS = [HOST]
    settings.SECURE_SSL_REDIRECT = True
    settings.SECURE_PROXY_SSL_HEADER = ("HTTP_X_FORWARDED_PROTO", "https")
    settings.SESSION_COOKIE_SECURE = settings.CSRF_COOKIE_SECURE = True
    settings.SECURE_HSTS_SECONDS = 31536000
    return settings


def sign_in_through_proxy(owner, *, host=HOST, origin=f"https://{HOST}"):
    """A browser's sign-in through the proxy, CSRF checks on: the form, then its POST with the browser's Origin."""
    browser = Client(enforce_csrf_checks=True, HTTP_HOST=host, HTTP_X_FORWARDED_PROTO="https")
    form = browser.get(reverse("login"))
    token = re.search(r'name="csrfmiddlewaretoken" value="([^"]+)"', form.content.decode()).group(1)
    data = {"username": owner.username, "password": PASSWORD, "csrfmiddlewaretoken": token}
    return form, browser.post(reverse("login"), data, HTTP_ORIGIN=origin)


def test_plain_http_is_sent_to_https_and_https_gets_hsts(behind_tls_proxy):
    plain = Client(HTTP_HOST=HOST).get(reverse("login"))
    assert plain.status_code == 301 and plain["Location"] == f"https://{HOST}/accounts/login/"
    secure = Client(HTTP_HOST=HOST, HTTP_X_FORWARDED_PROTO="https").get(reverse("login"))
    assert secure.status_code == 200 and secure["Strict-Transport-Security"] == "max-age=31536000"


def test_sign_in_behind_the_proxy_passes_the_csrf_check_with_secure_cookies(behind_tls_proxy, owner):
    form, signed_in = sign_in_through_proxy(owner)
    assert form.cookies["csrftoken"]["secure"]
    assert signed_in.status_code == 302 and signed_in["Location"] == "/"
    assert signed_in.cookies["sessionid"]["secure"]


def test_without_the_proxy_header_setting_every_post_is_refused(behind_tls_proxy, owner):
    # What the first release did behind TLS: the app thinks it is on http, the browser says https.
    behind_tls_proxy.SECURE_SSL_REDIRECT = False
    behind_tls_proxy.SECURE_PROXY_SSL_HEADER = None
    assert sign_in_through_proxy(owner)[1].status_code == 403


def test_a_proxy_that_renames_the_host_needs_the_trusted_origin(behind_tls_proxy, owner):
    behind_tls_proxy.ALLOWED_HOSTS = [HOST, "planner-app"]  # the proxy forwards to http://planner-app
    assert sign_in_through_proxy(owner, host="planner-app")[1].status_code == 403
    behind_tls_proxy.CSRF_TRUSTED_ORIGINS = [f"https://{HOST}"]
    assert sign_in_through_proxy(owner, host="planner-app")[1].status_code == 302
