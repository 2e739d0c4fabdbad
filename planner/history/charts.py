"""Charts of a history and its fit as plotly JSON dicts, each with a one-sentence text alternative and its table.

Shapes as the kinds' charts (``{"figure", "summary", "table"}``), built with
``planner.chart_layout``; the page draws them with ``PlannerCharts.draw``.
"""

from __future__ import annotations

import numpy as np

from planner.chart_layout import GRID, INK, NORMAL, OVERFLOW, STOCKOUT, TARGET, as_list, layout, line, log_range
from planner.formatting import number, period_name, probabilities, probability
from planner.history.fit import CREDIBLE, HistoryFit, RangeResult, SideFit
from planner.history_file import History
from walkmath.profile import WEEKDAYS

FAMILY_COLOURS = {"poisson": TARGET, "negative_binomial": OVERFLOW}
FAMILY_NAMES = {"poisson": "Poisson fit", "negative_binomial": "negative-binomial fit"}


def _chart(figure: dict, summary: str, table: str) -> dict:
    return {"figure": figure, "summary": summary, "table": table}


def series_chart(history: History) -> dict:
    """The history as read: the level, or units in and out, period by period."""
    dates = [str(day) for day in history.dates]
    name = period_name(history.period)
    if history.shape == "levels":
        fig = {
            "data": [line(dates, history.levels, "stock level", INK, width=1.5)],
            "layout": layout("Stock level as recorded", "date", "stock (units)"),
        }
        summary = (
            f"{len(dates):,} {period_name(history.period, 2)} of stock levels from {dates[0]} to {dates[-1]}, "
            f"between {number(history.levels.min())} and {number(history.levels.max())} units."
        )
    else:
        fig = {
            "data": [
                line(dates, history.arrivals, "in (deliveries)", OVERFLOW, width=1.2),
                line(dates, history.demand, "out (demand)", STOCKOUT, width=1.2),
            ],
            "layout": layout(f"Units in and out each {name}", "date", f"units a {name}"),
        }
        summary = (
            f"{len(dates):,} {period_name(history.period, 2)} from {dates[0]} to {dates[-1]}: on average "
            f"{number(history.arrivals.mean())} units in and {number(history.demand.mean())} out a {name}."
        )
    fig["layout"]["xaxis"]["type"] = "date"
    return _chart(fig, summary, "history")


def frequency_chart(side: SideFit, period: str) -> dict:
    """How many periods saw each amount, beside the number each fitted law expects."""
    name = period_name(period)
    found = side.recommendation
    subject = {"deliveries": "units in", "demand": "units out", "change": "change"}[side.what]
    if not side.count_fits:  # changes both ways: the observed law only
        fit = found.empirical
        fig = {
            "data": [_bars(fit.steps, fit.observed, f"{period_name(period, 2)} seen")],
            "layout": layout(
                "How often each change in the level happened",
                f"change in one {name} (units)",
                f"{period_name(period, 2)}",
            ),
        }
        fig["data"].append(
            line(fit.law.steps, fit.law.probs * fit.periods, "observed law, smoothed", INK, width=1.5, markers=True)
        )
        summary = (
            f"The change in one {name} ranged from {fit.steps[0]:+d} to {fit.steps[-1]:+d} units; "
            f"{fit.unseen} changes inside that range were never seen and keep a small chance."
        )
        return _chart(_closest(fig), summary, "frequencies")
    first = next(iter(found.goodness.values()))
    counts = [row.count for row in first.table]
    labels = [f"{row.count}+" if row.and_above else str(row.count) for row in first.table]
    fig = {
        "data": [_bars(labels, [row.observed for row in first.table], f"{period_name(period, 2)} seen")],
        "layout": layout(
            f"{side.what.capitalize()}: observed against fitted", f"{subject} in one {name}", period_name(period, 2)
        ),
    }
    fig["layout"]["xaxis"]["type"] = "category"
    for family, check in found.goodness.items():
        fitted = [row.fitted for row in check.table]
        fig["data"].append(line(labels, fitted, FAMILY_NAMES[family], FAMILY_COLOURS[family], width=2, markers=True))
    verdicts = [
        f"{FAMILY_NAMES[family]} chi-square p = {check.p_value:.2g}"
        if check.p_value is not None
        else f"{FAMILY_NAMES[family]}: too few {period_name(period, 2)} to test"
        for family, check in found.goodness.items()
    ]
    summary = f"{side.what.capitalize()} from {counts[0]} to {counts[-2]} units in one {name}; {'; '.join(verdicts)}."
    return _chart(_closest(fig), summary, "frequencies")


