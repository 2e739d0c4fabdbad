"""What-if changes on a saved reorder plan: merged here (not in the form), described in the analyst's words.

The service target is not among them: it is stored beside the plan for the
scenario list, and a what-if saved as a new plan keeps the saved one's.
"""

from __future__ import annotations

from collections.abc import Mapping

from planner.count_law import SCALABLE_FAMILIES
from planner.formatting import periods, rate, units
from planner.kinds.reorder_plan.params import ReorderPlanParams


def apply_changes(params: ReorderPlanParams, changes: Mapping) -> ReorderPlanParams:
    """``params`` with the what-if ``changes``; ValueError naming the input when they do not fit.

    Changes that do not apply to the plan as stated (a fixed lead time on a plan
    with a lead-time table, a mean on a fixed or table demand) are ignored.
    """
    values = {}
    if changes.get("demand_mean") is not None and params.demand.family in SCALABLE_FAMILIES:
        values["demand"] = params.demand.with_mean(changes["demand_mean"])
    if changes.get("lead_time") is not None and params.fixed_lead_time:
        values["lead_time"] = changes["lead_time"]
    for name in ("review_period", "order_quantity", "unmet"):
        if changes.get(name) is not None:
            values[name] = changes[name]
    return params.replace(**values)


def describe_changes(saved: ReorderPlanParams, variant: ReorderPlanParams) -> list[str]:
    """The inputs of ``variant`` that differ from ``saved``: 'lead time 4 days → 6 days', ..."""
    period, unit = saved.period, saved.unit
    lines = []
    if variant.demand != saved.demand:
        lines.append(
            f"mean demand {rate(saved.demand.mean_count(), period, unit)} → "
            f"{rate(variant.demand.mean_count(), period, unit)}"
        )
    if variant.lead_time != saved.lead_time:
        lines.append(f"lead time {periods(saved.lead_time, period)} → {periods(variant.lead_time, period)}")
    if variant.review_period != saved.review_period:
        lines.append(f"review period {_review(saved.review_period, period)} → {_review(variant.review_period, period)}")
    if variant.order_quantity != saved.order_quantity:
        lines.append(
            f"order quantity {_quantity(saved.order_quantity, unit)} → {_quantity(variant.order_quantity, unit)}"
        )
    if variant.unmet != saved.unmet:
        lines.append(f"when the shelf is empty: {_unmet(saved.unmet)} → {_unmet(variant.unmet)}")
    return lines


def _unmet(rule: str) -> str:
    return "customers wait" if rule == "backorder" else "the sale is lost"


def _review(value: int, period: str) -> str:
    return "watched all the time" if value == 0 else f"every {periods(value, period)}"


def _quantity(value, unit: str) -> str:
    return "not given" if value is None else units(value, unit)
