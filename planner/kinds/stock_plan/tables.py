"""The stock plan's CSV tables: header and rows of plain machine numbers (the shared writer adds the rest)."""

from __future__ import annotations

from planner.csv_writer import number
from planner.formatting import period_name
from planner.kinds.stock_plan.compute import StockResult

TABLES = {
    "stock-by-period": "stock level over the horizon",
    "risk-curves": "risk over the horizon",
    "risk-by-start": "risk by start stock",
}


def stock_rows(result: StockResult):
    name = period_name(result.period)
    yield ["scenario", name, "stock [units]", f"probability [stock on that {name}, plan still counted]"]
    probs = result.level_probs
    for period in range(probs.shape[0]):
        for level, prob in zip(result.outlook.levels, probs[period], strict=True):
            yield [None, period, int(level), number(prob)]


def risk_rows(result: StockResult):
    name = period_name(result.period)
    yield [
        "scenario",
        name,
        f"stock-out risk [probability of at least one by that {name}]",
        f"overflow risk [probability of at least one by that {name}]",
        f"expected lost demand [units in that {name}]",
        f"expected spilled [units in that {name}]",
        f"expected stock-out {period_name(result.period, 2)} [cumulative]",
        "stock-out risk, normal approximation [probability]",
    ]
    out = result.outlook
    for period in range(result.horizon + 1):
        yield [
            None,
            period,
            number(out.stockout[period]),
            number(out.overflow[period]),
            number(out.lost_units[period]),
            number(out.spilled_units[period]),
            number(out.stockout_periods[period]),
            number(result.normal_stockout[period]),
        ]


def risk_by_start_rows(result: StockResult):
    name = period_name(result.period)
    yield [
        "scenario",
        "start stock [units]",
        f"stock-out risk by {name} {result.horizon} [probability]",
        f"overflow risk by {name} {result.horizon} [probability]",
    ]
    risk = result.start_risk
    for start, stockout, overflow in zip(risk.starts, risk.stockout, risk.overflow, strict=True):
        yield [None, int(start), number(stockout), number(overflow)]


ROWS = {"stock-by-period": stock_rows, "risk-curves": risk_rows, "risk-by-start": risk_by_start_rows}
