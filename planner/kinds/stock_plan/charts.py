"""Charts of a stock plan as plotly JSON dicts, each with a one-sentence text alternative and its table.

The browser draws them with the plotly.js copy in our static files. Layout and
colours come from ``planner.chart_layout``; every time axis is counted in the
plan's own period.
"""

from __future__ import annotations

import numpy as np

from planner.chart_layout import (
    INK,
    NORMAL,
    OVERFLOW,
    STOCKOUT,
    add_hline,
    add_vline,
    as_list,
    heatmap,
    layout,
    line,
    log_range,
    rounded,
    target_line,
)
from planner.formatting import period_name, probabilities, probability, units
from planner.kinds.stock_plan.compute import StockResult

MAX_HEATMAP_CELLS = 12_000  # beyond this the heat map shows every k-th period (a chart, not the table: CSV has all)
HEATMAP_FLOOR = 1e-9  # stock levels never reaching this probability are trimmed from the heat map


def _chart(figure: dict, summary: str, table: str) -> dict:
    return {"figure": figure, "summary": summary, "table": table}


def _quantile(levels: np.ndarray, probs: np.ndarray, q: float) -> int | None:
    total = float(probs.sum())
    if total <= 0:
        return None
    return int(levels[min(np.searchsorted(np.cumsum(probs) / total, q), levels.size - 1)])