def _bars(x, y, name: str) -> dict:
    return {
        "type": "bar",
        "x": as_list(x),
        "y": as_list(y),
        "name": name,
        "marker": {"color": GRID, "line": {"color": NORMAL, "width": 0.5}},
    }


def _closest(fig: dict) -> dict:
    fig["layout"].update(bargap=0.08, hovermode="x unified")
    return fig


def weekday_chart(fit: HistoryFit) -> dict | None:
    """Mean demand by weekday from the weekday test, with the week's mean; None without a test."""
    profile = fit.profile
    if profile is None:
        return None
    overall = float(np.dot(profile.means, profile.days) / sum(profile.days))
    fig = {
        "data": [_bars(list(WEEKDAYS), profile.means, "mean demand")],
        "layout": layout("Mean demand by weekday", "weekday", "units a day"),
    }
    fig["data"][0]["marker"]["color"] = "#9cc4bd" if profile.supported else GRID
    fig["data"].append(line(list(WEEKDAYS), [overall] * 7, "every day alike", INK, width=1.5, dash="dash"))
    fig["layout"]["xaxis"]["type"] = "category"
    busiest = WEEKDAYS[int(np.argmax(profile.means))]
    quietest = WEEKDAYS[int(np.argmin(profile.means))]
    verdict = "the days differ" if profile.supported else "no clear difference between the days"
    summary = (
        f"Mean demand from {number(min(profile.means))} ({quietest}) to {number(max(profile.means))} ({busiest}) "
        f"units a day; test p = {profile.p_value:.2g}: {verdict}."
    )
    return _chart(_closest(fig), summary, "laws")


def risk_chart(result: RangeResult, period: str) -> dict:
    """Stock-out (and overflow) risk by period from the fitted laws, inside its credible range."""
    name = period_name(period)
    x = np.arange(result.inputs.horizon + 1)
    band = result.band
    share = f"{100 * CREDIBLE:g} %"
    data, curves = [], []
    sides = [("stock-out", STOCKOUT, result.outlook.stockout, band and (band.stockout_low, band.stockout_high))]
    if result.inputs.high is not None:
        sides.append(("overflow", OVERFLOW, result.outlook.overflow, band and (band.overflow_low, band.overflow_high)))
    for label, colour, curve, edges in sides:
        curves.append(curve)
        if edges is not None:
            low, high = edges
            curves += [low, high]
            data.append(_edge(x, low, f"{label}, {share} credible range (low)", colour, fill=False))
            data.append(_edge(x, high, f"{label}, {share} credible range", colour, fill=True))
        data.append(line(x, curve, f"{label}, fitted laws", colour, hover=probabilities))
    fig = {
        "data": data,
        "layout": layout(
            f"Chance of a {'stock-out or overflow' if len(sides) > 1 else 'stock-out'} by each {name}",
            name,
            "probability",
            log_switch=True,
            y_range=log_range(*curves),
        ),
    }
    fig["layout"]["legend"]["traceorder"] = "normal"  # plotly reverses a legend with filled ranges otherwise
    days = period_name(period, 2)
    summary = f"From the fitted laws, the chance of a stock-out within {result.inputs.horizon} {days} is "
    summary += probability(result.stockout)
    if band is not None:
        low, high = band.stockout_interval
        summary += f" ({share} credible range {probability(low)} to {probability(high)}, {band.draws} draws, "
        summary += f"seed {band.seed})"
    if result.overflow is not None:
        summary += f"; of an overflow {probability(result.overflow)}"
        if band is not None:
            low, high = band.overflow_interval
            summary += f" (range {probability(low)} to {probability(high)})"
    return _chart(fig, summary + ".", "range")


def _edge(x, y, name: str, colour: str, *, fill: bool) -> dict:
    """One edge of a credible range; the upper edge fills down to the lower one drawn just before it."""
    trace = line(x, y, name, colour, width=0.5, hover=probabilities)
    trace["line"]["dash"] = "dot"
    if fill:
        trace["fill"] = "tonexty"
        trace["fillcolor"] = _tint(colour)
    else:
        trace["showlegend"] = False
    return trace


def _tint(colour: str, alpha: float = 0.18) -> str:
    red, green, blue = (int(colour[i : i + 2], 16) for i in (1, 3, 5))
    return f"rgba({red},{green},{blue},{alpha})"


def fit_charts(fit: HistoryFit) -> dict[str, dict]:
    charts = {f"freq-{side.what}": frequency_chart(side, fit.history.period) for side in fit.sides}
    weekly = weekday_chart(fit)
    if weekly is not None:
        charts["weekdays"] = weekly
    return charts
