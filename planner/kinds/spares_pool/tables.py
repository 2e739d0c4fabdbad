"""The spares pool's CSV tables: header and rows of plain machine numbers (the shared writer adds the rest)."""

from __future__ import annotations

from planner import pool_tables
from planner.csv_writer import number
from planner.kinds.spares_pool.compute import SparesResult

TABLES = {
    "by-spares": "availability and mission risk by number of spares",
    "by-crews": "availability and mission risk by number of repair crews",
    "mission-risk": "shortage risk over the mission",
    "failed-by-time": "units failed over the mission",
    "risk-by-failed-at-start": "mission risk by units already failed at the start",
}


def _blank(value) -> str:
    return "" if value is None else number(value)


def by_spares_rows(result: SparesResult):
    yield [
        "scenario",
        "spares",
        "repair crews",
        "availability [long-run probability of no shortage]",
        "unavailability [long-run probability of a shortage]",
        "shortage during the mission [probability, from all in working order]",
        "no shortage during the mission [probability]",
    ]
    risk = result.spares_risk
    for crews, curve in result.spares_long_run.items():
        for index, spares in enumerate(curve.counts):
            at = risk.at(int(spares)) if risk is not None and crews == result.params.crews else None
            yield [
                None,
                int(spares),
                crews,
                number(curve.availability[index]),
                number(curve.unavailability[index]),
                _blank(risk.shortage_risk[at] if at is not None else None),
                _blank(risk.no_shortage_risk[at] if at is not None else None),
            ]


def by_crews_rows(result: SparesResult):
    yield [
        "scenario",
        "repair crews",
        "spares",
        "availability [long-run probability of no shortage]",
        "unavailability [long-run probability of a shortage]",
        "shortage during the mission [probability, from all in working order]",
        "no shortage during the mission [probability]",
    ]
    long_run, risk = result.crews_long_run, result.crews_risk
    if long_run is None:
        return
    for index, crews in enumerate(long_run.counts):
        at = risk.at(int(crews)) if risk is not None else None
        yield [
            None,
            int(crews),
            result.params.spares,
            number(long_run.availability[index]),
            number(long_run.unavailability[index]),
            _blank(risk.shortage_risk[at] if at is not None else None),
            _blank(risk.no_shortage_risk[at] if at is not None else None),
        ]


ROWS = {
    "by-spares": by_spares_rows,
    "by-crews": by_crews_rows,
    "mission-risk": pool_tables.mission_rows,
    "failed-by-time": pool_tables.failed_rows,
    "risk-by-failed-at-start": pool_tables.by_start_rows,
}