def outlook_chart(result: StockResult) -> dict:
    """Heat map of P(stock at period n); rows that never reach ``HEATMAP_FLOOR`` are trimmed."""
    probs = result.level_probs
    levels = result.outlook.levels
    keep = np.flatnonzero(probs.max(axis=0) >= HEATMAP_FLOOR)
    rows = slice(keep[0], keep[-1] + 1) if keep.size else slice(0, levels.size)
    level_count = rows.stop - rows.start
    stride = max(1, -(-probs.shape[0] * level_count // MAX_HEATMAP_CELLS))
    shown = probs[::stride, rows]
    # Colour saturates at the 99th percentile of the cells in use, so the early point mass does not wash
    # out the spread later on; hover still reads the exact value.
    positive = shown[shown > 0]
    top = float(np.quantile(positive, 0.99)) if positive.size else 1.0
    name = period_name(result.period)
    heat = heatmap(
        result.periods[::stride],
        levels[rows],
        rounded(shown.T),  # colour cells: 4 significant digits (the CSV has every digit)
        top=top,
        hover=f"{name} %{{x}}<br>stock %{{y}} units<br>P = %{{z:.3g}}<extra></extra>",
    )
    fig = {"data": [heat], "layout": layout("Stock level over the horizon", name, "stock (units)")}
    fig["layout"]["hovermode"] = "closest"
    add_hline(fig, result.params.low - 0.5, "safety floor", STOCKOUT)
    if result.params.high is not None:
        add_hline(fig, result.params.high + 0.5, "capacity", OVERFLOW)
    final = result.outlook.final
    low, high = _quantile(final.levels, final.probs, 0.05), _quantile(final.levels, final.probs, 0.95)
    counted = " (of the outcomes still counted)" if "stop" in (result.params.below, result.params.above) else ""
    summary = (
        f"Stock by {name} {result.horizon}: between {units(low)} and {units(high)} with 90 % probability{counted}, "
        f"from a start of {units(result.params.start)}."
        if low is not None
        else f"Every plan path has stopped by {name} {result.horizon}."
    )
    return _chart(fig, summary, "stock-by-period")


def risk_chart(result: StockResult) -> dict:
    """Chance of at least one stock-out / overflow by period n, with the target lines."""
    x = result.periods
    name = period_name(result.period)
    y_range = log_range(result.outlook.stockout, result.outlook.overflow, [result.stockout_target])
    fig = {
        "data": [
            line(x, result.outlook.stockout, "stock-out", STOCKOUT, hover=probabilities),
            target_line(x, result.stockout_target, "stock-out target"),
        ],
        "layout": layout(
            f"Chance of a stock-out by each {name}", name, "probability", log_switch=True, y_range=y_range
        ),
    }
    summary = (
        f"The chance of at least one stock-out rises to {probability(result.stockout_risk)} over "
        f"{result.span} (target {probability(result.stockout_target)})"
    )
    if result.params.high is not None:
        fig["data"].append(line(x, result.outlook.overflow, "overflow", OVERFLOW, hover=probabilities))
        fig["data"].append(target_line(x, result.overflow_target, "overflow target", dash="dot"))
        fig["layout"]["title"]["text"] = f"Chance of a stock-out or overflow by each {name}"
        summary += (
            f"; of at least one overflow to {probability(result.overflow_risk)} "
            f"(target {probability(result.overflow_target)})"
        )
    return _chart(fig, summary + ".", "risk-curves")


def start_chart(result: StockResult) -> dict:
    """Risk over the horizon for every start stock, the target lines and the current start."""
    risk = result.start_risk
    fig = {
        "data": [line(risk.starts, risk.stockout, "stock-out", STOCKOUT, width=2, markers=True, hover=probabilities)],
        "layout": layout(
            f"Risk by start stock over {result.span}",
            "start stock (units)",
            "probability",
            log_switch=True,
            y_type="log",
            y_range=log_range(risk.stockout, risk.overflow, [result.stockout_target]),
        ),
    }
    bounded = result.params.high is not None
    if bounded:
        fig["data"].append(
            line(risk.starts, risk.overflow, "overflow", OVERFLOW, width=2, markers=True, hover=probabilities)
        )
    if risk.starts.size:
        fig["data"].append(target_line(risk.starts, result.stockout_target, "stock-out target"))
        if bounded:
            fig["data"].append(target_line(risk.starts, result.overflow_target, "overflow target", dash="dot"))
    add_vline(fig, result.params.start, "start", INK)
    answer = result.start_answer
    if answer.value is not None:
        summary = f"The smallest start stock meeting the stock-out target is {units(answer.value)}"
    else:
        summary = (
            f"No start stock shown meets the stock-out target; the lowest risk is {probability(answer.best_risk)} "
            f"at {units(answer.best_at)}"
        )
    return _chart(fig, f"{summary} (now {units(result.params.start)}).", "risk-by-start")


def horizon_chart(result: StockResult) -> dict:
    """Stock at the horizon: exact (plans still counted) against the normal approximation."""
    final = result.outlook.final
    name = period_name(result.period)
    fig = {
        "data": [
            {
                "type": "bar",
                "x": as_list(final.levels),
                "y": as_list(final.probs),
                "name": "exact",
                "marker": {"color": OVERFLOW, "opacity": 0.85},
            },
        ],
        "layout": layout(
            f"Stock on {name} {result.horizon}",
            "stock (units)",
            "probability",
            log_switch=True,
            y_type="log",
            y_range=log_range(final.probs),
        ),
    }
    fig["layout"].update(bargap=0.05, hovermode="closest")
    normal = result.normal_final
    if normal is not None:
        # The normal curve is shown over the levels the exact plan can hold, where the two can be compared.
        inside = (normal.levels >= final.levels[0]) & (normal.levels <= final.levels[-1])
        label = "normal approximation (no floor or capacity)"
        fig["data"].append(line(normal.levels[inside], normal.probs[inside], label, NORMAL, width=2, dash="dash"))
    mode = int(final.levels[np.argmax(final.probs)]) if final.probs.size and final.probs.max() > 0 else None
    summary = f"On {name} {result.horizon} the most likely stock is {units(mode)}" + (
        "; the normal approximation is drawn beside the exact figures for comparison." if normal is not None else "."
    )
    return _chart(fig, summary, "stock-by-period")


CHARTS = {
    "outlook": outlook_chart,
    "risk": risk_chart,
    "start": start_chart,
    "horizon": horizon_chart,
}


def charts_for(result: StockResult) -> dict[str, dict]:
    """Every chart: ``{"figure": {"data", "layout"}, "summary": str, "table": csv slug}``."""
    return {name: build(result) for name, build in CHARTS.items()}
