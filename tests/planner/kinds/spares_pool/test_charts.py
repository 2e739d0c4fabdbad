"""Charts and tables of a spares pool: plain JSON, a text alternative and a CSV table each, the same numbers."""

import json

import pytest

from planner.formatting import probability
from planner.kinds import get_kind
from planner.kinds.spares_pool.compute import SparesJob
from planner.kinds.spares_pool.params import SparesPoolParams


@pytest.fixture(scope="module")
def result():
    params = SparesPoolParams(units=4, spares=2, failure=500.0, repair=40.0, crews=2, mission=300.0)
    job = SparesJob(params, 0.02)
    return job.run({part.name: part.units for part in job.parts()})


def test_every_chart_is_plain_json_with_a_summary_and_a_table(result):
    kind = get_kind("spares_pool")
    charts = kind.figures(result)
    json.dumps({name: chart["figure"] for name, chart in charts.items()})  # no numpy left in
    for chart in charts.values():
        assert set(chart["figure"]) == {"data", "layout"} and chart["summary"].endswith(".")
        assert chart["table"] in kind.tables


def test_availability_chart_draws_a_line_per_crew_count_with_the_target(result):
    figure = get_kind("spares_pool").figures(result)["availability"]["figure"]
    names = [trace["name"] for trace in figure["data"]]
    assert names == ["1 crew", "2 crews", "3 crews", "availability target"]
    own = figure["data"][1]
    assert own["y"] == result.spares_long_run[2].unavailability.tolist()
    assert own["customdata"] == [probability(value) for value in own["y"]]
    assert figure["data"][-1]["y"] == [1 - 0.999] * 2 and figure["layout"]["yaxis"]["type"] == "log"


def test_mission_chart_reads_the_same_curves_as_its_table(result):
    kind = get_kind("spares_pool")
    figure = kind.figures(result)["mission"]["figure"]
    rows = list(kind.table_rows(result, "mission-risk"))
    assert [float(row[2]) for row in rows[1:]] == figure["data"][0]["y"]
    assert [float(row[4]) for row in rows[1:]] == figure["data"][1]["y"]
    assert float(rows[-1][1]) == 300.0 and float(rows[-1][2]) == result.mission_risk


def test_by_spares_table_has_every_crew_line_and_the_mission_risk_for_the_pools_crews(result):
    rows = list(get_kind("spares_pool").table_rows(result, "by-spares"))[1:]
    own = [row for row in rows if row[2] == 2]
    assert [row[1] for row in own] == result.spares_long_run[2].counts.tolist()
    assert all(row[5] != "" for row in own) and all(row[5] == "" for row in rows if row[2] != 2)
    risk = result.spares_risk
    assert float(own[2][5]) == risk.shortage_risk[2] and float(own[2][6]) == risk.no_shortage_risk[2]
