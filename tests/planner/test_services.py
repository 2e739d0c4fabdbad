"""Write services: full_clean before save, nothing half-written."""

import pytest
from django.core.exceptions import ValidationError

from planner import services
from planner.models import Scenario
from walkmath import ComputeTooLarge

pytestmark = pytest.mark.django_db


def test_create_refuses_bad_targets_and_saves_nothing(owner, small_params):
    with pytest.raises(ValidationError):
        services.scenario_create(
            owner=owner, kind="stock_plan", title="Seed tray", params=small_params, stockout_target=1.2
        )
    with pytest.raises(ValidationError):
        services.scenario_create(owner=owner, kind="stock_plan", title="", params=small_params)
    assert Scenario.objects.count() == 0


def test_headline_is_stored_at_save(owner, small_params):
    scenario = services.scenario_create(owner=owner, kind="stock_plan", title="Seed tray", params=small_params)
    # The same number straight from walkmath: stock-out risk at the horizon of the saved plan.
    expected = small_params.walk().outlook(small_params.horizon).stockout[-1]
    fresh = Scenario.objects.get(pk=scenario.pk)
    assert (fresh.headline_risk, fresh.headline_span) == (expected, "12 days")
    assert fresh.meets_target is bool(expected <= fresh.stockout_target)
    longer = small_params.replace(horizon=28)
    services.scenario_update(
        scenario=fresh, title="Seed tray", params=longer, stockout_target=0.05, overflow_target=0.05
    )
    again = Scenario.objects.get(pk=scenario.pk)
    assert again.headline_risk == longer.walk().outlook(28).stockout[-1]
    assert again.headline_span == "28 days (4 weeks)"


def test_a_plan_too_large_to_compute_is_not_saved(owner, small_params, settings):
    settings.PLANNER_COMPUTE_CAP = 1000
    settings.PLANNER_BACKGROUND_CAP = 1_000  # too large for a background worker too (tests/planner/background)
    with pytest.raises(ComputeTooLarge, match="shorten the horizon"):
        services.scenario_create(owner=owner, kind="stock_plan", title="Seed tray", params=small_params)
    assert Scenario.objects.count() == 0


def test_update_changes_fields(scenario, small_params):
    services.scenario_update(
        scenario=scenario,
        title="Rye loaf shelf, winter",
        params=small_params.replace(start=6),
        notes="",
        stockout_target=0.01,
        overflow_target=0.2,
    )
    fresh = Scenario.objects.get(pk=scenario.pk)
    assert (fresh.title, fresh.params.start, fresh.stockout_target) == ("Rye loaf shelf, winter", 6, 0.01)


def test_copy_keeps_the_source_under_a_new_name(scenario, outsider, small_params):
    variant = services.scenario_copy(
        scenario=scenario, owner=outsider, title="Rye, a month", params=small_params.replace(horizon=30)
    )
    assert variant.pk != scenario.pk and variant.owner == outsider
    assert variant.title == "Rye, a month" and variant.headline_span == "30 days"
    assert variant.params.horizon == 30
    assert Scenario.objects.get(pk=scenario.pk).params.horizon == 12


def test_delete(scenario):
    services.scenario_delete(scenario=scenario)
    assert not Scenario.objects.exists()
