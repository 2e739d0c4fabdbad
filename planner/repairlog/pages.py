"""What the repair-log page shows, gathered for the template: rows, the fitted rates in words, the pool.

No maths here: every number comes from the engine through ``planner.repairlog.fit``;
this module only picks, formats and labels them.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from planner.formatting import number
from planner.kinds import plan_options
from planner.pool_words import duration, share
from planner.repairlog.fit import CONFIDENCE, CREDIBLE, MAX_DRAWS, MIN_DRAWS, AvailabilityJob, fitted_rates
from planner.repairlog_file import RepairLog

PREVIEW_HEAD, PREVIEW_TAIL = 10, 5


def log_rows(log: RepairLog) -> dict:
    """The first and last rows ([row, unit, failed, returned, time in the shop], None between the ends)."""
    rows = []
    for row, unit, failed_text, returned_text, failed, returned in zip(
        log.rows, log.unit_names, log.failed_text, log.returned_text, log.failed, log.returned, strict=True
    ):
        shop = f"{number(returned - failed)}" if returned_text else f"{number(log.span - failed)} so far"
        rows.append([row, unit, failed_text, returned_text or "still in repair", shop])
    if len(rows) <= PREVIEW_HEAD + PREVIEW_TAIL:
        return {"rows": rows, "hidden_rows": 0}
    return {
        "rows": rows[:PREVIEW_HEAD] + [None] + rows[-PREVIEW_TAIL:],
        "hidden_rows": len(rows) - PREVIEW_HEAD - PREVIEW_TAIL,
    }


@dataclass(frozen=True)
class RateRow:
    quantity: str
    estimate: str
    interval: str
    posterior: str


def _span(low: float, high: float, unit: str | None = None) -> str:
    def text(value: float) -> str:
        if math.isinf(value):
            return "no upper end"
        return duration(value, unit) if unit else number(value, 4)

    return f"{text(low)} to {text(high)}"


def rate_rows(fit, unit: str) -> list[RateRow]:
    """Each rate and its mean time: the estimate, the exact confidence interval, the posterior's mean and range."""
    rows = []
    for name, estimate, per, time_name in (
        ("Failure rate", fit.failure, f"per unit in service per {unit}", "MTTF of one unit in service"),
        ("Repair rate", fit.repair, f"per unit in the shop per {unit}", "Mean repair time (failure to return)"),
    ):
        posterior = estimate.posterior
        low, high = posterior.interval(CREDIBLE)
        rows.append(
            RateRow(
                f"{name} ({per})",
                number(estimate.value, 4),
                _span(estimate.low, estimate.high),
                f"mean {number(posterior.mean, 4)}, {_span(low, high)}",
            )
        )
        rows.append(
            RateRow(
                time_name,
                duration(estimate.mean_time, unit) if estimate.events else "no finite estimate",
                _span(*estimate.mean_time_interval, unit),
                f"{_span(1.0 / high, 1.0 / low, unit)}",
            )
        )
    return rows


def log_context(saved, log: RepairLog, fit, form, *, cap: int) -> dict:
    """Everything the log's page shows; runs the priced availability job."""
    unit = log.time_unit
    result = AvailabilityJob(fit).run(cap)
    band = result.band
    context = {
        "saved": saved,
        "log": log,
        **log_rows(log),
        "fit": fit,
        "unit": unit,
        "rates": rate_rows(fit, unit),
        "confidence": CONFIDENCE,
        "credible": CREDIBLE,
        "exposure": f"{number(fit.failure.exposure, 6)} unit-{unit}s",  # summed over the units in service
        "time_short": f"{number(fit.time_short, 6)} unit-{unit}s",
        "shop_time": duration(fit.repair.exposure, unit),
        "result": result,
        "min_draws": MIN_DRAWS,
        "max_draws": MAX_DRAWS,
        "form": form,
    }
    if band is not None:
        context |= {
            "availability": share(band.availability),
            "availability_low": share(band.low),
            "availability_high": share(band.high),
        }
    rates = fitted_rates(fit, log, source=saved.title)
    mission = form.cleaned_data["mission"] if form.is_valid() else None
    context["plan_options"] = [] if mission is None else plan_options(rates, start=0, high=None, horizon=mission)
    return context
