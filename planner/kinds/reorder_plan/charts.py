"""Charts of a reorder plan as plotly JSON dicts, each with a one-sentence text alternative and its table.

Layout and colours come from ``planner.chart_layout``. Each chart shows the
range where the decision is made (values too small to see are trimmed); its
CSV table holds every value.
"""

from __future__ import annotations

import numpy as np

from planner.chart_layout import (
    INK,
    NORMAL,
    OVERFLOW,
    STOCKOUT,
    TARGET,
    add_vline,
    as_list,
    layout,
    line,
    log_range,
    target_line,
)
from planner.formatting import number, numbers, period_name, probabilities, probability, units
from planner.kinds.reorder_plan.compute import ReorderResult
from planner.kinds.reorder_plan.words import gap_words, measure_label, policy_rhythm, policy_service_label

# Amounts whose probability is below this share of the most likely one are left off the bar charts
# (the lead-time demand opens on a log axis, where its tail shows; the stock law on a linear one).
DEMAND_FLOOR = 1e-6
STOCK_FLOOR = 1e-5
# Service curves are drawn until the shortfall is this share of the target's (or of the normal rule's).
SHORTFALL_REACH = 1e-2
MARGIN = 2  # units shown beyond the marked points


def _chart(figure: dict, summary: str, table: str) -> dict:
    return {"figure": figure, "summary": summary, "table": table}


def _visible(probs: np.ndarray, floor: float, *must: int, offset: int = 0) -> slice:
    """Indices whose probability reaches ``floor`` of the largest, widened to hold the ``must`` points."""
    keep = np.flatnonzero(probs >= floor * probs.max())
    low, high = int(keep[0]), int(keep[-1])
    for point in must:
        low, high = min(low, point - offset - MARGIN), max(high, point - offset + MARGIN)
    return slice(max(low, 0), min(high, probs.size - 1) + 1)


def _decision_range(service: np.ndarray, shortfall: np.ndarray, target: float, marks, offset: int) -> slice:
    """From where the service reaches 0.1 % to where the shortfall is ``SHORTFALL_REACH`` of the target's,
    widened to hold the marked points."""
    start = np.flatnonzero(service >= 1e-3)
    done = np.flatnonzero(shortfall <= SHORTFALL_REACH * (1.0 - target))  # 1 - target: exact from 1/2 up
    low = min([int(start[0]) if start.size else 0] + [mark - offset for mark in marks]) - MARGIN
    high = max([int(done[0]) if done.size else service.size - 1] + [mark - offset for mark in marks]) + MARGIN
    return slice(max(low, 0), min(high, service.size - 1) + 1)


def _bars(x, y, name: str, color) -> dict:
    return {
        "type": "bar",
        "x": as_list(x),
        "y": as_list(y),
        "name": name,
        "marker": {"color": color, "opacity": 0.85},
        "customdata": probabilities(y),
        "hovertemplate": "%{x}: %{customdata}<extra></extra>",
    }


def lead_time_chart(result: ReorderResult) -> dict:
    """Demand over the protection interval, with the exact and the normal rule's reorder points marked."""
    law, plan, unit = result.protection, result.plan, result.unit
    shown = _visible(law.probs, DEMAND_FLOOR, plan.reorder_point, plan.normal_reorder_point, offset=int(law.levels[0]))
    fig = {
        "data": [_bars(law.levels[shown], law.probs[shown], "demand", OVERFLOW)],
        "layout": layout(
            f"Demand over {result.span}",
            f"demand ({unit})",
            "probability",
            log_switch=True,
            y_type="log",
            y_range=log_range(law.probs[shown]),
        ),
    }
    fig["layout"].update(bargap=0.05, hovermode="closest")
    add_vline(fig, plan.reorder_point + 0.5, f"reorder point {number(plan.reorder_point)}", INK)
    add_vline(fig, plan.normal_reorder_point + 0.5, f"normal rule {number(plan.normal_reorder_point)}", NORMAL)
    # The lower point's label reads leftwards and sits lower, so close points keep their labels apart.
    exact_label, normal_label = fig["layout"]["annotations"][-2:]
    lower = normal_label if plan.normal_reorder_point < plan.reorder_point else exact_label
    lower.update(xanchor="right", y=0.9)
    summary = (
        f"Demand over {result.span} averages {units(plan.mean_demand, unit)} "
        f"(standard deviation {number(plan.sigma_demand)}); it stays at or below the reorder point of "
        f"{units(plan.reorder_point, unit)} with probability {probability(law.cdf(plan.reorder_point))}."
    )
    return _chart(fig, summary, "lead-time-demand")


