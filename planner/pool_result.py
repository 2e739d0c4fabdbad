"""What every pool's result holds and says the same way, whatever kind states the pool: the base of
the kind's result.

A pool kind's result (a frozen dataclass) extends ``PoolResult`` with its own figures and says
where shortages start (``shortage_at``, ``shortage_words``); ``planner.pool_job.PoolJob`` fills the
shared fields. The shared charts, tables and headline fragments (``planner.pool_charts``,
``planner.pool_tables``, ``templates/planner/_pool_*.html``) read only these.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

import walkmath as wm
from planner.pool_words import PER_YEAR, duration, meets_availability, share, unit_name
from walkmath.uniformization import PassageCurve


@dataclass(frozen=True, eq=False)
class PoolResult:
    """The shared figures, targets met or not, and the figures in words."""

    params: Any  # the kind's parameters: time_unit, mission, availability_target at least
    risk_target: float
    availability: float
    unavailability: float
    shortage_frequency: float
    mean_shortage_duration: float
    mean_time_to_shortage: float  # from the mission's start
    times: np.ndarray
    mission: PassageCurve  # over ``times``: .reached (shortage by then), .not_reached
    failed_law: wm.FailedLaw
    time_split: wm.TimeSplit
    by_start: dict | None  # {"failed", "risk", "safe", "mean_time"} arrays; None when left out

    start_words = "every unit in working order"  # how the mission starts

    @property
    def unit(self) -> str:
        return self.params.time_unit

    @property
    def unit_one(self) -> str:
        return unit_name(self.unit)

    @property
    def unit_many(self) -> str:
        return unit_name(self.unit, 2)

    @property
    def span(self) -> str:
        return duration(self.params.mission, self.unit)

    @property
    def mission_risk(self) -> float:
        return float(self.mission.reached[-1])

    @property
    def mission_safe(self) -> float:
        return float(self.mission.not_reached[-1])

    @property
    def availability_target(self) -> float:
        return self.params.availability_target

    @property
    def meets_availability(self) -> bool:
        return meets_availability(self.availability, self.unavailability, self.availability_target)

    @property
    def meets_risk(self) -> bool:
        return self.mission_risk <= self.risk_target

    @property
    def availability_words(self) -> str:
        return share(self.availability)

    @property
    def availability_target_words(self) -> str:
        return share(self.availability_target)

    @property
    def mttf_words(self) -> str:
        return duration(self.mean_time_to_shortage, self.unit)

    @property
    def duration_words(self) -> str:
        return duration(self.mean_shortage_duration, self.unit)

    @property
    def time_short_words(self) -> str:
        return duration(self.time_split.short, self.unit)

    @property
    def shortages_per_year(self) -> float:
        return self.shortage_frequency * PER_YEAR[self.unit]
