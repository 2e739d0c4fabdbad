"""Write services: full_clean before save, nothing half-written."""

import pytest
from django.core.exceptions import ValidationError

from planner import services
from planner.models import Scenario

pytestmark = pytest.mark.django_db


def test_create_refuses_bad_targets_and_saves_nothing(owner, small_params):
    with pytest.raises(ValidationError):
        services.scenario_create(owner=owner, title="Seed tray", params=small_params, stockout_target=1.2)
    with pytest.raises(ValidationError):
        services.scenario_create(owner=owner, title="", params=small_params)
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
    assert (fresh.title, fresh.walk_params.start, fresh.stockout_target) == ("Rye loaf shelf, winter", 6, 0.01)


def test_copy_keeps_the_source_and_marks_a_variant(scenario, outsider, small_params):
    variant = services.scenario_copy(scenario=scenario, owner=outsider, params=small_params.replace(horizon=30))
    assert variant.pk != scenario.pk and variant.owner == outsider
    assert variant.title == "Rye loaf shelf (what-if)"
    assert variant.walk_params.horizon == 30
    assert Scenario.objects.get(pk=scenario.pk).walk_params.horizon == 12


def test_delete(scenario):
    services.scenario_delete(scenario=scenario)
    assert not Scenario.objects.exists()
