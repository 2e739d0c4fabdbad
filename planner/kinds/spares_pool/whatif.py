"""What-if changes on a saved spares pool: merged here (not in the form), described in the planner's words.

Failure and repair values are read the way the pool states them (an MTBF or a rate, a mean repair
time or a rate), so a what-if never switches between the two.
"""

from __future__ import annotations

from collections.abc import Mapping

from planner.formatting import number
from planner.kinds.spares_pool.params import SparesPoolParams
from planner.pool_words import duration, per

CHANGEABLE = ("spares", "crews", "units", "mission", "failure", "repair")


def apply_changes(params: SparesPoolParams, changes: Mapping) -> SparesPoolParams:
    """``params`` with the what-if ``changes``; ValueError naming the input when they do not fit."""
    return params.replace(**{name: changes[name] for name in CHANGEABLE if changes.get(name) is not None})


def _failure(params: SparesPoolParams, value: float) -> str:
    return duration(value, params.time_unit) if params.failure_style == "mtbf" else per(value, params.time_unit)


def _repair(params: SparesPoolParams, value: float) -> str:
    return duration(value, params.time_unit) if params.repair_style == "mean" else per(value, params.time_unit)


def describe_changes(saved: SparesPoolParams, variant: SparesPoolParams) -> list[str]:
    """The inputs of ``variant`` that differ from ``saved``: 'spares 2 → 4', 'repair crews 1 → 2', ..."""
    lines = []
    if variant.units != saved.units:
        lines.append(f"units needed {number(saved.units)} → {number(variant.units)}")
    if variant.spares != saved.spares:
        lines.append(f"spares {number(saved.spares)} → {number(variant.spares)}")
    if variant.crews != saved.crews:
        lines.append(f"repair crews {number(saved.crews)} → {number(variant.crews)}")
    if variant.mission != saved.mission:
        unit = saved.time_unit
        lines.append(f"mission {duration(saved.mission, unit)} → {duration(variant.mission, unit)}")
    if variant.failure != saved.failure:
        lines.append(f"{saved.failure_words} {_failure(saved, saved.failure)} → {_failure(saved, variant.failure)}")
    if variant.repair != saved.repair:
        lines.append(f"{saved.repair_words} {_repair(saved, saved.repair)} → {_repair(saved, variant.repair)}")
    return lines
