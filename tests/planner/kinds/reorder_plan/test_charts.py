"""Charts are plain plotly JSON carrying the engine's numbers, the marked reorder points and a text alternative."""

import json
import re

import numpy as np
import pytest

from planner.formatting import probability
from planner.kinds.reorder_plan.charts import charts_for
from planner.kinds.reorder_plan.tables import TABLES
from planner.kinds.reorder_plan.words import recommendation
from tests.planner.kinds.reorder_plan.test_compute import run
from tests.planner.kinds.reorder_plan.test_params import IGNITERS

# Method words the pages never use (the planner speaks the trade's words).
METHOD_WORDS = re.compile(r"\bwalk|step law|\bband\b", re.IGNORECASE)


@pytest.fixture(scope="module")
def result():
    return run(IGNITERS)


def test_every_figure_is_present_and_plain_json(result):
    charts = charts_for(result)
    assert list(charts) == ["service", "leadtime", "orderupto", "stock"]
    data = json.loads(json.dumps({name: chart["figure"] for name, chart in charts.items()}, allow_nan=False))
    assert all(fig["data"] and set(fig) == {"data", "layout"} for fig in data.values())
    assert all(chart["table"] in TABLES and chart["summary"].endswith(".") for chart in charts.values())


def test_without_the_review_policy_only_the_reorder_point_charts(result):
    uneven = run(IGNITERS.replace(review_period=3))
    assert uneven.policy is None and list(charts_for(uneven)) == ["service", "leadtime"]


def test_service_chart_marks_both_reorder_points_and_the_gap(result):
    figure = charts_for(result)["service"]["figure"]
    exact, claimed, target = figure["data"][:3]
    shown = np.asarray(exact["x"])
    points = result.plan.points
    np.testing.assert_array_equal(exact["y"], result.plan.service[np.isin(points, shown)])
    np.testing.assert_array_equal(claimed["y"], result.plan.normal_service[np.isin(points, shown)])
    assert target["y"] == [0.99, 0.99]
    marks = {trace["name"]: (trace["x"][0], trace["y"][0]) for trace in figure["data"][3:]}
    assert marks == {
        "exact reorder point: 12 igniters": (12, result.plan.achieved),
        "normal rule's reorder point: 7 igniters": (7, result.plan.normal_achieved),
    }
    (gap,) = figure["layout"]["shapes"]
    assert (gap["x0"], gap["x1"]) == (7, 12)
    assert shown[0] <= 7 - 2 and shown[-1] >= 12 + 2  # both points with room around them
    summary = charts_for(result)["service"]["summary"]
    assert "12 igniters" in summary and "5 igniters too low" in summary
    assert probability(result.plan.normal_achieved) in summary


def test_lead_time_chart_carries_the_law_and_marks_the_points(result):
    figure = charts_for(result)["leadtime"]["figure"]
    (bars,) = figure["data"]
    start = bars["x"][0]
    np.testing.assert_array_equal(bars["y"], result.protection.probs[start : start + len(bars["y"])])
    assert bars["x"][-1] > 12 and figure["layout"]["yaxis"]["type"] == "log"  # the lumpy tail shows
    assert [note["text"] for note in figure["layout"]["annotations"]] == ["reorder point 12", "normal rule 7"]
    assert "over 4 days" in charts_for(result)["leadtime"]["summary"]


def test_order_up_to_chart_has_service_cost_and_marks(result):
    figure = charts_for(result)["orderupto"]["figure"]
    names = [trace["name"] for trace in figure["data"]]
    assert names == ["days without a stock-out", "fill rate", "target 99 %", "cost per day"]
    assert figure["data"][-1]["yaxis"] == "y2" and "yaxis2" in figure["layout"]
    texts = [note["text"] for note in figure["layout"]["annotations"]]
    assert texts[0] == f"smallest: {result.policy.order_up_to}"
    assert any(text.startswith("normal rule") for text in texts)


def test_stock_chart_splits_backorders_from_stock_on_hand(result):
    on_hand, short = charts_for(result)["stock"]["figure"]["data"]
    assert min(on_hand["x"]) >= 0 and max(short["x"]) < 0
    assert sum(on_hand["y"]) + sum(short["y"]) == pytest.approx(1.0, abs=1e-5)  # the trimmed tails are tiny


def test_words_are_the_trades(result):
    text = json.dumps(charts_for(result)) + recommendation(result)
    assert not METHOD_WORDS.search(text)
    assert recommendation(result).startswith("Reorder when the stock on hand plus on order falls to 12 igniters")
