"""CSV files: the engine's numbers, RFC 4180 layout, and the spreadsheet-formula guard."""

import csv
import io

import numpy as np
import pytest

import walkmath as wm
from planner.csv_export import file_name, neutralise, table_csv
from planner.outlook import Targets, run_outlook
from planner.params import CountLaw, StockWalkParams

PARAMS = StockWalkParams(
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
)


@pytest.fixture(scope="module")
def result():
    return run_outlook(params=PARAMS, targets=Targets(stockout=0.1, overflow=0.1))


@pytest.fixture(scope="module")
def engine():
    """The same walk built directly with walkmath, bypassing planner.params."""
    arrivals = wm.StepLaw.poisson(mean=1.1)
    plain = wm.StepLaw.net(arrivals=arrivals, demand=wm.StepLaw.negative_binomial(mean=1.3, variance=2.5))
    busy = wm.StepLaw.net(arrivals=arrivals, demand=wm.StepLaw.negative_binomial(mean=1.3 * 1.4, variance=2.5 * 1.4))
    delivered = wm.StepLaw.net(arrivals=busy, demand=wm.StepLaw.fixed(-3))
    walk = wm.BandedWalk([plain, busy, plain, delivered], start=5, low=0, high=12, below="lost", above="spill")
    return walk, walk.outlook(horizon=9)


def read(text: str) -> list[list[str]]:
    return list(csv.reader(io.StringIO(text, newline="")))


def test_risk_curves_equal_the_engine(result, engine):
    _, out = engine
    rows = read(table_csv(result, "risk-curves", "Barley malt bin"))
    assert rows[0][1:3] == ["period", "stock-out risk [probability of at least one by period]"]
    body = np.array([[float(cell) for cell in row[1:]] for row in rows[1:]])
    assert body[:, 0].tolist() == list(range(10))
    for column, curve in enumerate(
        [out.stockout, out.overflow, out.lost_units, out.spilled_units, out.stockout_periods], start=1
    ):
        # repr() round-trips floats, so the download reproduces the engine bit for bit.
        assert body[:, column].tolist() == curve.tolist()


def test_level_law_equals_the_engine(result, engine):
    _, out = engine
    rows = read(table_csv(result, "level-law", "Barley malt bin"))
    assert rows[0][1:3] == ["period", "level [units]"]
    table = np.zeros_like(out.level_probs)
    for _, period, level, prob in rows[1:]:
        table[int(period), int(level) - out.levels[0]] = float(prob)
    assert table.tolist() == out.level_probs.tolist()
    assert len(rows) == 1 + out.level_probs.size


def test_risk_by_start_equals_the_engine(result, engine):
    walk, _ = engine
    risk = walk.risk_by_start(9)
    rows = read(table_csv(result, "risk-by-start", "Barley malt bin"))
    assert rows[0][1] == "start level [units]"
    assert [int(row[1]) for row in rows[1:]] == risk.starts.tolist()
    assert [float(row[2]) for row in rows[1:]] == risk.stockout.tolist()
    assert [float(row[3]) for row in rows[1:]] == risk.overflow.tolist()


def test_rfc_4180_layout(result):
    text = table_csv(result, "risk-by-start", 'Crates, "big" ones')
    lines = text.split("\r\n")
    assert lines[-1] == "" and all("\n" not in line for line in lines)  # CRLF after every record
    assert lines[1].startswith('"Crates, ""big"" ones",0,')  # comma and quote inside a field: quoted, doubled
    assert len({len(row) for row in read(text)}) == 1


@pytest.mark.parametrize("title", ['=HYPERLINK("http://x.invalid")', "+1+2", "-2+3", "@SUM(A1)", "\t=1", "\r=1"])
def test_formula_injection_is_neutralised(result, title):
    rows = read(table_csv(result, "risk-curves", title))
    assert all(row[0] == "'" + title for row in rows[1:])
    assert neutralise(title).startswith("'")


def test_numbers_and_plain_text_are_left_alone(result):
    rows = read(table_csv(result, "level-law", "Flour silo"))
    assert rows[1][0] == "Flour silo"
    negative = run_outlook(params=PARAMS.replace(below="backorder", high=None), targets=Targets(0.1, 0.1))
    levels = [row[2] for row in read(table_csv(negative, "level-law", "x"))[1:]]
    assert "-3" in levels  # backorders: negative levels are numbers, not formulas


def test_file_names_come_from_the_title():
    assert file_name("Flour silo: week 12", "risk-curves") == "flour-silo-week-12-risk-curves.csv"
    assert file_name("=cmd|' /C calc'!A0", "level-law") == "cmd-c-calca0-level-law.csv"
    assert file_name("???", "risk-by-start") == "scenario-risk-by-start.csv"


def test_unknown_table_is_refused(result):
    with pytest.raises(ValueError, match="table must be one of"):
        table_csv(result, "recipes", "x")
