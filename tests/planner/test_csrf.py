"""Every form that changes something refuses a POST without its CSRF token, for a signed-in owner too."""

import pytest
from django.test import Client
from django.urls import reverse

from planner import services
from planner.models import Scenario, ScenarioLink, ScenarioShare, ScenarioVersion
from tests.conftest import PASSWORD
from tests.planner.test_edit_conflicts import edit_values

pytestmark = pytest.mark.django_db


def posts(scenario, cast):
    share = ScenarioShare.objects.get(scenario=scenario, user=cast["viewer"])
    link = services.link_create(scenario=scenario)[0]
    pk = scenario.pk
    return {
        "scenario_new_kind": (reverse("scenario_new_kind", args=["stock_plan"]), edit_values(scenario, title="New")),
        "scenario_edit": (reverse("scenario_edit", args=[pk]), edit_values(scenario, title="Taken over")),
        "scenario_delete": (reverse("scenario_delete", args=[pk]), {}),
        "scenario_variant_save": (reverse("scenario_variant_save", args=[pk]), {"title": "Copy"}),
        "scenario_sharing": (reverse("scenario_sharing", args=[pk]), {"person": "ivo", "role": "editor"}),
        "scenario_share_change": (reverse("scenario_share_change", args=[pk, share.pk]), {"role": "remove"}),
        "scenario_link_create": (reverse("scenario_link_create", args=[pk]), {"label": "x"}),
        "scenario_link_revoke": (reverse("scenario_link_revoke", args=[pk, link.pk]), {}),
        "scenario_version_restore": (reverse("scenario_version_restore", args=[pk, 1]), {"version": "1"}),
        "logout": (reverse("logout"), {}),
    }


def everything():
    return (
        list(Scenario.objects.values_list("pk", "title", "version")),
        list(ScenarioShare.objects.values_list("pk", "role")),
        list(ScenarioLink.objects.values_list("pk", "revoked")),
        ScenarioVersion.objects.count(),
    )


def test_every_write_needs_the_csrf_token(scenario, cast):
    for name, (url, data) in posts(scenario, cast).items():
        browser = Client(enforce_csrf_checks=True)
        browser.force_login(scenario.owner)
        before = everything()
        response = browser.post(url, data)
        assert response.status_code == 403, name
        assert b'data-error-page="403"' in response.content, name  # our "form expired" page
        assert everything() == before, name
        assert browser.get(reverse("scenario_list")).status_code == 200, name  # still signed in (logout refused)


def test_sign_in_needs_the_csrf_token_too(owner):
    browser = Client(enforce_csrf_checks=True)
    response = browser.post(reverse("login"), {"username": "olwen", "password": PASSWORD})
    assert response.status_code == 403 and browser.get(reverse("scenario_list")).status_code == 302
