"""Reorder-plan CSV tables: the engine's numbers to the last bit, in the trade's words."""

import csv
import io

import numpy as np
import pytest

import walkmath as wm
from planner.csv_writer import table_csv
from planner.kinds.reorder_plan.tables import ROWS, TABLES
from tests.planner.kinds.reorder_plan.test_compute import run
from tests.planner.kinds.reorder_plan.test_params import IGNITERS


@pytest.fixture(scope="module")
def result():
    return run(IGNITERS)


def read(result, table: str) -> list[list[str]]:
    text = table_csv(ROWS[table](result), title="Oven igniters")
    return [row[:-2] for row in csv.reader(io.StringIO(text, newline=""))]  # the last two are shared columns


def test_every_table_is_listed_and_named_in_the_plan_s_units(result):
    assert set(ROWS) == set(TABLES)
    for table in TABLES:
        header = read(result, table)[0]
        assert header[0] == "scenario" and any("igniters" in cell for cell in header), table


def test_service_table_is_the_engine_s_plan_exactly(result):
    rows = read(result, "service-by-reorder-point")[1:]
    plan = wm.reorder_point_plan(wm.StepLaw.negative_binomial(mean=0.3, variance=1.5), 4, 0.99)
    assert [int(row[1]) for row in rows] == plan.points.tolist()
    for column, values in ((3, plan.service), (4, plan.shortfall), (5, plan.normal_service), (6, plan.expected_short)):
        np.testing.assert_array_equal([float(row[column]) for row in rows], values)
    assert float(rows[12][2]) == pytest.approx(12 - 1.2)  # safety stock = reorder point - mean lead-time demand
    assert rows[0][0] == "Oven igniters"


def test_lead_time_table_sums_each_side_on_its_own(result):
    rows = read(result, "lead-time-demand")[1:]
    probs = np.array([float(row[2]) for row in rows])
    above = np.array([float(row[4]) for row in rows])
    np.testing.assert_array_equal(probs, result.protection.probs)
    assert np.all(above >= 0) and np.all(np.diff(above) <= 0) and above[-1] == 0.0
    # Far in the tail P(D > k) keeps its digits: it is a sum of the terms above, not 1 - P(D <= k).
    assert above[200] == pytest.approx(probs[201:].sum(), rel=1e-12) and above[200] < 1e-20


def test_policy_tables_follow_the_search(result):
    rows = read(result, "order-up-to")[1:]
    search = result.policy.search
    assert [int(row[1]) for row in rows] == search.levels.tolist()
    assert [int(row[2]) for row in rows] == (search.levels - 10).tolist()
    np.testing.assert_array_equal([float(row[-1]) for row in rows], result.policy.cost)
    stock = read(result, "long-run-stock")[1:]
    assert [int(row[1]) for row in stock] == result.policy.stock.levels.tolist()


def test_policy_tables_hold_only_their_header_when_the_policy_is_left_out():
    uneven = run(IGNITERS.replace(review_period=3))
    for table in ("order-up-to", "long-run-stock"):
        assert len(read(uneven, table)) == 1
