"""load_demo: the demo account and three differently shaped scenarios, idempotent."""

import json
from io import StringIO

import pytest
from django.core.management import call_command
from django.test import Client
from django.urls import reverse

from planner.management.commands.load_demo import DEMO_FILE
from planner.models import Scenario
from planner.reading import scenario_reading

pytestmark = pytest.mark.django_db


def load() -> str:
    out = StringIO()
    call_command("load_demo", stdout=out)
    return out.getvalue()


def test_prints_working_sign_in_details_and_is_idempotent():
    account = json.loads(DEMO_FILE.read_text())["user"]
    first = load()
    assert f"username '{account['username']}', password '{account['password']}'" in first
    titles = sorted(Scenario.objects.values_list("title", flat=True))
    second = load()
    assert "refreshed" in second
    assert sorted(Scenario.objects.values_list("title", flat=True)) == titles and len(titles) >= 3
    # Through the sign-in page, as a person would (the sign-in throttle wants a request to count).
    response = Client().post(reverse("login"), {"username": account["username"], "password": account["password"]})
    assert response.status_code == 302 and response["Location"] == "/"


def test_demo_scenarios_show_different_shapes():
    load()
    results = {s.title: scenario_reading(scenario=s).result for s in Scenario.objects.all()}
    drift = [r for r in results.values() if r.params.high is None and r.cycle_mean < 0]
    bound = [r for r in results.values() if r.params.high is not None and r.spilled_units and r.overflow_risk > 0.1]
    weekly = [r for r in results.values() if r.params.delivery_every == 7 and len(r.laws) == 7]
    assert drift and bound and weekly
    # Steady drift to empty: the stock-out risk only grows and ends well above its target.
    curve = drift[0].outlook.stockout
    assert all(b >= a for a, b in zip(curve, curve[1:], strict=False)) and drift[0].stockout_risk > 0.1


def test_demo_text_stays_in_the_fictional_island():
    text = DEMO_FILE.read_text()
    assert "Saltmarrow" in text and ".invalid" in text


def test_every_demo_plan_has_its_headline_stored():
    load()
    assert not Scenario.objects.filter(headline_risk__isnull=True).exists()
