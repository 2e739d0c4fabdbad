"""Migration 0002: rows of the first release keep working (their kind is renamed, the headline starts empty)."""

import pytest
from django.db import connection
from django.db.migrations.executor import MigrationExecutor

from planner.models import Scenario
from planner.reading import scenario_reading


@pytest.mark.django_db(transaction=True)
def test_first_release_rows_are_migrated(owner):
    executor = MigrationExecutor(connection)
    executor.migrate([("planner", "0001_initial")])
    old_apps = executor.loader.project_state([("planner", "0001_initial")]).apps
    OldScenario = old_apps.get_model("planner", "Scenario")
    old = OldScenario.objects.create(
        owner_id=owner.pk,
        title="Rye loaf shelf",
        kind="stock_walk",
        # Parameters exactly as the first release saved them.
        parameters={"start": 4, "horizon": 12, "low": 0, "high": 8, "below": "lost", "above": "spill"}
        | {"step_method": "nearest", "up": 0.3, "down": 0.4},
        stockout_target=0.05,
        overflow_target=0.05,
    )
    executor = MigrationExecutor(connection)
    executor.loader.build_graph()
    executor.migrate(executor.loader.graph.leaf_nodes())
    scenario = Scenario.objects.get(pk=old.pk)
    assert scenario.kind == "stock_plan" and scenario.headline_risk is None
    assert scenario.params.period == "day"
    assert scenario_reading(scenario=scenario).result.stockout_risk > 0
