"""Charts of a spares pool as plotly JSON dicts, each with a one-sentence text alternative and its table.

Layout and colours come from ``planner.chart_layout``; times are in the pool's own unit. Risks are
drawn on a log axis by default where decisions turn on small values (a linear/log switch on each).
"""

from __future__ import annotations

from planner import pool_charts
from planner.chart_layout import (
    INK,
    NORMAL,
    OVERFLOW,
    STOCKOUT,
    add_vline,
    layout,
    line,
    log_range,
    target_line,
)
from planner.formatting import probabilities, probability
from planner.kinds.spares_pool.compute import SparesResult
from planner.pool_charts import chart, whole_numbers
from planner.pool_words import count, share

CREW_DASH = {-1: "dot", 0: None, 1: "dash"}


def availability_chart(result: SparesResult) -> dict:
    """Long-run chance of being short by number of spares, one line per crew count, and the target."""
    params = result.params
    target = 1.0 - params.availability_target
    curves = result.spares_long_run
    fig = {
        "data": [],
        "layout": layout(
            "Long-run chance of a shortage, by spares and crews",
            "spares",
            "unavailability (share of time short)",
            log_switch=True,
            y_type="log",
            y_range=log_range(*(c.unavailability for c in curves.values()), [target]),
        ),
    }
    for crews, curve in curves.items():
        shift = crews - params.crews
        colour = STOCKOUT if shift == 0 else NORMAL
        name = count(crews, "crew")
        fig["data"].append(
            line(
                curve.counts,
                curve.unavailability,
                name,
                colour,
                width=2.5 if shift == 0 else 1.8,
                dash=CREW_DASH[shift],
                markers=True,
                hover=probabilities,
            )
        )
    own = curves[params.crews]
    fig["data"].append(target_line(own.counts, target, "availability target"))
    whole_numbers(fig, own.counts)
    add_vline(fig, params.spares, "planned", INK)
    needed = result.spares_for_availability
    if needed is not None:
        summary = (
            f"With {count(params.crews, 'repair crew')}, {count(needed, 'spare')} keep the long-run availability at or "
            f"above the target {share(params.availability_target)}"
        )
    else:
        summary = (
            f"With {count(params.crews, 'repair crew')}, no number of spares up to "
            f"{result.availability_searched_to:,} reaches the availability target "
            f"{share(params.availability_target)}"
        )
    return chart(fig, f"{summary}; now {share(result.availability)} with {count(params.spares, 'spare')}.", "by-spares")


def spares_risk_chart(result: SparesResult) -> dict:
    """Mission shortage risk by number of spares (the pool's crews), with the target."""
    curve = result.spares_risk
    params = result.params
    fig = {
        "data": [],
        "layout": layout(
            f"Mission shortage risk by spares ({count(params.crews, 'crew')})",
            "spares",
            "probability",
            log_switch=True,
            y_type="log",
            y_range=log_range(curve.shortage_risk if curve is not None else [], [result.risk_target]),
        ),
    }
    if curve is None:
        return chart(fig, "The mission risk by number of spares was too much work for one request.", "by-spares")
    fig["data"].append(
        line(
            curve.counts,
            curve.shortage_risk,
            "shortage during the mission",
            STOCKOUT,
            width=2,
            markers=True,
            hover=probabilities,
        )
    )
    fig["data"].append(target_line(curve.counts, result.risk_target, "mission target"))
    whole_numbers(fig, curve.counts)
    add_vline(fig, params.spares, "planned", INK)
    if curve.smallest is not None:
        summary = f"{count(curve.smallest, 'spare')} bring the mission risk within its target"
    elif curve.budget_reached:
        summary = (
            f"Up to {curve.searched_to:,} spares (as far as one request could work out) none brings the mission "
            "risk within its target"
        )
    else:
        summary = f"No number of spares up to {curve.searched_to:,} brings the mission risk within its target"
    return chart(fig, f"{summary} {probability(result.risk_target)} over {result.span}.", "by-spares")


def crews_chart(result: SparesResult) -> dict:
    """Long-run unavailability and mission risk by number of repair crews."""
    long_run, risk = result.crews_long_run, result.crews_risk
    params = result.params
    target = 1.0 - params.availability_target
    if long_run is None:
        fig = {"data": [], "layout": layout("Risk by repair crews", "repair crews", "probability")}
        return chart(fig, "The risk by number of repair crews was too much work for one request.", "by-crews")
    arrays = [long_run.unavailability, [target, result.risk_target]]
    fig = {
        "data": [
            line(
                long_run.counts,
                long_run.unavailability,
                "long-run unavailability",
                OVERFLOW,
                width=2,
                markers=True,
                hover=probabilities,
            )
        ],
        "layout": layout(
            f"Risk by repair crews ({count(params.spares, 'spare')})",
            "repair crews",
            "probability",
            log_switch=True,
            y_type="log",
            y_range=log_range(*arrays, risk.shortage_risk if risk is not None else []),
        ),
    }
    if risk is not None:
        fig["data"].append(
            line(
                risk.counts,
                risk.shortage_risk,
                "shortage during the mission",
                STOCKOUT,
                width=2,
                markers=True,
                hover=probabilities,
            )
        )
    fig["data"].append(target_line(long_run.counts, target, "availability target", dash="dot"))
    fig["data"].append(target_line(long_run.counts, result.risk_target, "mission target"))
    whole_numbers(fig, long_run.counts)
    add_vline(fig, params.crews, "planned", INK)
    needed = result.crews_needed
    summary = (
        f"With {count(params.spares, 'spare')}, {count(needed, 'repair crew')} meet both targets"
        if needed is not None
        else f"With {count(params.spares, 'spare')}, no number of crews shown meets both targets"
    )
    return chart(fig, f"{summary} (now {count(params.crews, 'crew')}).", "by-crews")


CHARTS = {
    "availability": availability_chart,
    "mission": pool_charts.mission_chart,
    "spares_risk": spares_risk_chart,
    "failed": pool_charts.failed_chart,
    "crews": crews_chart,
    "start": pool_charts.start_chart,
}


def charts_for(result: SparesResult) -> dict[str, dict]:
    """Every chart: ``{"figure": {"data", "layout"}, "summary": str, "table": csv slug}``."""
    return {name: build(result) for name, build in CHARTS.items()}
