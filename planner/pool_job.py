"""The work every pool kind's job shares, whatever kind states the pool: a base for the kind's job.

A pool kind's job subclasses ``PoolJob`` with the engine's pool of failure and repair rates by
number failed (a ``walkmath.RatePool``; a spares pool hands over its ``rates``). The base prices
and runs what every pool page shows: the long-run availability and unavailability, shortages a
year and how long each lasts, the mean time to the first shortage, the mission curves and the law
of units failed over the mission (from the mission's start), the expected time short, and the
mission risk by units already failed at the start. Each engine call is priced with the engine's
cost model (``RatePool.cost``) in ``shared_parts`` before any of it runs; the kind adds its own
parts and figures. Reads only; no database.
"""

from __future__ import annotations

import numpy as np

import walkmath as wm
from planner.formatting import number
from planner.kinds import Job, Part
from planner.pool_words import duration

# Points on the mission curves and the failed-unit law: the start and 40 equal steps to the end.
MISSION_STEPS = 40
# Most starting numbers failed the risk-by-start table works out (0 .. this - 1, below the shortage level).
MAX_STARTS = 25
BY_START_LEFT_OUT = "the mission risk by units already failed at the start (too much work for one request)"


class PoolJob(Job):
    """One request's shared work on one pool; ``params`` has ``mission`` and ``time_unit``."""

    size_words = "this pool"  # the pool's size in the kind's words, for the refusal ('12 units and spares')

    def __init__(self, params, risk_target: float, rates: wm.RatePool, *, start: int = 0):
        self.params = params
        self.risk_target = risk_target
        self.rates = rates
        self.start = start
        self.times = np.linspace(0.0, params.mission, MISSION_STEPS + 1)
        self.starts = np.arange(min(rates.shortage_at, MAX_STARTS))

    def shared_parts(self) -> list[Part]:
        """The shared engine calls, priced by ``RatePool.cost``: the long-run figures and both mean
        times, the mission curves, the failed-unit law, the time short, and (optional) the risk by start."""
        rates, mission = self.rates, self.params.mission
        one_start = rates.cost("shortage_curve", times=mission).units + rates.cost("mean_time").units
        return [
            Part("long_run", rates.cost("long_run").units + 2 * rates.cost("mean_time").units),
            Part("mission", rates.cost("shortage_curve", times=self.times).units),
            Part("failed_law", rates.cost("failed_law", times=self.times).units),
            Part("shortage_time", rates.cost("shortage_time", times=mission).units),
            Part("by_start", len(self.starts) * one_start, required=False),
        ]

    def refusal(self, units: int, cap: int) -> str:
        """Why the page is refused, in the planner's words, naming what to change."""
        events = self.rates.chain.uniformization_rate * self.params.mission
        return (
            f"This pool is too large to work out in one request: {self.size_words}, with up to about "
            f"{number(events)} failures and repairs within a mission of {self.span_words()} (about "
            f"{number(units / cap)} times this server's limit). To fit, shorten the mission or plan the pool in "
            "smaller groups."
        )

    def span_words(self) -> str:
        return duration(self.params.mission, self.params.time_unit)

    def headline(self) -> tuple[float, str]:
        """The shortage risk over the mission from its start (one sweep), stored with the pool."""
        risk, _ = self.rates.shortage_split(self.params.mission, failed=self.start)
        return risk, self.span_words()

    def shared_figures(self, allowed: dict[str, int]) -> dict:
        """The shared figures by the names ``planner.pool_result.PoolResult`` reads; the risk by start
        only when ``allowed`` has it (None otherwise, with ``BY_START_LEFT_OUT`` for the kind's notes).
        Each part of ``shared_parts`` is reported done (``part_done``) as soon as it is worked out."""
        rates, start, mission = self.rates, self.start, self.params.mission
        availability, unavailability = rates.availability_split()
        figures = {
            "params": self.params,
            "risk_target": self.risk_target,
            "availability": availability,
            "unavailability": unavailability,
            "shortage_frequency": rates.shortage_frequency(),
            "mean_shortage_duration": rates.mean_shortage_duration(),
            "mean_time_to_shortage": rates.mean_time_to_shortage(start),
            "times": self.times,
        }
        self.part_done("long_run")
        figures["mission"] = rates.mission_curves(self.times, start)
        self.part_done("mission")
        figures["failed_law"] = rates.failed_law(self.times, start)
        self.part_done("failed_law")
        figures["time_split"] = rates.shortage_time(mission, start)
        self.part_done("shortage_time")
        figures["by_start"] = None
        if "by_start" in allowed:
            figures["by_start"] = self._by_start()
            self.part_done("by_start")
        return figures

    def _by_start(self) -> dict:
        """The mission risk from each number failed at the start, each start on its own sweep.

        One more unit failed at the start never lowers the risk (coupling: the chain started higher
        stays at or above the other until they meet), so a running maximum (minimum for the no-shortage
        side) removes rounding ripples and the curve is monotone by construction. The mean times are sums
        over the levels still to climb, one term more for each unit fewer failed, so they never rise.
        """
        risk, safe, mean_time = [], [], []
        for failed in self.starts.tolist():
            shortage, no_shortage = self.rates.shortage_split(self.params.mission, failed=failed)
            risk.append(shortage)
            safe.append(no_shortage)
            mean_time.append(self.rates.mean_time_to_shortage(failed=failed))
        return {
            "failed": self.starts,
            "risk": np.maximum.accumulate(risk),
            "safe": np.minimum.accumulate(safe),
            "mean_time": np.array(mean_time),
        }
