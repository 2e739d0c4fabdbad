"""CSV rows of a repair log's page: the rows as read, the fitted rates, and the availability over the draws.

Each table is a header row then data rows, the log's name first; numbers are
machine numbers (``planner.csv_writer.number``) so a download reproduces the
engine's floats. Written with ``planner.csv_writer.rows_csv``.
"""

from __future__ import annotations

import math
from collections.abc import Iterator

from planner.csv_writer import number
from planner.repairlog.fit import CREDIBLE, AvailabilityResult
from planner.repairlog_file import RepairLog

TABLES = {
    "rows": "the rows as read",
    "rates": "the fitted rates, their intervals and posteriors",
    "availability": "the availability over the draws of the rates",
}


def _plain(value: float):
    return "inf" if math.isinf(value) else number(value)


def log_rows(title: str, log: RepairLog) -> Iterator[list]:
    unit = log.time_unit
    yield ["repair log", "row", "unit", "failed", "returned", f"time in the shop ({unit}s)", "still in repair"]
    for row, name, failed_text, returned_text, failed, returned in zip(
        log.rows, log.unit_names, log.failed_text, log.returned_text, log.failed, log.returned, strict=True
    ):
        open_ = not returned_text
        shop = (log.span if open_ else returned) - failed
        yield [title, row, name, failed_text, returned_text, number(shop), "yes" if open_ else "no"]


def rate_rows(title: str, fit, unit: str) -> Iterator[list]:
    share = f"{100 * CREDIBLE:g} %"
    yield [
        "repair log", "rate", "events", f"exposure ({unit}s)", f"estimate (per {unit})", "confidence",
        "interval low", "interval high", "posterior shape", f"posterior rate ({unit}s)", "posterior mean",
        f"{share} credible low", f"{share} credible high", f"mean time ({unit}s)",
    ]  # fmt: skip
    for name, estimate in (("failure, per unit in service", fit.failure), ("repair, per unit in the shop", fit.repair)):
        posterior = estimate.posterior
        low, high = posterior.interval(CREDIBLE)
        yield [
            title, name, estimate.events, number(estimate.exposure), number(estimate.value),
            number(estimate.confidence), number(estimate.low), number(estimate.high), number(posterior.shape),
            number(posterior.rate), number(posterior.mean), number(low), number(high), _plain(estimate.mean_time),
        ]  # fmt: skip


def availability_rows(title: str, result: AvailabilityResult, unit: str) -> Iterator[list]:
    """One row per draw (seeded: the seed in every row), the fitted rates' availability as draw 0."""
    yield ["repair log", "draw", f"failure rate (per {unit})", f"repair rate (per {unit})", "availability", "seed"]
    band = result.band
    if band is None:
        return
    yield [title, 0, "fitted", "fitted", number(band.availability), band.seed]
    for index, (failure, repair, availability) in enumerate(
        zip(band.failure_rates, band.repair_rates, band.by_draw, strict=True), start=1
    ):
        yield [title, index, number(failure), number(repair), number(availability), band.seed]
