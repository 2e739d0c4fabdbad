"""Charts of a rate-table pool as plotly JSON dicts, each with a one-sentence text alternative and its table.

The mission, failed-unit and by-start charts are the ones every pool shows (``planner.pool_charts``);
the long-run law by number failed and the figures by repair speed are this kind's own. Layout and
colours come from ``planner.chart_layout``; times are in the pool's own unit.
"""

from __future__ import annotations

from planner import pool_charts
from planner.chart_layout import INK, OVERFLOW, STOCKOUT, add_vline, as_list, layout, line, log_range, target_line
from planner.formatting import number, probabilities, probability
from planner.kinds.rate_table.compute import RateTableResult
from planner.pool_charts import chart, whole_numbers
from planner.pool_words import share

# Repair speeds labelled on the log axis (every speed tried has its marker).
TICKED_SPEEDS = (0.25, 0.5, 1.0, 2.0, 4.0, 10.0)


def long_run_chart(result: RateTableResult) -> dict:
    """The long-run share of time at each number failed, the shortage levels in their own colour."""
    params, law = result.params, result.long_run_law
    failed = result.pool.failed
    short = failed >= params.shortage_at
    bars = {
        "type": "bar",
        "x": as_list(failed),
        "y": as_list(law),
        "name": "share of time",
        "marker": {"color": [STOCKOUT if flag else OVERFLOW for flag in short.tolist()]},
        "customdata": probabilities(law),
        "hovertemplate": "%{x} failed: %{customdata}<extra></extra>",
    }
    fig = {
        "data": [bars],
        "layout": layout(
            "Long-run share of time by units failed",
            "units failed",
            "share of time",
            log_switch=True,
            y_type="log",
            y_range=log_range(law),
        ),
    }
    fig["layout"]["hovermode"] = "closest"
    fig["layout"]["showlegend"] = False
    whole_numbers(fig, failed)
    add_vline(fig, params.shortage_at - 0.5, "short", STOCKOUT)
    summary = (
        f"In the long run the pool is short ({params.shortage_at} or more failed) {probability(result.unavailability)} "
        f"of the time, available {share(result.availability)}; {number(result.expected_failed)} units are failed on "
        "average."
    )
    return chart(fig, summary, "by-failed")


def speed_chart(result: RateTableResult) -> dict:
    """Long-run unavailability and mission risk by repair speed (times the table's repair rates), with targets."""
    curve = result.speeds
    target = 1.0 - result.availability_target
    arrays = [curve.unavailability, curve.risk] if curve is not None else []
    fig = {
        "data": [],
        "layout": layout(
            "Risk by repair speed",
            "repair speed (times the table's repair rates)",
            "probability",
            log_switch=True,
            y_type="log",
            y_range=log_range(*arrays, [target, result.risk_target]),
        ),
    }
    fig["layout"]["xaxis"]["type"] = "log"
    if curve is None:
        return chart(fig, "The risk by repair speed was too much work for one request.", "by-repair-speed")
    speeds = curve.speeds
    style = {"width": 2, "markers": True, "hover": probabilities}
    fig["data"] += [
        line(speeds, curve.unavailability, "long-run unavailability", OVERFLOW, **style),
        line(speeds, curve.risk, "shortage during the mission", STOCKOUT, **style),
        target_line(speeds, target, "availability target", dash="dot"),
        target_line(speeds, result.risk_target, "mission target"),
    ]
    ticks = [speed for speed in speeds.tolist() if speed in TICKED_SPEEDS]  # the rest too close on a log axis
    fig["layout"]["xaxis"]["tickvals"] = ticks
    fig["layout"]["xaxis"]["ticktext"] = [number(speed) for speed in ticks]
    add_vline(fig, 1.0, "as tabled", INK)
    needed = result.speed_needed
    if needed is not None:
        summary = f"Repairs {number(needed)} times as fast as tabled, or faster, meet both targets"
    elif curve.complete:
        summary = f"No repair speed up to {number(float(speeds[-1]))} times as fast as tabled meets both targets"
    else:
        summary = (
            f"Up to {number(float(speeds[-1]))} times as fast (as far as one request could work out) none meets "
            "both targets"
        )
    index = curve.at(1.0)
    now = f" (as tabled: unavailability {probability(curve.unavailability[index])})" if index is not None else ""
    return chart(fig, f"{summary}{now}.", "by-repair-speed")


def charts_for(result: RateTableResult) -> dict[str, dict]:
    """Every chart in page order: ``{"figure": {"data", "layout"}, "summary": str, "table": csv slug}``."""
    return {
        "mission": pool_charts.mission_chart(result),
        "long_run": long_run_chart(result),
        "failed": pool_charts.failed_chart(result),
        "repair_speed": speed_chart(result),
        "start": pool_charts.start_chart(result),
    }
