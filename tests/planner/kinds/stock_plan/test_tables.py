"""Stock-plan CSV tables: the engine's numbers to the last bit, in the trade's words."""

import csv
import io

import numpy as np
import pytest

import walkmath as wm
from planner.csv_writer import table_csv
from planner.kinds.stock_plan.params import CountLaw, StockPlanParams
from planner.kinds.stock_plan.tables import ROWS, TABLES
from tests.planner.kinds.stock_plan.test_compute import Targets, run_outlook

PARAMS = StockPlanParams(
    start=5,
    horizon=9,
    low=0,
    high=12,
    below="lost",
    above="spill",
    step_method="net",
    arrivals=CountLaw("poisson", mean=1.1),
    demand=CountLaw("negative_binomial", mean=1.3, variance=2.5),
    profile=(1.0, 1.4),
    delivery_every=4,
    delivery_size=3,
    period="week",
)


@pytest.fixture(scope="module")
def result():
    return run_outlook(params=PARAMS, targets=Targets(stockout=0.1, overflow=0.1))


@pytest.fixture(scope="module")
def engine():
    """The same walk built directly with walkmath, bypassing the planner's parameters."""
    arrivals = wm.StepLaw.poisson(mean=1.1)
    plain = wm.StepLaw.net(arrivals=arrivals, demand=wm.StepLaw.negative_binomial(mean=1.3, variance=2.5))
    busy = wm.StepLaw.net(arrivals=arrivals, demand=wm.StepLaw.negative_binomial(mean=1.3 * 1.4, variance=2.5 * 1.4))
    delivered = wm.StepLaw.net(arrivals=busy, demand=wm.StepLaw.fixed(-3))
    walk = wm.BandedWalk([plain, busy, plain, delivered], start=5, low=0, high=12, below="lost", above="spill")
    return walk, walk.outlook(horizon=9)


def read(result, table: str, title: str = "Barley malt bin") -> list[list[str]]:
    text = table_csv(ROWS[table](result), title=title)
    return [row[:-2] for row in csv.reader(io.StringIO(text, newline=""))]  # the last two are shared columns


def test_every_table_has_rows():
    assert set(ROWS) == set(TABLES)


def test_risk_curves_equal_the_engine(result, engine):
    _, out = engine
    rows = read(result, "risk-curves")
    assert rows[0][1:3] == ["week", "stock-out risk [probability of at least one by that week]"]
    body = np.array([[float(cell) for cell in row[1:]] for row in rows[1:]])
    assert body[:, 0].tolist() == list(range(10))
    for column, curve in enumerate(
        [out.stockout, out.overflow, out.lost_units, out.spilled_units, out.stockout_periods, result.normal_stockout],
        start=1,
    ):
        # repr() round-trips floats, so the download reproduces the engine bit for bit.
        assert body[:, column].tolist() == curve.tolist()


def test_stock_by_period_equals_the_engine(result, engine):
    _, out = engine
    rows = read(result, "stock-by-period")
    assert rows[0][1:3] == ["week", "stock [units]"]
    table = np.zeros_like(out.level_probs)
    for _, period, level, prob in rows[1:]:
        table[int(period), int(level) - out.levels[0]] = float(prob)
    assert table.tolist() == out.level_probs.tolist()
    assert len(rows) == 1 + out.level_probs.size


def test_risk_by_start_equals_the_engine(result, engine):
    walk, _ = engine
    risk = walk.risk_by_start(9)
    rows = read(result, "risk-by-start")
    assert rows[0][1:3] == ["start stock [units]", "stock-out risk by week 9 [probability]"]
    assert [int(row[1]) for row in rows[1:]] == risk.starts.tolist()
    assert [float(row[2]) for row in rows[1:]] == risk.stockout.tolist()
    assert [float(row[3]) for row in rows[1:]] == risk.overflow.tolist()


def test_backordered_stock_is_a_negative_number_not_a_formula(result):
    negative = run_outlook(params=PARAMS.replace(below="backorder", high=None), targets=Targets(0.1, 0.1))
    levels = [row[2] for row in read(negative, "stock-by-period", "x")[1:]]
    assert "-3" in levels
