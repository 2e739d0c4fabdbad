"""What-if changes on a saved rate-table pool: merged here (not in the form), described in the planner's words.

Repair speed and failure factor scale every rate of their column, so a what-if keeps the table's shape
(a contractor who slows down when several units wait still does, only faster or slower throughout).
"""

from __future__ import annotations

from collections.abc import Mapping

from planner.formatting import number
from planner.kinds.rate_table.params import RateTableParams
from planner.pool_words import duration

CHANGEABLE = ("mission", "start_failed", "shortage_at")
# A ratio read back from two tables agrees with the factor applied to within a few roundings.
RATIO_TOLERANCE = 1e-12


def apply_changes(params: RateTableParams, changes: Mapping) -> RateTableParams:
    """``params`` with the what-if ``changes``; ValueError naming the input when they do not fit."""
    failure, repair = changes.get("failure_factor"), changes.get("repair_speed")
    if failure is not None or repair is not None:
        params = params.scaled(failure=1.0 if failure is None else failure, repair=1.0 if repair is None else repair)
    return params.replace(**{name: changes[name] for name in CHANGEABLE if changes.get(name) is not None})


def _factor(saved: tuple[float, ...], variant: tuple[float, ...]) -> float | None:
    """The one factor taking ``saved`` to ``variant`` (None when the rows changed by different factors)."""
    ratios = [new / old for old, new in zip(saved, variant, strict=True) if old > 0]
    if ratios and all(abs(ratio - ratios[0]) <= RATIO_TOLERANCE * ratios[0] for ratio in ratios):
        return ratios[0]
    return None


def _scaling(what: str, saved: tuple[float, ...], variant: tuple[float, ...]) -> list[str]:
    if len(saved) != len(variant):
        return [f"{what} table changed"]
    if saved == variant:
        return []
    factor = _factor(saved, variant)
    return [f"{what} × {number(factor)}" if factor is not None else f"{what} changed"]


def describe_changes(saved: RateTableParams, variant: RateTableParams) -> list[str]:
    """The inputs of ``variant`` that differ from ``saved``: 'repair rates × 1.5', 'mission 720 hours → 360 hours'."""
    unit = saved.time_unit
    inputs = [
        ("mission", "mission", lambda value: duration(value, unit)),
        ("units failed at the start", "start_failed", number),
        ("short at", "shortage_at", lambda value: f"{number(value)} or more failed"),
    ]
    lines = _scaling("failure rates", saved.failure_rates, variant.failure_rates)
    lines += _scaling("repair rates", saved.repair_rates, variant.repair_rates)
    for words, name, say in inputs:
        old, new = getattr(saved, name), getattr(variant, name)
        if old != new:
            lines.append(f"{words} {say(old)} → {say(new)}")
    return lines
