"""What the comparison page shows of a stock plan: its stock-out curve and its key figures."""

from __future__ import annotations

from planner.chart_layout import as_list
from planner.formatting import period_name, periods, probability, units
from planner.kinds import Comparable
from planner.kinds.stock_plan.compute import StockResult


def _size(answer) -> tuple[str, float | None]:
    if answer is None:
        return "no capacity set", None
    if answer.value is None:
        return "none meets the target", None
    return units(answer.value), float(answer.value)


def comparable(result: StockResult) -> Comparable:
    params = result.params
    overflow = result.overflow_risk
    figures = [
        ("Horizon", periods(result.horizon, result.period), float(result.horizon)),
        ("Stock-out risk over the horizon", probability(result.stockout_risk), result.stockout_risk),
        ("Stock-out target", probability(result.stockout_target), result.stockout_target),
        ("Overflow risk over the horizon", "no capacity set" if overflow is None else probability(overflow), overflow),
        ("Start stock", units(params.start), float(params.start)),
        ("Capacity", "no limit" if params.high is None else units(params.high), params.high),
        ("Smallest start stock meeting the target", *_size(result.start_answer)),
        ("Smallest capacity meeting the target", *_size(result.capacity_answer)),
    ]
    return Comparable(
        curve=f"chance of at least one stock-out by each {period_name(result.period)}",
        period=result.period,
        x=as_list(result.periods),
        y=as_list(result.outlook.stockout),
        figures=figures,
    )
