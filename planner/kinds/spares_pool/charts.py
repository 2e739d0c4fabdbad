"""Charts of a spares pool as plotly JSON dicts, each with a one-sentence text alternative and its table.

Layout and colours come from ``planner.chart_layout``; times are in the pool's own unit. Risks are
drawn on a log axis by default where decisions turn on small values (a linear/log switch on each).
"""

from __future__ import annotations

import numpy as np

from planner.chart_layout import (
    INK,
    LEVEL_SCALE,
    NORMAL,
    OVERFLOW,
    STOCKOUT,
    add_hline,
    add_vline,
    as_list,
    layout,
    line,
    log_range,
    target_line,
)
from planner.formatting import probability
from planner.kinds.spares_pool.compute import SparesResult
from planner.kinds.spares_pool.words import count, share, unit_name

CREW_DASH = {-1: "dot", 0: None, 1: "dash"}
HEATMAP_FLOOR = 1e-9  # numbers failed never reaching this probability are trimmed from the heat map


def _chart(figure: dict, summary: str, table: str) -> dict:
    return {"figure": figure, "summary": summary, "table": table}


def _whole_numbers(fig: dict, counts) -> None:
    """Ticks at whole numbers only on a count axis (spares, crews, units failed) when few enough to read."""
    if len(counts) and int(counts[-1]) - int(counts[0]) <= 20:
        fig["layout"]["xaxis"]["dtick"] = 1


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
                hover=probability,
            )
        )
    own = curves[params.crews]
    fig["data"].append(target_line(own.counts, target, "availability target"))
    _whole_numbers(fig, own.counts)
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
    return _chart(
        fig, f"{summary}; now {share(result.availability)} with {count(params.spares, 'spare')}.", "by-spares"
    )


def mission_chart(result: SparesResult) -> dict:
    """Chance of at least one shortage by each time of the mission, and of being short at that time."""
    unit = result.unit
    x = result.times
    fig = {
        "data": [
            line(x, result.mission.reached, "at least one shortage by then", STOCKOUT, hover=probability),
            line(
                x, result.failed_law.shortage, "short at that time", OVERFLOW, width=2, dash="dash", hover=probability
            ),
            target_line(x, result.risk_target, "mission target"),
        ],
        "layout": layout(
            "Chance of a shortage during the mission",
            unit_name(unit, 2),
            "probability",
            log_switch=True,
            y_range=log_range(result.mission.reached, result.failed_law.shortage, [result.risk_target]),
        ),
    }
    summary = (
        f"Starting with every unit in working order, the chance of at least one shortage rises to "
        f"{probability(result.mission_risk)} over a mission of {result.span} "
        f"(target {probability(result.risk_target)})."
    )
    return _chart(fig, summary, "mission-risk")


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
        return _chart(fig, "The mission risk by number of spares was too much work for one request.", "by-spares")
    fig["data"].append(
        line(
            curve.counts,
            curve.shortage_risk,
            "shortage during the mission",
            STOCKOUT,
            width=2,
            markers=True,
            hover=probability,
        )
    )
    fig["data"].append(target_line(curve.counts, result.risk_target, "mission target"))
    _whole_numbers(fig, curve.counts)
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
    return _chart(fig, f"{summary} {probability(result.risk_target)} over {result.span}.", "by-spares")


