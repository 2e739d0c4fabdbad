"""A reorder plan made from a history's fit (``Kind.params_from_fit``).

The fitted demand (Poisson, negative binomial or the observed amounts as a
table) in the history's period. A history says nothing about the lead time or
the service wanted, so the plan starts from a lead time of one period and a
95 % cycle service level, both named in its notes for the analyst to set.
"""

from __future__ import annotations

from planner.count_law import CountLaw
from planner.formatting import periods
from planner.kinds.reorder_plan.params import ReorderPlanParams

START_LEAD_TIME = 1
START_TARGET = 0.95


def params_from_fit(fitted, *, start: int, high: int | None, horizon: int) -> ReorderPlanParams | None:
    """``start``, ``high`` and ``horizon`` (a stock plan's inputs) do not enter a reorder plan."""
    if getattr(fitted, "record", "history") != "history":  # a repair log's fit: not a stock record
        return None
    if fitted.demand is None:
        raise ValueError(
            "A reorder plan needs the demand itself: upload the units in and out, not only the stock levels."
        )
    try:
        return ReorderPlanParams(
            demand=CountLaw.from_json(fitted.demand),
            target=START_TARGET,
            lead_time=START_LEAD_TIME,
            period=fitted.period,
        )
    except ValueError as refusal:
        raise ValueError(f"A reorder plan cannot hold this fit as it stands: {refusal}.") from None


def fit_note(fitted) -> str:
    return (
        f"The lead time ({periods(START_LEAD_TIME, fitted.period)}) and the {START_TARGET:.0%} cycle service level "
        "are starting values, not from the history: set your own with Edit."
    )
