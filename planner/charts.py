"""Plotly figures for a ``StockOutlook``, built with plotly.graph_objects and sent as JSON.

The browser draws them with the plotly.js copy in our static files. Colours and
layout are the planner's own; probabilities get a linear/log switch because the
decisions turn on small risks.
"""

from __future__ import annotations

import math

import numpy as np
import plotly.graph_objects as go
from django.utils.html import json_script
from plotly.utils import PlotlyJSONEncoder

from planner.outlook import StockOutlook

INK = "#24303f"
STOCKOUT = "#c4553a"
OVERFLOW = "#2b7a84"
NORMAL = "#8b8f99"
TARGET = "#c98a12"
GRID = "#e6e1d6"
LEVEL_SCALE = [[0.0, "#fbf8f1"], [0.15, "#e3ede6"], [0.4, "#9cc4bd"], [0.7, "#4a8592"], [1.0, "#203648"]]
MAX_HEATMAP_PERIODS = 400  # beyond this the level heat map shows every k-th period
HEATMAP_FLOOR = 1e-9  # levels never reaching this probability are trimmed from the heat map
# Log axes open at this floor so a 1e-80 early-period value does not squeeze the decision range;
# smaller values are still in the data (pan or zoom to see them, or download the CSV).
LOG_FLOOR = 1e-12


def _log_range(*arrays) -> list[float]:
    values = np.concatenate([np.ravel(np.asarray(a, dtype=float)) for a in arrays])
    positive = values[values > 0]
    if positive.size == 0:
        return [math.log10(LOG_FLOOR), 0.05]
    low = max(float(positive.min()), LOG_FLOOR)
    high = max(float(positive.max()), low * 10)
    return [math.floor(math.log10(low)), math.log10(high) + 0.1]


def _layout(
    title: str, x_title: str, y_title: str, *, log_switch: bool = False, y_type: str = "linear", log_range=None
) -> dict:
    layout = {
        "title": {"text": title, "x": 0.01, "font": {"size": 15, "color": INK}},
        "xaxis": {"title": {"text": x_title}, "gridcolor": GRID, "zeroline": False},
        "yaxis": {
            "title": {"text": y_title},
            "gridcolor": GRID,
            "zeroline": False,
            "type": y_type,
            "exponentformat": "power",
        },
        "margin": {"l": 64, "r": 18, "t": 48, "b": 52},
        "paper_bgcolor": "rgba(0,0,0,0)",
        "plot_bgcolor": "#fffdf8",
        "font": {"family": "system-ui, -apple-system, 'Segoe UI', sans-serif", "color": INK, "size": 12},
        "legend": {"orientation": "h", "y": -0.22, "x": 0},
        "hovermode": "x unified",
    }
    if y_type == "log" and log_range is not None:
        layout["yaxis"]["range"] = log_range
    if log_switch:
        log_args = {"yaxis.type": "log"} | ({"yaxis.range": log_range} if log_range is not None else {})
        layout["updatemenus"] = [
            {
                "type": "buttons",
                "direction": "left",
                "x": 1,
                "xanchor": "right",
                "y": 1.14,
                "yanchor": "top",
                "showactive": True,
                "active": 0 if y_type == "linear" else 1,
                "bgcolor": "#f3efe5",
                "bordercolor": GRID,
                "font": {"size": 11},
                "buttons": [
                    {
                        "label": "linear",
                        "method": "relayout",
                        "args": [{"yaxis.type": "linear", "yaxis.autorange": True}],
                    },
                    {"label": "log", "method": "relayout", "args": [log_args]},
                ],
            }
        ]
    return layout


def _target_line(x, value: float, name: str) -> go.Scatter:
    return go.Scatter(
        x=[x[0], x[-1]],
        y=[value, value],
        mode="lines",
        name=name,
        line={"color": TARGET, "dash": "dash", "width": 1.5},
        hoverinfo="skip",
    )


