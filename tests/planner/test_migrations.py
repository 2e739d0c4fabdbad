"""Migrations keep old rows working: 0002 renames the first release's kind and starts the headline empty; 0003
gives every plan version 1 and records it as the start of its history."""

import pytest
from django.db import connection
from django.db.migrations.executor import MigrationExecutor

from planner.models import Scenario, ScenarioVersion
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


@pytest.mark.django_db(transaction=True)
def test_plans_saved_before_versions_start_their_history_at_version_1(owner):
    executor = MigrationExecutor(connection)
    executor.migrate([("planner", "0002_stock_plan_headline")])
    old_apps = executor.loader.project_state([("planner", "0002_stock_plan_headline")]).apps
    old = old_apps.get_model("planner", "Scenario").objects.create(
        owner_id=owner.pk,
        title="Rye loaf shelf",
        notes="Back shelf.",
        parameters={"start": 4, "horizon": 12, "step_method": "nearest", "up": 0.3, "down": 0.4},
        stockout_target=0.05,
        overflow_target=0.01,
        headline_risk=0.2,
        headline_span="12 days",
    )
    executor = MigrationExecutor(connection)
    executor.loader.build_graph()
    executor.migrate(executor.loader.graph.leaf_nodes())
    scenario = Scenario.objects.get(pk=old.pk)
    first = ScenarioVersion.objects.get(scenario=scenario)
    assert scenario.version == first.number == 1
    assert (first.saved_by_id, first.saved_at, first.title, first.notes) == (
        owner.pk,
        old.updated,
        old.title,
        old.notes,
    )
    assert (first.parameters, first.overflow_target, first.headline_risk) == (old.parameters, 0.01, 0.2)