def service_chart(result: ReorderResult) -> dict:
    """Service against the reorder point: exact, and what the normal model claims; the gap highlighted."""
    plan, unit = result.plan, result.unit
    label = measure_label(plan.measure)
    marks = (plan.reorder_point, plan.normal_reorder_point)
    shown = _decision_range(plan.service, plan.shortfall, plan.target, marks, int(plan.points[0]))
    x = plan.points[shown]
    exact = line(x, plan.service[shown], f"{label}, exact", OVERFLOW, markers=True, hover=probabilities)
    claimed = line(
        x, plan.normal_service[shown], "what the normal model claims", NORMAL, width=2, dash="dash", hover=probabilities
    )
    fig = {
        "data": [exact, claimed, target_line(x, plan.target, f"target {probability(plan.target)}")],
        "layout": layout(f"{label.capitalize()} against the reorder point", f"reorder point ({unit})", label),
    }
    fig["layout"]["yaxis"]["tickformat"] = ".0%"
    points = {
        "exact reorder point": (plan.reorder_point, plan.achieved, INK),
        "normal rule's reorder point": (
            plan.normal_reorder_point,
            plan.normal_achieved,
            STOCKOUT if result.under_protects else TARGET,
        ),
    }
    for name, (point, achieved, color) in points.items():
        fig["data"].append(
            {
                "type": "scatter",
                "mode": "markers",
                "x": [point],
                "y": [achieved],
                "name": f"{name}: {units(point, unit)}",
                "marker": {"size": 12, "color": color, "symbol": "diamond", "line": {"color": "#fffdf8", "width": 1}},
                "customdata": [probability(achieved)],
                "hovertemplate": f"{name} %{{x}}: %{{customdata}}<extra></extra>",
            }
        )
    if plan.gap_units:
        low, high = sorted((plan.reorder_point, plan.normal_reorder_point))
        fig["layout"]["shapes"].append(
            {
                "type": "rect",
                "xref": "x",
                "yref": "paper",
                "x0": low,
                "x1": high,
                "y0": 0,
                "y1": 1,
                "fillcolor": STOCKOUT if result.under_protects else TARGET,
                "opacity": 0.12,
                "line": {"width": 0},
            }
        )
    summary = (
        f"The smallest reorder point meeting the {probability(plan.target)} {label} is "
        f"{units(plan.reorder_point, unit)} (exactly {probability(plan.achieved)}); the normal rule's "
        f"{units(plan.normal_reorder_point, unit)} is {gap_words(result)}."
    )
    return _chart(fig, summary, "service-by-reorder-point")


def stock_chart(result: ReorderResult) -> dict:
    """The review policy's long-run stock at the end of a review cycle; below 0, backorders."""
    policy, unit = result.policy, result.unit
    stock = policy.stock
    shown = _visible(stock.probs, STOCK_FLOOR, 0, offset=int(stock.levels[0]))
    levels, probs = stock.levels[shown], stock.probs[shown]
    short, kept = levels < 0, levels >= 0
    rhythm = policy_rhythm(result.params)
    lost = result.params.unmet == "lost"
    end = f"the end of each {period_name(result.period)}" if policy.review_cycle == 1 else "each count, before ordering"
    fig = {
        "data": [
            _bars(levels[kept], probs[kept], "on hand", OVERFLOW),
            _bars(levels[short], probs[short], "backordered", STOCKOUT),
        ],
        "layout": layout(
            f"Long-run stock at {end}",
            f"stock on hand ({unit}; demand beyond it is lost)"
            if lost
            else f"net stock ({unit}; below 0 = backordered)",
            "probability",
            log_switch=True,
            y_range=log_range(probs),
        ),
    }
    fig["layout"].update(bargap=0.05, hovermode="closest", barmode="overlay")
    measures = policy.measures
    summary = (
        f"Counting {rhythm} and ordering up to {units(policy.order_up_to, unit)} at or below "
        f"{units(policy.reorder_level, unit)}, the stock on hand averages {units(measures.mean_on_hand, unit)}; "
        f"the chance of a stock-out in a review cycle is {probability(measures.stockout_probability)} "
        f"and the fill rate {probability(measures.fill_rate)}"
        + (f"; {units(measures.mean_short, unit)} of demand lost per review cycle on average." if lost else ".")
    )
    return _chart(fig, summary, "long-run-stock")


