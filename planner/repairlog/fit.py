"""A repair log fitted, and the pool's availability with its credible range; no Django here.

``fit_log`` fits the failure and repair rates (``walkmath.fit_repair_log``).
``AvailabilityJob`` prices the availability at the fit and over posterior draws
with the engine's cost model, chooses how many draws the page's budget affords,
and only then runs them. ``fitted_rates`` hands a kind the plain description of
the pool it needs to make a plan (``Kind.params_from_fit``).
"""

from __future__ import annotations

from dataclasses import dataclass

import walkmath as wm
from planner.repairlog_file import RepairLog

SEED = 1
CONFIDENCE = 0.9
CREDIBLE = 0.9
MIN_DRAWS, MAX_DRAWS = 50, 400
# Mission of a plan made from a log, before the analyst sets one: four weeks.
MISSION = {"day": 28, "hour": 672}


def fit_log(log: RepairLog) -> wm.RepairLogFit:
    """The fitted rates, per unit of the log's time; ValueError when the log cannot be fitted."""
    return wm.fit_repair_log(
        log.failed, log.returned, start=0.0, end=log.span, units=log.units, spares=log.spares, confidence=CONFIDENCE
    )


@dataclass(frozen=True, eq=False)
class AvailabilityResult:
    band: wm.AvailabilityBand | None
    affordable: int  # draws the budget affords (before the MAX_DRAWS ceiling)
    unit_cost: int  # work units of one draw
    budget: int
    refusal: str  # why there is no availability or no range


class AvailabilityJob:
    """The availability at the fitted rates and over posterior draws, priced against the page's ``cap`` first.

    Crews: one per unit (repairs never wait), the model the fitted repair rate stands for: the
    time in the shop a log records already includes any wait for a crew.
    """

    def __init__(self, fit: wm.RepairLogFit, *, seed: int = SEED):
        self.fit, self.seed = fit, seed

    def run(self, cap: int) -> AvailabilityResult:
        try:
            one = wm.availability_band_work(self.fit, draws=1).units
        except ValueError as refusal:  # no failure or no completed repair: no pool to work out
            return AvailabilityResult(None, 0, 0, cap, f"No availability: {refusal}.")
        unit_cost = max(1, one // 2)
        affordable = max(0, cap // unit_cost - 1)
        draws = min(affordable, MAX_DRAWS)
        if draws < MIN_DRAWS:
            return AvailabilityResult(
                None, affordable, unit_cost, cap,
                f"A credible range needs at least {MIN_DRAWS} draws; this page's budget affords {affordable} for a "
                "pool this large.",
            )  # fmt: skip
        band = wm.availability_band(self.fit, draws=draws, seed=self.seed, credible=CREDIBLE, cap=cap)
        return AvailabilityResult(band, affordable, unit_cost, cap, "")


@dataclass(frozen=True)
class FittedRates:
    """What a repair log's fit hands to ``Kind.params_from_fit``: plain values only.

    ``record`` tells it from a stock history's ``FittedLaws``; rates are per ``time_unit``
    (failures per unit in service, repairs per unit in the shop). A kind reads the mission
    from ``horizon`` (whole ``time_unit``s) and ignores ``start`` and ``high``.
    """

    source: str
    time_unit: str
    units: int
    spares: int
    failure_rate: float
    repair_rate: float
    failures: int
    repairs: int
    span: float
    summary: str
    record: str = "repair_log"


def fitted_rates(fit: wm.RepairLogFit, log: RepairLog, *, source: str) -> FittedRates:
    unit = log.time_unit
    summary = (
        f"{fit.failure.events} failures over {fit.failure.exposure:,.6g} unit-{unit}s in service, "
        f"MTTF {fit.failure.mean_time:,.4g} {unit}s; {fit.repair.events} repairs completed over "
        f"{fit.repair.exposure:,.6g} {unit}s in the shop ({fit.still_in_repair} still in repair at the end), "
        f"mean repair time {fit.repair.mean_time:,.4g} {unit}s"
    )
    return FittedRates(
        source=source, time_unit=unit, units=fit.units, spares=fit.spares, failure_rate=fit.failure.value,
        repair_rate=fit.repair.value, failures=fit.failure.events, repairs=fit.repair.events, span=fit.span,
        summary=summary,
    )  # fmt: skip
