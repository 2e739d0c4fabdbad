"""Chart layout and colours shared by every kind: plotly's JSON schema as plain dicts and lists.

Kinds build ``{"data": [...], "layout": {...}}`` with these helpers; nothing
goes through plotly's figure objects (their validation was most of a what-if's
server time). Arrays go in as numpy and come out as lists (``as_list``) so the
standard JSON encoder can write them.
"""

from __future__ import annotations

import math

import numpy as np

INK = "#24303f"
STOCKOUT = "#c4553a"
OVERFLOW = "#2b7a84"
NORMAL = "#8b8f99"
TARGET = "#c98a12"
GRID = "#e6e1d6"
LEVEL_SCALE = [[0.0, "#fbf8f1"], [0.15, "#e3ede6"], [0.4, "#9cc4bd"], [0.7, "#4a8592"], [1.0, "#203648"]]
# Log axes open at this floor so a 1e-80 early-period value does not squeeze the decision range;
# smaller values are still in the data (pan or zoom to see them, or download the CSV).
LOG_FLOOR = 1e-12


def as_list(values) -> list:
    """A numpy array (or any sequence) as a plain list of Python numbers."""
    return np.asarray(values).tolist()


def rounded(values, digits: int = 4) -> list:
    """Probabilities as a plain list, each rounded to ``digits`` significant digits.

    For colour cells, whose hover shows three digits: about half the characters of full
    precision in the JSON. Zero stays zero, values below 1e-290 stay as they are (10^k would
    overflow), and every other value moves by at most half a unit in its last kept digit (as
    ``float(f"{value:.4g}")`` would give, vectorised).
    """
    array = np.asarray(values, dtype=float)
    out = array.copy()
    shown = np.flatnonzero((array > 1e-290) & (array <= 1.0))
    exponent = digits - 1 - np.floor(np.log10(array.flat[shown]))  # >= 0 for values up to 1
    # An integer divided by 10^k (exact up to k = 22) is the float nearest that decimal (division is
    # correctly rounded), so it prints short; the few tinier cells go through decimal formatting.
    exact = exponent <= 22
    scale = 10.0 ** exponent[exact]
    out.flat[shown[exact]] = np.round(array.flat[shown[exact]] * scale) / scale
    for index in shown[~exact]:
        out.flat[index] = float(f"{array.flat[index]:.{digits}g}")
    return out.tolist()


def log_range(*arrays) -> list[float]:
    values = np.concatenate([np.ravel(np.asarray(a, dtype=float)) for a in arrays])
    positive = values[values > 0]
    if positive.size == 0:
        return [math.log10(LOG_FLOOR), 0.05]
    low = max(float(positive.min()), LOG_FLOOR)
    high = max(float(positive.max()), low * 10)
    return [math.floor(math.log10(low)), math.log10(high) + 0.1]


def layout(
    title: str, x_title: str, y_title: str, *, log_switch: bool = False, y_type: str = "linear", y_range=None
) -> dict:
    """Our page style; with ``log_switch`` a linear/log button pair (decisions turn on small risks)."""
    result = {
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
        "shapes": [],
        "annotations": [],
    }
    if y_type == "log" and y_range is not None:
        result["yaxis"]["range"] = y_range
    if log_switch:
        log_args = {"yaxis.type": "log"} | ({"yaxis.range": y_range} if y_range is not None else {})
        result["updatemenus"] = [
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
    return result


def line(
    x, y, name: str, color: str, *, width: float = 2.5, dash: str | None = None, markers: bool = False, hover=None
) -> dict:
    """A line trace; ``hover`` (e.g. ``formatting.probabilities``) writes the hover values with our formatter."""
    trace = {
        "type": "scatter",
        "x": as_list(x),
        "y": as_list(y),
        "name": name,
        "mode": "lines+markers" if markers else "lines",
        "line": {"color": color, "width": width},
    }
    if dash:
        trace["line"]["dash"] = dash
    if markers:
        trace["marker"] = {"size": 5}
    if hover is not None:
        trace["customdata"] = hover(trace["y"])
        trace["hovertemplate"] = f"{name}: %{{customdata}}<extra></extra>"
    return trace


def heatmap(x, y, z: list, *, top: float, hover: str) -> dict:
    """A probability heat map in our level colours: ``z`` (a plain list of rows over ``y``) from 0 to ``top``."""
    return {
        "type": "heatmap",
        "x": as_list(x),
        "y": as_list(y),
        "z": z,
        "colorscale": LEVEL_SCALE,
        "zmin": 0,
        "zmax": top,
        "colorbar": {"title": {"text": "probability"}, "thickness": 12},
        "hovertemplate": hover,
    }


def target_line(x, value: float, name: str, *, dash: str = "dash") -> dict:
    """A flat target line across the x range (no hover)."""
    x = as_list(x)
    trace = line([x[0], x[-1]], [value, value], name, TARGET, width=1.5, dash=dash)
    trace["hoverinfo"] = "skip"
    return trace


def add_hline(fig: dict, y: float, text: str, color: str, *, dash: str = "solid") -> None:
    """A horizontal rule across the plot with a label at its right end (plotly's add_hline, as data)."""
    fig["layout"]["shapes"].append(
        {
            "type": "line",
            "xref": "paper",
            "x0": 0,
            "x1": 1,
            "y0": y,
            "y1": y,
            "line": {"color": color, "width": 1.5, "dash": dash},
        }
    )
    fig["layout"]["annotations"].append(
        {"xref": "paper", "x": 1, "y": y, "text": text, "showarrow": False, "xanchor": "right", "yanchor": "bottom"}
    )


def add_vline(fig: dict, x: float, text: str, color: str = INK) -> None:
    fig["layout"]["shapes"].append(
        {
            "type": "line",
            "yref": "paper",
            "y0": 0,
            "y1": 1,
            "x0": x,
            "x1": x,
            "line": {"color": color, "width": 1, "dash": "dot"},
        }
    )
    fig["layout"]["annotations"].append(
        {"yref": "paper", "y": 1, "x": x, "text": text, "showarrow": False, "xanchor": "left", "yanchor": "top"}
    )
