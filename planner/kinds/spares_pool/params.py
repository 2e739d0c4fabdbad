"""Spares-pool parameters as a plain frozen dataclass, and the walkmath pool they stand for.

The boundary between the web app and walkmath: the model keeps these as JSON, the form produces a
``SparesPoolParams``, and only this module builds a ``walkmath.SparesPool``. Every constructor
validates and raises ``ValueError`` naming the input and its allowed range.

Failures are stated as a mean time between failures of one unit (MTBF) or as a rate, repairs as a
mean repair time or a rate, all in the pool's own time unit (hours or days). A warm spare's
failures on standby are stated the same way as the failures in service.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import walkmath as wm
from planner.kinds.spares_pool.words import STANDBY_KINDS
from planner.pool_words import TIME_UNITS, duration, unit_name
from walkmath import checks

FAILURE_STYLES = ("mtbf", "rate")
REPAIR_STYLES = ("mean", "rate")
MAX_UNITS = 5_000
MAX_SPARES = 5_000
MAX_CREWS = 1_000
# Times (MTBF, mean repair, mission) and rates, in the pool's time unit.
MIN_VALUE = 1e-9
MAX_VALUE = 1e9
MAX_MISSION = 1e7


@dataclass(frozen=True)
class SparesPoolParams:
    """A pool of ``units`` needed in service, ``spares`` on standby and ``crews`` repairing.

    ``failure`` is an MTBF (``failure_style="mtbf"``) or a failure rate per unit (``"rate"``);
    ``standby_failure`` states a warm spare's failures on standby the same way (warm only).
    ``repair`` is a mean repair time (``repair_style="mean"``) or a repair rate per crew
    (``"rate"``). ``mission`` is the length of the mission the shortage risk is counted over,
    starting with every unit in working order. ``availability_target`` is a fraction (0.999).
    """

    units: int
    spares: int
    failure: float
    repair: float
    mission: float
    time_unit: str = "hour"
    crews: int = 1
    standby: str = "cold"
    standby_failure: float | None = None
    failure_style: str = "mtbf"
    repair_style: str = "mean"
    availability_target: float = 0.999

    def __post_init__(self):
        set_ = object.__setattr__
        checks.choice("time unit", self.time_unit, tuple(TIME_UNITS))
        set_(self, "units", checks.whole("units needed", self.units, minimum=1, maximum=MAX_UNITS))
        set_(self, "spares", checks.whole("spares", self.spares, minimum=0, maximum=MAX_SPARES))
        set_(self, "crews", checks.whole("repair crews", self.crews, minimum=1, maximum=MAX_CREWS))
        checks.choice("standby", self.standby, tuple(STANDBY_KINDS))
        checks.choice("failures given as", self.failure_style, FAILURE_STYLES)
        checks.choice("repairs given as", self.repair_style, REPAIR_STYLES)
        set_(self, "failure", self._positive(self.failure_words, self.failure))
        set_(self, "repair", self._positive(self.repair_words, self.repair))
        mission = checks.real(f"mission length ({unit_name(self.time_unit, 2)})", self.mission, minimum=0.0)
        if not 0 < mission <= MAX_MISSION:
            raise ValueError(
                f"mission length must be above 0 and at most {MAX_MISSION:,.0f} {unit_name(self.time_unit, 2)}; "
                f"got {mission:g}"
            )
        set_(self, "mission", mission)
        set_(self, "availability_target", checks.open_probability("availability target", self.availability_target))
        if self.standby == "warm":
            standby = self._positive(f"standby {self.failure_words}", self.standby_failure)
            set_(self, "standby_failure", standby)
            if self._as_rate(standby) > self.failure_rate:
                bound = duration(self.failure, self.time_unit)
                raise ValueError(
                    f"standby MTBF must be at least the MTBF in service ({bound}): a spare waiting on standby "
                    "fails no more often than one in service"
                    if self.failure_style == "mtbf"
                    else f"standby failure rate must be at most the failure rate in service ({self.failure:g}): "
                    "a spare waiting on standby fails no more often than one in service"
                )
        else:
            set_(self, "standby_failure", None)

    def _positive(self, name: str, value) -> float:
        message = f"{name} must be a number from {MIN_VALUE:g} to {MAX_VALUE:g}; got {value!r}"
        try:
            number = checks.real(name, value, minimum=MIN_VALUE, maximum=MAX_VALUE)
        except ValueError:
            raise ValueError(message) from None
        return number

    def _as_rate(self, value: float) -> float:
        return 1.0 / value if self.failure_style == "mtbf" else value

    @property
    def failure_words(self) -> str:
        return "MTBF" if self.failure_style == "mtbf" else "failure rate"

    @property
    def repair_words(self) -> str:
        return "mean repair time" if self.repair_style == "mean" else "repair rate"

    @property
    def failure_rate(self) -> float:
        """Failures per unit in service per time unit."""
        return self._as_rate(self.failure)

    @property
    def repair_rate(self) -> float:
        """Repairs per crew per time unit."""
        return 1.0 / self.repair if self.repair_style == "mean" else self.repair

    @property
    def warm_failure_rate(self) -> float:
        """A waiting spare's failures per time unit: 0 cold, the failure rate hot."""
        if self.standby == "cold":
            return 0.0
        if self.standby == "hot":
            return self.failure_rate
        return min(self._as_rate(self.standby_failure), self.failure_rate)

    def pool(self, *, spares: int | None = None, crews: int | None = None) -> wm.SparesPool:
        """The walkmath pool (optionally with another number of spares or crews)."""
        return wm.SparesPool(
            units=self.units,
            spares=self.spares if spares is None else spares,
            failure_rate=self.failure_rate,
            repair_rate=self.repair_rate,
            crews=self.crews if crews is None else crews,
            warm_failure_rate=self.warm_failure_rate,
        )

    def replace(self, **changes) -> SparesPoolParams:
        """A validated copy with some fields changed."""
        return dataclasses.replace(self, **changes)

    def to_json(self) -> dict:
        data = {field.name: getattr(self, field.name) for field in dataclasses.fields(self)}
        if self.standby != "warm":
            del data["standby_failure"]
        return data

    @classmethod
    def from_json(cls, data: dict) -> SparesPoolParams:
        """Parameters from the model's JSON; ValueError naming what is wrong."""
        if not isinstance(data, dict):
            raise ValueError("parameters must be an object")
        known = {field.name for field in dataclasses.fields(cls)}
        unknown = sorted(set(data) - known)
        if unknown:
            raise ValueError(f"parameters has unknown keys: {', '.join(unknown)}")
        for name in ("units", "spares", "failure", "repair", "mission"):
            if name not in data:
                raise ValueError(f"parameters must include {name}")
        return cls(**data)
