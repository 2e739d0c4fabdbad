"""Read-only links: an unguessable token, optional expiry, revocable; the plan, its charts and CSV tables with no
controls, reaching nothing else; expired, revoked and unknown tokens are 404."""

import csv
import io
import re
from datetime import timedelta

import pytest
from django.test import Client
from django.urls import reverse
from django.utils import timezone

from planner import services
from planner.models import Scenario, ScenarioLink, ScenarioVersion

pytestmark = pytest.mark.django_db


def make_link(scenario, **options):
    return services.link_create(scenario=scenario, label="for the board", **options)


def test_the_owner_makes_a_link_and_sees_its_address_once(scenario):
    owner = Client()
    owner.force_login(scenario.owner)
    response = owner.post(reverse("scenario_link_create", args=[scenario.pk]), {"label": "for the board", "days": "7"})
    assert response.status_code == 201
    address = re.search(r'value="(http://testserver/view/([A-Za-z0-9_-]+)/)"', response.content.decode())
    token = address.group(2)
    assert len(token) == 43  # 32 random bytes, URL-safe base64
    link = ScenarioLink.objects.get()
    assert link.digest == ScenarioLink.digest_of(token) and token not in str(ScenarioLink.objects.values().get())
    assert timedelta(days=6, hours=23) < link.expires - timezone.now() <= timedelta(days=7)
    # The sharing page lists it afterwards, without its address.
    page = owner.get(reverse("scenario_sharing", args=[scenario.pk])).content.decode()
    assert "for the board" in page and token not in page
    assert Client().get(address.group(1)).status_code == 200


def test_tokens_differ_and_carry_256_random_bits(scenario):
    tokens = {make_link(scenario)[1] for _ in range(20)}
    assert len(tokens) == 20 and all(re.fullmatch(r"[A-Za-z0-9_-]{43}", t) for t in tokens)


@pytest.mark.parametrize(
    ("data", "message"), [({"days": "0"}, "greater than or equal to 1"), ({"days": "999"}, "less than or equal to 366")]
)
def test_a_bad_expiry_is_refused_with_a_message(scenario, data, message):
    owner = Client()
    owner.force_login(scenario.owner)
    response = owner.post(reverse("scenario_link_create", args=[scenario.pk]), data)
    assert response.status_code == 400 and message in response.content.decode()
    assert not ScenarioLink.objects.exists()


def test_the_link_shows_the_plan_charts_and_tables_with_no_controls(scenario, outsider):
    _, token = make_link(scenario)
    url = reverse("link_results", args=[token])
    anonymous, signed_in = Client(), Client()
    signed_in.force_login(outsider)
    for browser in (anonymous, signed_in):
        response = browser.get(url)
        page = response.content.decode()
        assert response.status_code == 200
        assert response["Cache-Control"] == "no-store" and response["Referrer-Policy"] == "no-referrer"
        assert "noindex" in response["X-Robots-Tag"]
        assert "Rye loaf shelf" in page and 'id="figures"' in page and "read-only link" in page
        main = page[page.index("<main") : page.index("</main>")]
        assert "<form" not in main and "whatif" not in main and "csrfmiddlewaretoken" not in main
        # every address the page links to: its own tables, static files, or nothing about the plan
        for href in re.findall(r'(?:href|src)="([^"]+)"', main):
            assert href.startswith(f"/view/{token}/csv/"), href
        assert f"/scenarios/{scenario.pk}" not in page


def test_the_links_tables_are_the_saved_plan(scenario, client):
    _, token = make_link(scenario)
    owner = Client()
    owner.force_login(scenario.owner)
    for table in ("stock-by-period", "risk-curves", "risk-by-start"):
        response = client.get(reverse("link_csv", args=[token, table]), {"start": "2"})  # what-if values are ignored
        assert response.status_code == 200 and response["Cache-Control"] == "no-store"
        assert response["Content-Disposition"] == f'attachment; filename="rye-loaf-shelf-{table}.csv"'
        saved = owner.get(reverse("scenario_csv", args=[scenario.pk, table])).content
        assert response.content == saved
        rows = list(csv.reader(io.StringIO(response.content.decode())))
        assert rows[1][-2] == "saved plan"
    assert client.get(reverse("link_csv", args=[token, "recipes"])).status_code == 404


def test_expired_revoked_unknown_and_deleted_links_are_404(scenario, client):
    expired, expired_token = make_link(scenario, days=1)
    ScenarioLink.objects.filter(pk=expired.pk).update(expires=timezone.now() - timedelta(seconds=1))
    revoked, revoked_token = make_link(scenario)
    services.link_revoke(link=revoked)
    _, open_token = make_link(scenario)
    for token in (expired_token, revoked_token, "x" * 43, open_token[:-1] + ("A" if open_token[-1] != "A" else "B")):
        assert client.get(reverse("link_results", args=[token])).status_code == 404
        assert client.get(reverse("link_csv", args=[token, "risk-curves"])).status_code == 404
    assert client.get(reverse("link_results", args=[open_token])).status_code == 200
    services.scenario_delete(scenario=scenario)
    assert client.get(reverse("link_results", args=[open_token])).status_code == 404


def test_a_link_cannot_write_or_reach_anything_else(scenario, outsider):
    _, token = make_link(scenario)
    anonymous = Client(enforce_csrf_checks=False)
    assert anonymous.get(reverse("link_results", args=[token])).status_code == 200
    assert anonymous.post(reverse("link_results", args=[token]), {"title": "Taken over"}).status_code == 405
    assert anonymous.post(reverse("link_csv", args=[token, "risk-curves"])).status_code == 405
    # Having opened the link grants nothing on the plan's own pages.
    for name in ("scenario_results", "scenario_edit", "scenario_history"):
        response = anonymous.get(reverse(name, args=[scenario.pk]))
        assert response.status_code == 302 and response["Location"].startswith(reverse("login"))
    signed_in = Client()
    signed_in.force_login(outsider)
    signed_in.get(reverse("link_results", args=[token]))
    assert signed_in.get(reverse("scenario_results", args=[scenario.pk])).status_code == 404
    assert Scenario.objects.get(pk=scenario.pk).title == "Rye loaf shelf" and ScenarioVersion.objects.count() == 1


def test_the_owner_revokes_a_link_and_only_through_its_plan(scenario, outsider, small_params):
    link, token = make_link(scenario)
    other = services.scenario_create(owner=outsider, kind="stock_plan", title="Ivo's", params=small_params)
    foreign, foreign_token = make_link(other)
    owner = Client()
    owner.force_login(scenario.owner)
    assert owner.post(reverse("scenario_link_revoke", args=[scenario.pk, foreign.pk])).status_code == 404
    assert Client().get(reverse("link_results", args=[foreign_token])).status_code == 200
    assert owner.post(reverse("scenario_link_revoke", args=[scenario.pk, link.pk])).status_code == 302
    assert Client().get(reverse("link_results", args=[token])).status_code == 404
    page = owner.get(reverse("scenario_sharing", args=[scenario.pk])).content.decode()
    row = re.search(rf'<tr data-link="{link.pk}">(.*?)</tr>', page, flags=re.S).group(1)
    assert "revoked" in row and "Revoke" not in row
