"""Writes: every change to a scenario goes through one of these functions (keyword-only arguments).

Each save stores the plan's headline stock-out risk (computed through the read
service, with its cost check) so the scenario list never recomputes plans. A
plan too large to compute raises ``walkmath.ComputeTooLarge`` and nothing is
written.
"""

from __future__ import annotations

from django.db import transaction

from planner.kinds import get_kind
from planner.models import Scenario
from planner.reading import plan_headline


def _set_headline(scenario: Scenario, params) -> None:
    risk, span = plan_headline(
        kind=get_kind(scenario.kind),
        params=params,
        stockout_target=scenario.stockout_target,
        overflow_target=scenario.overflow_target,
    )
    scenario.headline_risk, scenario.headline_span = risk, span[:60]


def scenario_create(
    *,
    owner,
    kind: str,
    title: str,
    params,
    notes: str = "",
    stockout_target: float = 0.05,
    overflow_target: float = 0.05,
) -> Scenario:
    """A new scenario of ``kind`` owned by ``owner``; ValidationError if a field does not fit."""
    scenario = Scenario(
        owner=owner,
        title=title,
        notes=notes,
        kind=kind,
        parameters=params.to_json(),
        stockout_target=stockout_target,
        overflow_target=overflow_target,
    )
    scenario.full_clean()
    _set_headline(scenario, params)
    scenario.save()
    return scenario


def scenario_update(
    *,
    scenario: Scenario,
    title: str,
    params,
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
    _set_headline(scenario, params)
    fields = ["title", "notes", "parameters", "stockout_target", "overflow_target", "headline_risk", "headline_span"]
    scenario.save(update_fields=[*fields, "updated"])
    return scenario


def scenario_copy(*, scenario: Scenario, owner, title: str, params=None) -> Scenario:
    """A new scenario named ``title`` for ``owner`` from ``scenario``, optionally with other parameters (a what-if)."""
    return scenario_create(
        owner=owner,
        kind=scenario.kind,
        title=title,
        notes=scenario.notes,
        params=params if params is not None else scenario.params,
        stockout_target=scenario.stockout_target,
        overflow_target=scenario.overflow_target,
    )


def scenario_delete(*, scenario: Scenario) -> None:
    with transaction.atomic():
        scenario.delete()
