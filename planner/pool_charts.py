"""Charts any pool of repairable units shows, whatever kind states it: the shortage risk over the
mission, the units failed over the mission, and the risk by units already failed at the start.

Plotly JSON dicts, each with a one-sentence text alternative and the CSV table holding its numbers
(``planner.pool_tables``). Each reads a kind's result through the names ``planner.pool_result``
lists; this module never learns a kind's parameters.
"""

from __future__ import annotations

import numpy as np

from planner.chart_layout import (
    OVERFLOW,
    STOCKOUT,
    add_hline,
    as_list,
    heatmap,
    layout,
    line,
    log_range,
    target_line,
)
from planner.formatting import probabilities, probability
from planner.pool_words import count

HEATMAP_FLOOR = 1e-9  # numbers failed never reaching this probability are trimmed from the heat map


def chart(figure: dict, summary: str, table: str) -> dict:
    return {"figure": figure, "summary": summary, "table": table}


def whole_numbers(fig: dict, counts) -> None:
    """Ticks at whole numbers only on a count axis (spares, crews, units failed) when few enough to read."""
    if len(counts) and int(counts[-1]) - int(counts[0]) <= 20:
        fig["layout"]["xaxis"]["dtick"] = 1


def mission_chart(result) -> dict:
    """Chance of at least one shortage by each time of the mission (``mission.reached``), and of being
    short at that time (``failed_law.shortage``), with the target."""
    times, mission, law, target = result.times, result.mission, result.failed_law, result.risk_target
    fig = {
        "data": [
            line(times, mission.reached, "at least one shortage by then", STOCKOUT, hover=probabilities),
            line(times, law.shortage, "short at that time", OVERFLOW, width=2, dash="dash", hover=probabilities),
            target_line(times, target, "mission target"),
        ],
        "layout": layout(
            "Chance of a shortage during the mission",
            result.unit_many,
            "probability",
            log_switch=True,
            y_range=log_range(mission.reached, law.shortage, [target]),
        ),
    }
    summary = (
        f"Starting with {result.start_words}, the chance of at least one shortage rises to "
        f"{probability(result.mission_risk)} over a mission of {result.span} (target {probability(target)})."
    )
    return chart(fig, summary, "mission-risk")


def failed_chart(result) -> dict:
    """Heat map of P(k units failed at time t) over the mission, with the line where shortages start."""
    law, many = result.failed_law, result.unit_many
    probs = law.probs
    keep = np.flatnonzero(probs.max(axis=0) >= HEATMAP_FLOOR)
    rows = slice(0, int(keep[-1]) + 1 if keep.size else probs.shape[1])
    shown = probs[:, rows]
    positive = shown[shown > 0]
    top = float(np.quantile(positive, 0.99)) if positive.size else 1.0
    hover = f"%{{x:.4g}} {many}<br>%{{y}} failed<br>P = %{{z:.3g}}<extra></extra>"
    heat = heatmap(law.times, law.failed[rows], as_list(shown.T), top=top, hover=hover)
    fig = {"data": [heat], "layout": layout("Units failed over the mission", many, "units failed")}
    fig["layout"]["hovermode"] = "closest"
    if rows.stop <= 21:
        fig["layout"]["yaxis"]["dtick"] = 1
    add_hline(fig, result.shortage_at - 0.5, "shortage above", STOCKOUT)
    likely = int(np.argmax(probs[-1]))
    summary = (
        f"At the end of a mission of {result.span} the most likely number failed is {likely}; a shortage "
        f"({result.shortage_words}) "
        f"has probability {probability(law.shortage[-1])} at that time."
    )
    return chart(fig, summary, "failed-by-time")


def start_chart(result) -> dict:
    """Mission shortage risk by the number of units already failed when the mission starts
    (``by_start``: {"failed", "risk", ...} arrays; None when the request left it out)."""
    by_start, risk_target, span = result.by_start, result.risk_target, result.span
    fig = {
        "data": [],
        "layout": layout(
            "Mission shortage risk by units already failed at the start",
            "units failed at the start",
            "probability",
            log_switch=True,
            y_type="log",
            y_range=log_range(by_start["risk"] if by_start else [], [risk_target]),
        ),
    }
    if by_start is None:
        return chart(
            fig,
            "The mission risk by units already failed was too much work for one request.",
            "risk-by-failed-at-start",
        )
    failed, risk = by_start["failed"], by_start["risk"]
    fig["data"].append(
        line(failed, risk, "shortage during the mission", STOCKOUT, width=2, markers=True, hover=probabilities)
    )
    fig["data"].append(target_line(failed, risk_target, "mission target"))
    whole_numbers(fig, failed)
    first = "none" if int(failed[0]) == 0 else count(int(failed[0]), "unit")
    summary = (
        f"With {count(int(failed[-1]), 'unit')} already failed when a mission of {span} starts, the chance of a "
        f"shortage is {probability(float(risk[-1]))}; with {first}, {probability(float(risk[0]))}."
    )
    return chart(fig, summary, "risk-by-failed-at-start")
