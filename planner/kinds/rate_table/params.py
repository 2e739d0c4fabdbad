"""Rate-table parameters as a plain frozen dataclass, and the walkmath pool they stand for.

The boundary between the web app and walkmath: the model keeps these as JSON, the form produces a
``RateTableParams``, and only this module builds a ``walkmath.RatePool``. Every constructor
validates and raises ``ValueError`` naming the input (for the table, the row) and its allowed range.

The table holds, for each number of units failed 0..K, the rate at which the next unit fails and
the rate at which one failed unit comes back from repair, both for the pool as a whole and in the
pool's own time unit (hours or days). Whole-pool rates rather than a rate per unit times "units
working" and "crews busy": the kind exists for pools whose rates do not factor that way (a repair
contractor who slows down when several units wait, units that wear faster while others are out),
and the table is then exactly what the figures are worked out from.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import walkmath as wm
from planner.params_json import saved_fields
from planner.pool_words import TIME_UNITS, unit_name
from walkmath import checks

MAX_ROWS = 1_001  # numbers failed 0..1,000
MAX_RATE = 1e9  # per time unit, for the pool as a whole
MAX_MISSION = 1e7
TABLE = "rate table"  # messages about the table start with this (the form maps them to the table field)


def failed_words(failed: int) -> str:
    return f"the row for {failed:,} failed"


def table_problems(failure_rates, repair_rates) -> list[str]:
    """Every problem with a table of rates by number failed, each naming its row (empty: it is fine).

    Rows run from 0 failed to K failed (every unit of the pool). A unit can fail in every row but the
    last, and repairs go on in every row but the first: otherwise some rows could never be reached,
    or the pool would never recover from them.
    """
    if len(failure_rates) != len(repair_rates):
        return [f"{TABLE} must give a failure rate and a repair rate in every row"]
    rows = len(failure_rates)
    if not 2 <= rows <= MAX_ROWS:
        return [f"{TABLE} must have from 2 to {MAX_ROWS:,} rows (0 failed up to every unit failed); got {rows:,}"]
    top = rows - 1
    problems = []
    for failed, (failure, repair) in enumerate(zip(failure_rates, repair_rates, strict=True)):
        row = failed_words(failed)
        unreadable = [(what, rate) for what, rate in (("failure", failure), ("repair", repair)) if not _readable(rate)]
        for what, rate in unreadable:
            problems.append(f"{TABLE}, {row}: the {what} rate must be a number from 0 to {MAX_RATE:g}; got {rate!r}")
        if unreadable:
            continue
        if failed < top and failure == 0:
            problems.append(
                f"{TABLE}, {row}: the failure rate must be above 0 (only the last row, every unit failed, has none); "
                "end the table at the number failed that can no longer grow"
            )
        if failed == top and failure != 0:
            problems.append(f"{TABLE}, {row}: the last row is every unit failed, so its failure rate must be 0")
        if failed == 0 and repair != 0:
            problems.append(f"{TABLE}, {row}: with none failed nothing is repaired, so its repair rate must be 0")
        if failed > 0 and repair == 0:
            problems.append(
                f"{TABLE}, {row}: the repair rate must be above 0, or the pool would never get back from there"
            )
    return problems


@dataclass(frozen=True)
class RateTableParams:
    """A pool stated by its failure and repair rates at each number failed, 0..K.

    ``failure_rates[k]``: failures a time unit across the pool with k failed (k -> k + 1);
    ``repair_rates[k]``: repairs finished a time unit with k failed (k -> k - 1). The pool is short
    whenever at least ``shortage_at`` units are failed. ``mission`` is the length of the mission
    the shortage risk is counted over, starting with ``start_failed`` units failed.
    ``availability_target`` is a fraction (0.999).
    """

    failure_rates: tuple[float, ...]
    repair_rates: tuple[float, ...]
    shortage_at: int
    mission: float
    time_unit: str = "hour"
    start_failed: int = 0
    availability_target: float = 0.999

    def __post_init__(self):
        set_ = object.__setattr__
        checks.choice("time unit", self.time_unit, tuple(TIME_UNITS))
        failure, repair = _rates(self.failure_rates), _rates(self.repair_rates)
        problems = table_problems(failure, repair)
        if problems:
            raise ValueError("; ".join(problems))
        set_(self, "failure_rates", tuple(float(rate) for rate in failure))
        set_(self, "repair_rates", tuple(float(rate) for rate in repair))
        top = len(failure) - 1
        set_(self, "shortage_at", checks.whole("shortage level", self.shortage_at, minimum=1, maximum=top))
        set_(
            self,
            "start_failed",
            checks.whole("units failed at the start", self.start_failed, minimum=0, maximum=self.shortage_at - 1),
        )
        many = unit_name(self.time_unit, 2)
        mission = checks.real(f"mission length ({many})", self.mission, minimum=0.0)
        if not 0 < mission <= MAX_MISSION:
            raise ValueError(f"mission length must be above 0 and at most {MAX_MISSION:,.0f} {many}; got {mission:g}")
        set_(self, "mission", mission)
        set_(self, "availability_target", checks.open_probability("availability target", self.availability_target))

    @property
    def top(self) -> int:
        """K, the most units that can be failed (every unit of the pool)."""
        return len(self.failure_rates) - 1

    def pool(self, *, repair_speed: float = 1.0) -> wm.RatePool:
        """The walkmath pool (optionally with every repair rate times ``repair_speed``)."""
        repair = [rate * repair_speed for rate in self.repair_rates]
        return wm.RatePool(list(self.failure_rates), repair, shortage_at=self.shortage_at)

    def scaled(self, *, failure: float = 1.0, repair: float = 1.0) -> RateTableParams:
        """A validated copy with every failure rate times ``failure`` and every repair rate times ``repair``."""
        for name, factor in (("failure rate factor", failure), ("repair speed", repair)):
            checks.real(name, factor, minimum=0.0, strict_minimum=True)
        return self.replace(
            failure_rates=tuple(rate * failure for rate in self.failure_rates),
            repair_rates=tuple(rate * repair for rate in self.repair_rates),
        )

    def replace(self, **changes) -> RateTableParams:
        """A validated copy with some fields changed."""
        return dataclasses.replace(self, **changes)

    def to_json(self) -> dict:
        data = {field.name: getattr(self, field.name) for field in dataclasses.fields(self)}
        data["failure_rates"], data["repair_rates"] = list(self.failure_rates), list(self.repair_rates)
        return data

    @classmethod
    def from_json(cls, data: dict) -> RateTableParams:
        """Parameters from the model's JSON; ValueError naming what is wrong."""
        return cls(**saved_fields(cls, data, ("failure_rates", "repair_rates", "shortage_at", "mission")))


def _readable(rate) -> bool:
    return isinstance(rate, float) and 0 <= rate <= MAX_RATE  # False for nan


def _rates(values) -> list:
    """The rates as a list, whole numbers as floats (anything else left as given for ``table_problems``)."""
    if isinstance(values, (str, bytes)) or not hasattr(values, "__iter__"):
        raise ValueError(f"{TABLE} must be a list of rates, one per number failed; got {values!r}")
    return [_float(rate) for rate in values]


def _float(rate):
    if isinstance(rate, bool) or not isinstance(rate, (int, float)):
        return rate
    try:
        return float(rate)
    except OverflowError:  # a whole number past the float range
        return rate


def rate_text(rate: float) -> str:
    """A rate as an analyst types it back: the shortest text that reads as the same float ('0.008', '0')."""
    text = repr(float(rate))
    return text[:-2] if text.endswith(".0") else text
