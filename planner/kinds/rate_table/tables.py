"""The rate-table pool's CSV tables: header and rows of plain machine numbers (the shared writer adds the rest)."""

from __future__ import annotations

from planner import pool_tables
from planner.csv_writer import number
from planner.kinds.rate_table.compute import RateTableResult
from planner.pool_words import unit_name

TABLES = {
    "by-failed": "the rate table with the long-run share of time at each number failed",
    "mission-risk": "shortage risk over the mission",
    "failed-by-time": "units failed over the mission",
    "by-repair-speed": "availability and mission risk by repair speed",
    "risk-by-failed-at-start": "mission risk by units already failed at the start",
}


def by_failed_rows(result: RateTableResult):
    unit = unit_name(result.unit)
    yield [
        "scenario",
        "units failed",
        f"failure rate [per {unit}, whole pool]",
        f"repair rate [per {unit}, whole pool]",
        "short [1 = yes]",
        "long-run share of time [probability]",
    ]
    params, law = result.params, result.long_run_law
    for failed, (failure, repair) in enumerate(zip(params.failure_rates, params.repair_rates, strict=True)):
        yield [None, failed, number(failure), number(repair), int(failed >= params.shortage_at), number(law[failed])]


def speed_rows(result: RateTableResult):
    yield [
        "scenario",
        "repair speed [times the table's repair rates]",
        "availability [long-run probability of no shortage]",
        "unavailability [long-run probability of a shortage]",
        "shortage during the mission [probability]",
        "no shortage during the mission [probability]",
    ]
    curve = result.speeds
    if curve is None:
        return
    columns = (curve.speeds, curve.availability, curve.unavailability, curve.risk, curve.safe)
    for values in zip(*columns, strict=True):
        yield [None, *(number(value) for value in values)]


ROWS = {
    "by-failed": by_failed_rows,
    "mission-risk": pool_tables.mission_rows,
    "failed-by-time": pool_tables.failed_rows,
    "by-repair-speed": speed_rows,
    "risk-by-failed-at-start": pool_tables.by_start_rows,
}
