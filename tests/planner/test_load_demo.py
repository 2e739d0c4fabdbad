"""load_demo: the demo account and differently shaped scenarios of every kind, idempotent."""

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
    results = {s.title: scenario_reading(scenario=s).result for s in Scenario.objects.filter(kind="stock_plan")}
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


def test_demo_reorder_plans_show_the_normal_rule_both_ways():
    load()
    results = [scenario_reading(scenario=s).result for s in Scenario.objects.filter(kind="reorder_plan")]
    # A slow, lumpy item where the normal rule reorders too late, and a slow, steady one where it holds too much.
    slow = [r for r in results if r.params.demand.mean_count() < 1]
    assert [(r.reorder_point, r.normal_reorder_point) for r in slow if r.under_protects] == [(12, 7)]
    assert [(r.reorder_point, r.normal_reorder_point) for r in slow if r.over_protects] == [(1, 2)]
    assert any(r.params.review_period and r.policy is not None for r in results)  # a counted store, exact
    # a shelf whose empty days lose the sale: its review policy (the answer then) is worked out
    assert any(r.params.unmet == "lost" and r.policy is not None for r in results)
    assert all(not r.left_out for r in results)


def test_demo_spares_pools_show_each_standby():
    load()
    results = [scenario_reading(scenario=s).result for s in Scenario.objects.filter(kind="spares_pool")]
    assert sorted(r.params.standby for r in results) == ["cold", "hot", "warm"]
    # each sizing question is answered in the request, and at least one pool needs more than it holds
    assert all(r.spares_needed is not None and not r.left_out for r in results)
    assert any(r.spares_needed > r.params.spares for r in results)


def test_demo_rate_table_pool_asks_for_faster_repairs():
    load()
    (result,) = [scenario_reading(scenario=s).result for s in Scenario.objects.filter(kind="rate_table")]
    # the mixers miss both targets as tabled; every figure is worked out in the request
    assert not result.meets_availability and not result.meets_risk and not result.left_out
    assert result.speed_needed == 1.5 and result.recommendation.startswith("As tabled the pool is available")
