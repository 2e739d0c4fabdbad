"""Reorder-plan parameters as a plain frozen dataclass, and the walkmath laws they stand for.

This is the boundary between the web app and walkmath for this kind: the model
keeps the parameters as JSON, the form produces a ``ReorderPlanParams``, and
only this module turns one into walkmath laws. Every constructor validates and
raises ``ValueError`` naming the input and its allowed range, before building
any law.

A plan states the demand in one period (a count law), the lead time (fixed, or
a table of lead times with their chances), the review period (0: the stock is
watched all the time; N: it is counted every N periods), the service target
(cycle service level or fill rate), what happens to demand when the shelf is
empty (``unmet``: backordered, the default of plans saved before it was asked,
or lost) and, optionally, the order quantity and the costs.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import walkmath as wm
from planner.count_law import CountLaw, value_table
from planner.formatting import PERIODS
from walkmath import checks

MEASURES = ("cycle", "fill")
# What happens to demand the shelf cannot meet: it waits for the next delivery, or the sale is lost.
UNMET_RULES = ("backorder", "lost")
MAX_LEAD_TIME = 365  # periods (a year of days)
MAX_REVIEW_PERIOD = 365
MAX_ORDER_QUANTITY = 1_000_000
MAX_PRICE = 1e12  # any money unit, per unit-period, per order or per unit short
MAX_UNIT_NAME = 24
# Widest demand law per period (possible amounts in one period). Checked on the numbers before any law
# is built; the plan's full cost is priced by the read service.
MAX_DEMAND_WIDTH = 20_001


@dataclass(frozen=True)
class ReorderPlanParams:
    """A reorder plan: demand per period, lead time, review period, service target, optional order size and costs.

    Exactly one of ``lead_time`` (whole periods) and ``lead_time_table``
    ((periods, chance) rows) is given. ``target`` is a fraction (0.99);
    ``measure`` says what it is a target for: ``cycle`` (chance that an order
    cycle passes without a stock-out) or ``fill`` (share of demand served from
    stock, which needs ``order_quantity``). Costs are per ``period``; when any
    is given, ``holding`` must be above 0 and the others count as 0 if left out.
    """

    demand: CountLaw
    target: float
    lead_time: int | None = None
    lead_time_table: tuple[tuple[int, float], ...] = ()
    period: str = "day"
    unit: str = "units"
    review_period: int = 0
    measure: str = "cycle"
    order_quantity: int | None = None
    holding: float | None = None
    order_cost: float | None = None
    shortage_penalty: float | None = None
    unmet: str = "backorder"

    def __post_init__(self):
        set_ = object.__setattr__
        checks.choice("period", self.period, tuple(PERIODS))
        set_(self, "unit", _unit_name(self.unit))
        self._check_demand()
        self._check_lead_time()
        set_(self, "measure", checks.choice("service measure", self.measure, MEASURES))
        set_(self, "target", checks.open_probability("service target", self.target))
        if self.order_quantity is not None:
            quantity = checks.whole("order quantity", self.order_quantity, minimum=1, maximum=MAX_ORDER_QUANTITY)
            set_(self, "order_quantity", quantity)
        elif self.measure == "fill":
            raise ValueError(
                f"order quantity is needed for a fill-rate target: a whole number from 1 to {MAX_ORDER_QUANTITY:,}"
            )
        self._check_costs()
        set_(self, "unmet", checks.choice("when the shelf is empty", self.unmet, UNMET_RULES))
        if self.unmet == "lost" and self.policy_lead_cycles is None:
            raise ValueError(
                "when the shelf is empty and the sale is lost, the plan needs a fixed lead time that is a whole "
                "number of review periods (the stock must be followed order by order): give one, or choose "
                "backorders"
            )

    def _check_demand(self) -> None:
        if not isinstance(self.demand, CountLaw):
            raise ValueError("demand law is required")
        width = self.demand.width_bound()
        if width > MAX_DEMAND_WIDTH:
            raise ValueError(
                f"demand mean must be smaller or less spread out: in one {self.period} demand could take about "
                f"{width:,} different amounts (at most {MAX_DEMAND_WIDTH:,}). Count in larger units "
                "(crates rather than loaves) or plan by a shorter period."
            )
        if self.demand.family == "table":
            moving = any(value > 0 and prob > 0 for value, prob in self.demand.table)
        else:
            moving = self.demand.mean_count() > 0
        if not moving:
            raise ValueError("demand must have some chance of at least one unit in a period (its mean is 0)")

    def _check_lead_time(self) -> None:
        set_ = object.__setattr__
        review = checks.whole("review period", self.review_period, minimum=0, maximum=MAX_REVIEW_PERIOD)
        set_(self, "review_period", review)
        if self.lead_time is None and not self.lead_time_table:
            raise ValueError("lead time is required: a number of periods, or a table of lead times with their chances")
        if self.lead_time is not None and self.lead_time_table:
            raise ValueError("lead time must be given either as a number of periods or as a table, not both")
        if self.lead_time is not None:
            lead = checks.whole("lead time", self.lead_time, minimum=0, maximum=MAX_LEAD_TIME)
            set_(self, "lead_time", lead)
            shortest = lead
        else:
            rows = value_table("lead time table", self.lead_time_table)
            for value, _ in rows:
                checks.whole("lead time table value", value, minimum=0, maximum=MAX_LEAD_TIME)
            set_(self, "lead_time_table", tuple(sorted(rows)))
            shortest = min(value for value, prob in rows if prob > 0)
        if shortest + review < 1:
            raise ValueError(
                "lead time must be at least 1 period when the stock is watched all the time (review period 0): "
                "an order that arrives at once needs no reorder point"
            )

    def _check_costs(self) -> None:
        for name, label in (
            ("holding", "holding cost"),
            ("order_cost", "order cost"),
            ("shortage_penalty", "shortage penalty"),
        ):
            value = getattr(self, name)
            if value is not None:
                object.__setattr__(self, name, checks.real(label, value, minimum=0.0, maximum=MAX_PRICE))
        if self.has_costs and not self.holding:
            raise ValueError(
                "holding cost must be above 0 when costs are given (without it, more stock would always look cheaper)"
            )

    # -- derived figures (no law is built) ------------------------------------------------------------

    @property
    def fixed_lead_time(self) -> bool:
        return self.lead_time is not None

    @property
    def has_costs(self) -> bool:
        return any(value is not None for value in (self.holding, self.order_cost, self.shortage_penalty))

    @property
    def mean_lead_time(self) -> float:
        if self.fixed_lead_time:
            return float(self.lead_time)
        return sum(value * prob for value, prob in self.lead_time_table)

    @property
    def review_cycle(self) -> int:
        """Periods between two counts of the review policy (1 when the stock is watched all the time)."""
        return max(self.review_period, 1)

    @property
    def policy_lead_cycles(self) -> int | None:
        """The lead time in review cycles, or None when the review policy cannot be worked out exactly.

        The policy's figures need an order to arrive at a count: a fixed lead time that is
        a whole number of review cycles.
        """
        if not self.fixed_lead_time or self.lead_time % self.review_cycle:
            return None
        return self.lead_time // self.review_cycle

    def prices(self) -> tuple[float, float, float]:
        """Holding per unit-period, cost per order, penalty per unit short (0 for those not given)."""
        return (self.holding or 0.0, self.order_cost or 0.0, self.shortage_penalty or 0.0)

    def replace(self, **changes) -> ReorderPlanParams:
        """A validated copy with some fields changed."""
        return dataclasses.replace(self, **changes)

    # -- laws (built once per request by the kind's job) ------------------------------------------------

    def demand_law(self) -> wm.StepLaw:
        return self.demand.law()

    def lead_time_law(self) -> int | wm.StepLaw:
        """The lead time as walkmath takes it: whole periods, or a law over whole periods."""
        if self.fixed_lead_time:
            return self.lead_time
        return wm.StepLaw.from_pmf(dict(self.lead_time_table))

    # -- JSON --------------------------------------------------------------------------------------------

    def to_json(self) -> dict:
        data = {
            "period": self.period,
            "unit": self.unit,
            "demand": self.demand.to_json(),
            "review_period": self.review_period,
            "measure": self.measure,
            "target": self.target,
        }
        if self.fixed_lead_time:
            data["lead_time"] = self.lead_time
        else:
            data["lead_time_table"] = [list(row) for row in self.lead_time_table]
        if self.unmet != "backorder":  # plans saved before the choice existed keep their JSON
            data["unmet"] = self.unmet
        for name in ("order_quantity", "holding", "order_cost", "shortage_penalty"):
            if getattr(self, name) is not None:
                data[name] = getattr(self, name)
        return data

    @classmethod
    def from_json(cls, data: dict) -> ReorderPlanParams:
        """Parameters from the model's JSON; ValueError naming what is wrong."""
        if not isinstance(data, dict):
            raise ValueError("parameters must be an object")
        known = {f.name for f in dataclasses.fields(cls)}
        unknown = sorted(set(data) - known)
        if unknown:
            raise ValueError(f"parameters has unknown keys: {', '.join(unknown)}")
        for name in ("demand", "target"):
            if name not in data:
                raise ValueError(f"parameters must include {name}")
        values = dict(data)
        values["demand"] = CountLaw.from_json(values["demand"])
        values["lead_time_table"] = tuple(tuple(row) for row in values.get("lead_time_table") or ())
        return cls(**values)


def _unit_name(text) -> str:
    """What the stock is counted in ('crates', 'sacks'): letters first, then letters, digits, spaces or hyphens."""
    message = (
        f"unit name must be 1 to {MAX_UNIT_NAME} letters, digits, spaces or hyphens, starting with a letter "
        f"(e.g. crates); got {text!r}"
    )
    if not isinstance(text, str):
        raise ValueError(message)
    text = " ".join(text.split())
    if not text:
        return "units"
    if len(text) > MAX_UNIT_NAME or not text[0].isalpha() or not all(c.isalnum() or c in " -" for c in text):
        raise ValueError(message)
    return text
