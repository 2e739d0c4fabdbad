"""Writes: every change to a scenario goes through one of these functions."""

from __future__ import annotations

from django.db import transaction

from planner.models import Scenario, ScenarioKind
from planner.params import StockWalkParams

VARIANT_SUFFIX = " (what-if)"


def scenario_create(
    *,
    owner,
    title: str,
    params: StockWalkParams,
    notes: str = "",
    stockout_target: float = 0.05,
    overflow_target: float = 0.05,
) -> Scenario:
    """A new stock-walk scenario owned by ``owner``; ValidationError if a field does not fit."""
    scenario = Scenario(
        owner=owner,
        title=title,
        notes=notes,
        kind=ScenarioKind.STOCK_WALK,
        parameters=params.to_json(),
        stockout_target=stockout_target,
        overflow_target=overflow_target,
    )
    scenario.full_clean()
    scenario.save()
    return scenario


def scenario_update(
    *,
    scenario: Scenario,
    title: str,
    params: StockWalkParams,
    notes: str = "",
    stockout_target: float,
    overflow_target: float,
) -> Scenario:
    scenario.title = title
    scenario.notes = notes
    scenario.parameters = params.to_json()
    scenario.stockout_target = stockout_target
    scenario.overflow_target = overflow_target
    scenario.full_clean()
    scenario.save(update_fields=["title", "notes", "parameters", "stockout_target", "overflow_target", "updated"])
    return scenario


def scenario_copy(
    *, scenario: Scenario, owner, params: StockWalkParams | None = None, title: str | None = None
) -> Scenario:
    """A new scenario for ``owner`` from ``scenario``, optionally with other parameters (a what-if variant)."""
    if title is None:
        title = (scenario.title[: 120 - len(VARIANT_SUFFIX)] + VARIANT_SUFFIX) if params else scenario.title
    return scenario_create(
        owner=owner,
        title=title,
        notes=scenario.notes,
        params=params or scenario.walk_params,
        stockout_target=scenario.stockout_target,
        overflow_target=scenario.overflow_target,
    )


def scenario_delete(*, scenario: Scenario) -> None:
    with transaction.atomic():
        scenario.delete()
