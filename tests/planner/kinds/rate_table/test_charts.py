"""Charts and tables of a rate-table pool: plain JSON, a text alternative and a CSV table each, the same numbers."""

import json

import pytest

from planner.formatting import probability
from planner.kinds import get_kind
from planner.kinds.rate_table.compute import RateTableJob
from tests.planner.kinds.rate_table.examples import MIXERS


@pytest.fixture(scope="module")
def result():
    job = RateTableJob(MIXERS, 0.05)
    return job.run({part.name: part.units for part in job.parts()})


def test_every_chart_is_plain_json_with_a_summary_and_a_table(result):
    kind = get_kind("rate_table")
    charts = kind.figures(result)
    assert list(charts) == ["mission", "long_run", "failed", "repair_speed", "start"]
    json.dumps({name: chart["figure"] for name, chart in charts.items()})  # no numpy left in
    for chart in charts.values():
        assert set(chart["figure"]) == {"data", "layout"} and chart["summary"].endswith(".")
        assert chart["table"] in kind.tables
    assert {chart["table"] for chart in charts.values()} == set(kind.tables)  # every table has its chart


def test_long_run_chart_colours_the_shortage_rows_and_reads_its_table(result):
    kind = get_kind("rate_table")
    chart = kind.figures(result)["long_run"]
    bars = chart["figure"]["data"][0]
    rows = list(kind.table_rows(result, "by-failed"))
    assert [float(row[5]) for row in rows[1:]] == bars["y"] == result.long_run_law.tolist()
    assert [row[4] for row in rows[1:]] == [0, 0, 1, 1, 1]
    assert bars["marker"]["color"][1] != bars["marker"]["color"][2] == bars["marker"]["color"][4]
    assert [float(row[2]) for row in rows[1:]] == [0.006, 0.006, 0.006, 0.004, 0.0]  # the table as typed
    assert "short (2 or more failed) 0.966 % of the time" in chart["summary"]


def test_repair_speed_chart_reads_the_same_curves_as_its_table(result):
    kind = get_kind("rate_table")
    chart = kind.figures(result)["repair_speed"]
    unavailable, risk, availability_target, mission_target = chart["figure"]["data"]
    rows = list(kind.table_rows(result, "by-repair-speed"))[1:]
    assert [float(row[3]) for row in rows] == unavailable["y"] and [float(row[4]) for row in rows] == risk["y"]
    assert unavailable["customdata"] == [probability(value) for value in unavailable["y"]]
    assert availability_target["y"] == [1 - 0.995] * 2 and mission_target["y"] == [0.05] * 2
    assert chart["figure"]["layout"]["xaxis"]["type"] == "log"
    assert chart["summary"].startswith("Repairs 1.5 times as fast as tabled, or faster, meet both targets")


def test_mission_and_failed_charts_read_the_same_figures_as_their_tables(result):
    kind = get_kind("rate_table")
    charts = kind.figures(result)
    rows = list(kind.table_rows(result, "mission-risk"))
    assert [float(row[2]) for row in rows[1:]] == charts["mission"]["figure"]["data"][0]["y"]
    assert float(rows[-1][1]) == 168.0 and float(rows[-1][2]) == result.mission_risk
    assert charts["mission"]["summary"].startswith("Starting with every unit in working order, the chance")
    heat = charts["failed"]["figure"]
    assert heat["layout"]["shapes"][0]["y0"] == 1.5  # the line between 1 and 2 failed
    law = list(kind.table_rows(result, "failed-by-time"))[1:]
    assert len(law) == 41 * 5 and float(law[-1][3]) == result.failed_law.probs[-1][4]