def outlook_figure(result: StockOutlook) -> go.Figure:
    """Heat map of P(level at period n); rows that never reach ``HEATMAP_FLOOR`` are trimmed."""
    probs = result.level_probs
    levels = result.outlook.levels
    keep = np.flatnonzero(probs.max(axis=0) >= HEATMAP_FLOOR)
    rows = slice(keep[0], keep[-1] + 1) if keep.size else slice(0, levels.size)
    stride = max(1, -(-probs.shape[0] // MAX_HEATMAP_PERIODS))
    periods = result.periods[::stride]
    shown = probs[::stride, rows]
    # Colour saturates at the 99th percentile of the cells in use, so the early point mass does not wash
    # out the spread later on; hover still reads the exact value.
    positive = shown[shown > 0]
    top = float(np.quantile(positive, 0.99)) if positive.size else 1.0
    heat = go.Heatmap(
        x=periods,
        y=levels[rows],
        z=shown.T,
        colorscale=LEVEL_SCALE,
        zmin=0,
        zmax=top,
        colorbar={"title": {"text": "probability"}, "thickness": 12},
        hovertemplate="period %{x}<br>level %{y}<br>P = %{z:.3g}<extra></extra>",
    )
    fig = go.Figure(heat, layout=_layout("Level outlook", "period", "level (units)"))
    fig.update_layout(hovermode="closest")
    fig.add_hline(y=result.params.low - 0.5, line={"color": STOCKOUT, "width": 1.5}, annotation_text="low")
    if result.params.high is not None:
        fig.add_hline(y=result.params.high + 0.5, line={"color": OVERFLOW, "width": 1.5}, annotation_text="capacity")
    return fig


def risk_figure(result: StockOutlook) -> go.Figure:
    """Cumulative P(at least one stock-out / overflow by period n) with the target lines."""
    x = result.periods
    fig = go.Figure(
        layout=_layout(
            "Cumulative risk",
            "period",
            "probability",
            log_switch=True,
            log_range=_log_range(result.outlook.stockout, result.outlook.overflow, [result.targets.stockout]),
        )
    )
    fig.add_trace(go.Scatter(x=x, y=result.outlook.stockout, name="stock-out", line={"color": STOCKOUT, "width": 2.5}))
    fig.add_trace(_target_line(x, result.targets.stockout, "stock-out target"))
    if result.params.high is not None:
        fig.add_trace(
            go.Scatter(x=x, y=result.outlook.overflow, name="overflow", line={"color": OVERFLOW, "width": 2.5})
        )
        fig.add_trace(_target_line(x, result.targets.overflow, "overflow target").update(line={"dash": "dot"}))
    return fig


def start_figure(result: StockOutlook) -> go.Figure:
    """Risk at the horizon for every start level, the target line and the chosen start."""
    risk = result.start_risk
    fig = go.Figure(
        layout=_layout(
            f"Risk by start level (horizon {result.horizon})",
            "start level (units)",
            "probability",
            log_switch=True,
            y_type="log",
            log_range=_log_range(risk.stockout, risk.overflow, [result.targets.stockout]),
        )
    )
    fig.add_trace(
        go.Scatter(
            x=risk.starts,
            y=risk.stockout,
            name="stock-out",
            mode="lines+markers",
            line={"color": STOCKOUT, "width": 2},
            marker={"size": 5},
        )
    )
    if result.params.high is not None:
        fig.add_trace(
            go.Scatter(
                x=risk.starts,
                y=risk.overflow,
                name="overflow",
                mode="lines+markers",
                line={"color": OVERFLOW, "width": 2},
                marker={"size": 5},
            )
        )
    if risk.starts.size:
        fig.add_trace(_target_line(risk.starts, result.targets.stockout, "stock-out target"))
        if result.params.high is not None:
            overflow_target = _target_line(risk.starts, result.targets.overflow, "overflow target")
            fig.add_trace(overflow_target.update(line={"dash": "dot"}))
    fig.add_vline(x=result.params.start, line={"color": INK, "dash": "dot", "width": 1}, annotation_text="start")
    return fig


def horizon_figure(result: StockOutlook) -> go.Figure:
    """Level law at the horizon: exact (paths still running) against the normal approximation."""
    final = result.outlook.final
    normal = result.normal_final
    # The normal curve is shown over the levels the banded walk can hold, where the two can be compared.
    inside = (normal.levels >= final.levels[0]) & (normal.levels <= final.levels[-1])
    fig = go.Figure(
        layout=_layout(
            f"Level at period {result.horizon}",
            "level (units)",
            "probability",
            log_switch=True,
            y_type="log",
            log_range=_log_range(final.probs),
        )
    )
    fig.add_trace(go.Bar(x=final.levels, y=final.probs, name="exact", marker={"color": OVERFLOW, "opacity": 0.85}))
    fig.add_trace(
        go.Scatter(
            x=normal.levels[inside],
            y=normal.probs[inside],
            name="normal approximation (no band)",
            mode="lines",
            line={"color": NORMAL, "dash": "dash", "width": 2},
        )
    )
    fig.update_layout(bargap=0.05, hovermode="closest")
    return fig


def normal_figure(result: StockOutlook) -> go.Figure:
    """Cumulative stock-out risk, exact against the Brownian (normal) approximation."""
    x = result.periods
    fig = go.Figure(
        layout=_layout(
            "Stock-out risk: exact and normal approximation",
            "period",
            "probability",
            log_switch=True,
            y_type="log",
            log_range=_log_range(result.outlook.stockout, result.normal_stockout),
        )
    )
    fig.add_trace(go.Scatter(x=x, y=result.outlook.stockout, name="exact", line={"color": STOCKOUT, "width": 2.5}))
    fig.add_trace(
        go.Scatter(
            x=x,
            y=result.normal_stockout,
            name="normal approximation",
            line={"color": NORMAL, "dash": "dash", "width": 2},
        )
    )
    fig.add_trace(_target_line(x, result.targets.stockout, "stock-out target"))
    return fig


FIGURES = {
    "outlook": outlook_figure,
    "risk": risk_figure,
    "start": start_figure,
    "horizon": horizon_figure,
    "normal": normal_figure,
}


def figures_for(result: StockOutlook) -> dict[str, dict]:
    """Every figure as a plotly JSON dict (numpy arrays inside; encode with PlotlyJSONEncoder)."""
    return {name: build(result).to_plotly_json() for name, build in FIGURES.items()}


def figures_script(result: StockOutlook, element_id: str = "figures") -> str:
    """A <script type="application/json"> element holding every figure, safe to place in HTML."""
    return json_script(figures_for(result), element_id, encoder=PlotlyJSONEncoder)
