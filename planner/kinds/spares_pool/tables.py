"""The spares pool's CSV tables: header and rows of plain machine numbers (the shared writer adds the rest)."""

from __future__ import annotations

from planner.csv_writer import number
from planner.kinds.spares_pool.compute import SparesResult
from planner.kinds.spares_pool.words import unit_name

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


def mission_rows(result: SparesResult):
    unit = unit_name(result.unit, 2)
    yield [
        "scenario",
        f"time [{unit}]",
        "at least one shortage by then [probability]",
        "no shortage by then [probability]",
        "short at that time [probability]",
        "not short at that time [probability]",
    ]
    law, mission = result.failed_law, result.mission
    for index, time in enumerate(result.times):
        yield [
            None,
            number(time),
            number(mission.reached[index]),
            number(mission.not_reached[index]),
            number(law.shortage[index]),
            number(law.covered[index]),
        ]


def failed_rows(result: SparesResult):
    unit = unit_name(result.unit, 2)
    yield ["scenario", f"time [{unit}]", "units failed", "probability [that many failed at that time]"]
    law = result.failed_law
    for index, time in enumerate(law.times):
        for failed, prob in zip(law.failed, law.probs[index], strict=True):
            yield [None, number(time), int(failed), number(prob)]


def by_start_rows(result: SparesResult):
    unit = unit_name(result.unit, 2)
    yield [
        "scenario",
        "units failed at the start",
        "shortage during the mission [probability]",
        "no shortage during the mission [probability]",
        f"mean time to the first shortage [{unit}]",
    ]
    by_start = result.by_start
    if by_start is None:
        return
    for index, failed in enumerate(by_start["failed"]):
        yield [
            None,
            int(failed),
            number(by_start["risk"][index]),
            number(by_start["safe"][index]),
            number(by_start["mean_time"][index]),
        ]


ROWS = {
    "by-spares": by_spares_rows,
    "by-crews": by_crews_rows,
    "mission-risk": mission_rows,
    "failed-by-time": failed_rows,
    "risk-by-failed-at-start": by_start_rows,
}