def order_up_to_chart(result: ReorderResult) -> dict:
    """Service (and cost, when given) against the order-up-to level at the plan's order size."""
    policy, unit, p = result.policy, result.unit, result.params
    search = policy.search
    label = policy_service_label(p)
    normal = result.normal_order_up_to
    marks = [policy.order_up_to, normal] + ([policy.cheapest_level] if policy.cheapest_level is not None else [])
    if policy.every_level:
        inside = _decision_range(search.service, search.shortfall, p.target, marks, int(search.levels[0]))
    else:  # lost sales with a lead time: the few levels worked out, all shown, each marked
        inside = slice(0, search.levels.size)
    x = search.levels[inside]
    fig = {
        "data": [
            line(x, search.service[inside], label, OVERFLOW, markers=not policy.every_level, hover=probabilities),
            target_line(x, p.target, f"target {probability(p.target)}"),
        ],
        "layout": layout(
            f"Service{' and cost' if policy.cost is not None else ''} against the order-up-to level",
            f"order-up-to level ({unit}), reorder level {number(policy.gap)} below it",
            "service",
        ),
    }
    if p.measure == "cycle":
        fig["data"].insert(
            1, line(x, search.fill_rate[inside], "fill rate", INK, width=2, dash="dot", hover=probabilities)
        )
    fig["layout"]["yaxis"]["tickformat"] = ".0%"
    add_vline(fig, policy.order_up_to, f"smallest: {number(policy.order_up_to)}", INK)
    if normal != policy.order_up_to:
        add_vline(fig, normal, f"normal rule: {number(normal)}", NORMAL)
        fig["layout"]["annotations"][-1].update(y=0.8, xanchor="right" if normal < policy.order_up_to else "left")
    summary = (
        f"Counting {policy_rhythm(p)} with orders of at least {units(policy.gap, unit)}, the smallest "
        f"order-up-to level meeting the {probability(p.target)} target ({label}) is {units(policy.order_up_to, unit)}"
    )
    if policy.cost is not None:
        cost = line(x, policy.cost[inside], f"cost per {period_name(p.period)}", TARGET, width=2, hover=numbers)
        cost["yaxis"] = "y2"
        fig["data"].append(cost)
        fig["layout"]["yaxis2"] = {
            "title": {"text": f"cost / {period_name(p.period)}"},
            "overlaying": "y",
            "side": "right",
            "showgrid": False,
            "rangemode": "tozero",
        }
        fig["layout"]["margin"]["r"] = 72
        if policy.cheapest_level != policy.order_up_to:
            add_vline(fig, policy.cheapest_level, f"cheapest: {number(policy.cheapest_level)}", TARGET)
            fig["layout"]["annotations"][-1]["y"] = 0.9
        summary += (
            f", at {number(policy.cost_per_period)} per {period_name(p.period)}; the cheapest level meeting it is "
            f"{units(policy.cheapest_level, unit)} at {number(float(policy.cost[policy.cheapest_index]))}"
        )
    return _chart(fig, summary + ".", "order-up-to")


def charts_for(result: ReorderResult) -> dict[str, dict]:
    """Every chart this result has: ``{"figure": {"data", "layout"}, "summary": str, "table": csv slug}``."""
    charts = {"service": service_chart(result), "leadtime": lead_time_chart(result)}
    if result.policy is not None:
        charts["orderupto"] = order_up_to_chart(result)
        charts["stock"] = stock_chart(result)
    return charts
