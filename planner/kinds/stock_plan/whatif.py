"""What-if changes on a saved stock plan: merged here (not in the form), described in the analyst's words."""

from __future__ import annotations

from collections.abc import Mapping

from planner.formatting import number, periods, rate
from planner.kinds.stock_plan.params import StockPlanParams


def apply_changes(params: StockPlanParams, changes: Mapping) -> StockPlanParams:
    """``params`` with the what-if ``changes``; ValueError naming the input when they do not fit.

    Changes that do not apply to the way the plan is stated (chances of one up
    or down on a demand-and-deliveries plan, say) are ignored.
    """
    values = {name: changes[name] for name in ("start", "horizon") if changes.get(name) is not None}
    if changes.get("no_capacity"):
        values["high"] = None
    elif changes.get("high") is not None:
        values["high"] = changes["high"]
    if params.step_method == "nearest":
        values.update({name: changes[name] for name in ("up", "down") if changes.get(name) is not None})
    if params.step_method == "table" and changes.get("table"):
        values["table"] = changes["table"]
    if params.step_method == "net":
        for prefix in ("arrivals", "demand"):
            law, mean = getattr(params, prefix), changes.get(f"{prefix}_mean")
            if mean is not None and law is not None and law.family in ("poisson", "negative_binomial"):
                values[prefix] = law.with_mean(mean)
        if changes.get("delivery_size") is not None and params.delivery_every:
            values["delivery_size"] = changes["delivery_size"]
    return params.replace(**values)


def _capacity(value) -> str:
    return "no limit" if value is None else f"{number(value)} units"


def describe_changes(saved: StockPlanParams, variant: StockPlanParams) -> list[str]:
    """The inputs of ``variant`` that differ from ``saved``: 'start stock 4 → 2 units', ..."""
    period = saved.period
    lines = []
    if variant.start != saved.start:
        lines.append(f"start stock {number(saved.start)} → {number(variant.start)} units")
    if variant.high != saved.high:
        lines.append(f"capacity {_capacity(saved.high)} → {_capacity(variant.high)}")
    if variant.horizon != saved.horizon:
        lines.append(f"horizon {periods(saved.horizon, period)} → {periods(variant.horizon, period)}")
    if (variant.up, variant.down) != (saved.up, saved.down):
        lines.append(f"chances of one up/one down {saved.up:g}/{saved.down:g} → {variant.up:g}/{variant.down:g}")
    if variant.table != saved.table:
        lines.append("change table " + ", ".join(f"{value}: {prob:g}" for value, prob in variant.table))
    for prefix, noun in (("demand", "mean demand"), ("arrivals", "mean supply")):
        old, new = getattr(saved, prefix), getattr(variant, prefix)
        if old is not None and new is not None and old.mean != new.mean:
            lines.append(f"{noun} {rate(old.mean, period)} → {rate(new.mean, period)}")
    if variant.delivery_size != saved.delivery_size:
        lines.append(f"delivery size {number(saved.delivery_size)} → {number(variant.delivery_size)} units")
    return lines
