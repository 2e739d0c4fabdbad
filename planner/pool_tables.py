"""CSV tables any pool of repairable units has, whatever kind states it: header and rows of plain
machine numbers (the shared writer, ``planner.csv_writer``, adds the scenario and version columns).

The rows read a kind's result through the names ``planner.pool_result`` lists, the same figures as
the charts in ``planner.pool_charts``, so a download always matches what is drawn.
"""

from __future__ import annotations

from planner.csv_writer import number


def mission_rows(result):
    """At each time: at least one shortage by then, none, short at that time, not short (each from its own side)."""
    mission, law = result.mission, result.failed_law
    yield [
        "scenario",
        f"time [{result.unit_many}]",
        "at least one shortage by then [probability]",
        "no shortage by then [probability]",
        "short at that time [probability]",
        "not short at that time [probability]",
    ]
    for index, time in enumerate(result.times):
        yield [
            None,
            number(time),
            number(mission.reached[index]),
            number(mission.not_reached[index]),
            number(law.shortage[index]),
            number(law.covered[index]),
        ]


def failed_rows(result):
    """The law of the number failed at each time of the mission, one row per time and number failed."""
    law = result.failed_law
    yield ["scenario", f"time [{result.unit_many}]", "units failed", "probability [that many failed at that time]"]
    for index, time in enumerate(law.times):
        for failed, prob in zip(law.failed, law.probs[index], strict=True):
            yield [None, number(time), int(failed), number(prob)]


def by_start_rows(result):
    """Mission risk, its complement and the mean time to the first shortage by units failed at the start."""
    by_start = result.by_start
    yield [
        "scenario",
        "units failed at the start",
        "shortage during the mission [probability]",
        "no shortage during the mission [probability]",
        f"mean time to the first shortage [{result.unit_many}]",
    ]
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
