"""Charts are plain plotly JSON carrying the engine's numbers, the targets, a log switch and a text alternative."""

import json

import numpy as np
import pytest

from planner.formatting import probability
from planner.kinds.stock_plan.charts import HEATMAP_FLOOR, charts_for
from planner.kinds.stock_plan.params import StockPlanParams
from planner.kinds.stock_plan.tables import TABLES
from tests.planner.kinds.stock_plan.test_compute import Targets, run_outlook


def figures_for(result) -> dict:
    return {name: chart["figure"] for name, chart in charts_for(result).items()}


def values(encoded) -> np.ndarray:
    return np.asarray(encoded)


@pytest.fixture(scope="module")
def result():
    params = StockPlanParams(
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


def test_floor_and_capacity_lines_are_drawn(result):
    layout = figures_for(result)["outlook"]["layout"]
    assert [shape["y0"] for shape in layout["shapes"]] == [-0.5, 9.5]
    assert [note["text"] for note in layout["annotations"]] == ["safety floor", "capacity"]


def test_every_figure_is_present_and_plain_json(result):
    figures = figures_for(result)
    assert set(figures) == {"outlook", "risk", "start", "horizon"}
    # Plain dicts and lists: the standard JSON encoder writes them, no plotly encoder needed.
    data = json.loads(json.dumps(figures, allow_nan=False))
    assert all(fig["data"] and set(fig) == {"data", "layout"} for fig in data.values())


def test_each_chart_has_a_summary_and_a_table(result):
    charts = charts_for(result)
    assert all(chart["table"] in TABLES and chart["summary"].endswith(".") for chart in charts.values())
    assert probability(result.stockout_risk) in charts["risk"]["summary"]
    assert "over 15 days" in charts["risk"]["summary"]
    assert "day" in charts["risk"]["figure"]["layout"]["xaxis"]["title"]["text"]


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
    # colour cells keep 4 significant digits (reference: Python's "%.4g" formatting)
    expected = [[float(f"{p:.4g}") for p in row] for row in probs[:, rows].T]
    np.testing.assert_array_equal(values(heat["z"]), expected)
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