def failed_chart(result: SparesResult) -> dict:
    """Heat map of P(k units failed at time t) over the mission, with the shortage line."""
    law = result.failed_law
    probs = law.probs
    keep = np.flatnonzero(probs.max(axis=0) >= HEATMAP_FLOOR)
    rows = slice(0, int(keep[-1]) + 1 if keep.size else probs.shape[1])
    shown = probs[:, rows]
    positive = shown[shown > 0]
    top = float(np.quantile(positive, 0.99)) if positive.size else 1.0
    unit = result.unit
    heat = {
        "type": "heatmap",
        "x": as_list(law.times),
        "y": as_list(law.failed[rows]),
        "z": as_list(shown.T),
        "colorscale": LEVEL_SCALE,
        "zmin": 0,
        "zmax": top,
        "colorbar": {"title": {"text": "probability"}, "thickness": 12},
        "hovertemplate": f"%{{x:.4g}} {unit_name(unit, 2)}<br>%{{y}} failed<br>P = %{{z:.3g}}<extra></extra>",
    }
    fig = {"data": [heat], "layout": layout("Units failed over the mission", unit_name(unit, 2), "units failed")}
    fig["layout"]["hovermode"] = "closest"
    if rows.stop <= 21:
        fig["layout"]["yaxis"]["dtick"] = 1
    add_hline(fig, result.params.spares + 0.5, "shortage above", STOCKOUT)
    final = law.probs[-1]
    likely = int(np.argmax(final))
    summary = (
        f"At the end of a mission of {result.span} the most likely number failed is {likely}; a shortage (more than "
        f"{count(result.params.spares, 'spare')} failed) has probability {probability(law.shortage[-1])} at that time."
    )
    return _chart(fig, summary, "failed-by-time")


def crews_chart(result: SparesResult) -> dict:
    """Long-run unavailability and mission risk by number of repair crews."""
    long_run, risk = result.crews_long_run, result.crews_risk
    params = result.params
    target = 1.0 - params.availability_target
    if long_run is None:
        fig = {"data": [], "layout": layout("Risk by repair crews", "repair crews", "probability")}
        return _chart(fig, "The risk by number of repair crews was too much work for one request.", "by-crews")
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
                hover=probability,
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
                hover=probability,
            )
        )
    fig["data"].append(target_line(long_run.counts, target, "availability target", dash="dot"))
    fig["data"].append(target_line(long_run.counts, result.risk_target, "mission target"))
    _whole_numbers(fig, long_run.counts)
    add_vline(fig, params.crews, "planned", INK)
    needed = result.crews_needed
    summary = (
        f"With {count(params.spares, 'spare')}, {count(needed, 'repair crew')} meet both targets"
        if needed is not None
        else f"With {count(params.spares, 'spare')}, no number of crews shown meets both targets"
    )
    return _chart(fig, f"{summary} (now {count(params.crews, 'crew')}).", "by-crews")


def start_chart(result: SparesResult) -> dict:
    """Mission shortage risk by the number of units already failed when the mission starts."""
    by_start = result.by_start
    fig = {
        "data": [],
        "layout": layout(
            "Mission shortage risk by units already failed at the start",
            "units failed at the start",
            "probability",
            log_switch=True,
            y_type="log",
            y_range=log_range(by_start["risk"] if by_start else [], [result.risk_target]),
        ),
    }
    if by_start is None:
        return _chart(
            fig,
            "The mission risk by units already failed was too much work for one request.",
            "risk-by-failed-at-start",
        )
    fig["data"].append(
        line(
            by_start["failed"],
            by_start["risk"],
            "shortage during the mission",
            STOCKOUT,
            width=2,
            markers=True,
            hover=probability,
        )
    )
    fig["data"].append(target_line(by_start["failed"], result.risk_target, "mission target"))
    _whole_numbers(fig, by_start["failed"])
    last = int(by_start["failed"][-1])
    summary = (
        f"With {count(last, 'unit')} already failed when a mission of {result.span} starts, the chance of a shortage "
        f"is {probability(float(by_start['risk'][-1]))}; with none, {probability(float(by_start['risk'][0]))}."
    )
    return _chart(fig, summary, "risk-by-failed-at-start")


CHARTS = {
    "availability": availability_chart,
    "mission": mission_chart,
    "spares_risk": spares_risk_chart,
    "failed": failed_chart,
    "crews": crews_chart,
    "start": start_chart,
}


def charts_for(result: SparesResult) -> dict[str, dict]:
    """Every chart: ``{"figure": {"data", "layout"}, "summary": str, "table": csv slug}``."""
    return {name: build(result) for name, build in CHARTS.items()}
