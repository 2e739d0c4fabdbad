"""Plotly figures carry the engine's numbers, the targets and a log switch."""

import base64
import json

import numpy as np
import pytest
from plotly.utils import PlotlyJSONEncoder

from planner.charts import HEATMAP_FLOOR, figures_for, figures_script
from planner.outlook import Targets, run_outlook
from planner.params import StockWalkParams


def values(encoded) -> np.ndarray:
    """Plotly's typed-array encoding ({'dtype', 'bdata', 'shape'}: base64 of the raw array) or a plain list."""
    if isinstance(encoded, dict):
        array = np.frombuffer(base64.b64decode(encoded["bdata"]), dtype=encoded["dtype"])
        shape = encoded.get("shape")
        return array.reshape([int(n) for n in str(shape).split(",")]) if shape else array
    return np.asarray(encoded)


@pytest.fixture(scope="module")
def result():
    params = StockWalkParams(
        start=3,
        horizon=15,
        low=0,
        high=9,
        below="stop",
        above="spill",
        step_method="table",
        table=((-2, 0.2), (-1, 0.2), (0, 0.2), (1, 0.4)),
    )
    return run_outlook(params=params, targets=Targets(stockout=0.07, overflow=0.2))


def test_every_figure_is_present_and_serialisable(result):
    figures = figures_for(result)
    assert set(figures) == {"outlook", "risk", "start", "horizon", "normal"}
    data = json.loads(json.dumps(figures, cls=PlotlyJSONEncoder))
    assert all(fig["data"] for fig in data.values())
    script = figures_script(result)
    assert script.startswith('<script id="figures" type="application/json">') and "</script>" in script


def test_risk_figure_has_curves_and_target_lines(result):
    traces = figures_for(result)["risk"]["data"]
    by_name = {trace["name"]: trace for trace in traces}
    np.testing.assert_array_equal(values(by_name["stock-out"]["y"]), result.outlook.stockout)
    np.testing.assert_array_equal(values(by_name["overflow"]["y"]), result.outlook.overflow)
    assert list(by_name["stock-out target"]["y"]) == [0.07, 0.07]
    assert list(by_name["overflow target"]["y"]) == [0.2, 0.2]
    menus = figures_for(result)["risk"]["layout"]["updatemenus"][0]["buttons"]
    assert [button["label"] for button in menus] == ["linear", "log"]


def test_heat_map_keeps_every_level_that_matters(result):
    heat = figures_for(result)["outlook"]["data"][0]
    shown = set(values(heat["y"]).tolist())
    probs = result.level_probs
    needed = {
        int(level) for level, top in zip(result.outlook.levels, probs.max(axis=0), strict=True) if top >= HEATMAP_FLOOR
    }
    assert needed <= shown
    rows = values(heat["y"]) - result.outlook.levels[0]
    np.testing.assert_array_equal(values(heat["z"]), probs[:, rows].T)
    np.testing.assert_array_equal(values(heat["x"]), result.periods)


def test_start_and_horizon_figures(result):
    figures = figures_for(result)
    stockout = figures["start"]["data"][0]
    names = [trace["name"] for trace in figures["start"]["data"]]
    assert names == ["stock-out", "overflow", "stock-out target", "overflow target"]
    np.testing.assert_array_equal(values(stockout["x"]), result.start_risk.starts)
    np.testing.assert_array_equal(values(stockout["y"]), result.start_risk.stockout)
    exact, normal = figures["horizon"]["data"]
    np.testing.assert_array_equal(values(exact["y"]), result.outlook.final.probs)
    inside = (result.normal_final.levels >= result.outlook.levels[0]) & (
        result.normal_final.levels <= result.outlook.levels[-1]
    )
    np.testing.assert_array_equal(values(normal["x"]), result.normal_final.levels[inside])
    np.testing.assert_array_equal(values(normal["y"]), result.normal_final.probs[inside])
    np.testing.assert_array_equal(values(figures["normal"]["data"][1]["y"]), result.normal_stockout)
