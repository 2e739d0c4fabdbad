"""A stock plan made from a history's fit (``Kind.params_from_fit``).

Deliveries and demand as fitted (Poisson, negative binomial or the observed
amounts as a table), or the observed change table of a level history; the
period of the history; start stock, capacity and horizon from the fit page.
Unmet demand is lost and stock beyond the capacity is turned away, the rules
the fit page's risk uses, so the plan's first figures match the page's.
"""

from __future__ import annotations

from planner.kinds.stock_plan.params import CountLaw, StockPlanParams


def params_from_fit(fitted, *, start: int, high: int | None, horizon: int) -> StockPlanParams | None:
    if getattr(fitted, "record", "history") != "history":  # a repair log's fit: not a stock record
        return None
    common = {
        "period": fitted.period,
        "start": start,
        "low": 0,
        "high": high,
        "horizon": horizon,
        "below": "lost",
        "above": "spill",
    }
    try:
        if fitted.change_table:
            return StockPlanParams(step_method="table", table=fitted.change_table, **common)
        arrivals = CountLaw.from_json(fitted.arrivals) if fitted.arrivals else None
        return StockPlanParams(
            step_method="net",
            arrivals=arrivals,
            demand=CountLaw.from_json(fitted.demand),
            profile=fitted.weekday_factors,
            **common,
        )
    except ValueError as refusal:
        raise ValueError(f"A stock plan cannot hold this fit as it stands: {refusal}.") from None


def fit_note(fitted) -> str:
    note = "Unmet demand is lost and stock beyond the capacity is turned away."
    if fitted.weekday_factors:
        note += f" Day 1 is a {fitted.first_weekday}, the day after the history ends."
    return note
