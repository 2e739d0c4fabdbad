"""Stock-plan parameters as a plain frozen dataclass, and the change-per-period laws they stand for.

This is the boundary between the web app and walkmath: the model keeps the
parameters as JSON, the form produces a ``StockPlanParams``, and only this
module turns one into walkmath laws. Every constructor validates and raises
``ValueError`` naming the input and its allowed range, before building any law.

The usual way to state a plan is ``step_method="net"``: demand each period (a
count law, optionally scaled by a repeating profile), an optional supply law
each period, and deliveries on a schedule. The change-per-period table
(``"table"``) and the one-up/one-down chances (``"nearest"``) are the advanced
options. Saved JSON from earlier versions (no ``period``, arrivals always set)
loads unchanged.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

import walkmath as wm
from planner.count_law import MAX_JUMP, SCALABLE_FAMILIES, CountLaw, json_list, json_rows, value_table
from planner.formatting import PERIODS
from walkmath import checks

STEP_METHODS = ("net", "table", "nearest")

MAX_HORIZON = 3650  # ten years of daily periods
MAX_LEVEL = 1_000_000
MAX_CYCLE = 400  # periods in one repetition of profile x deliveries
MAX_PROFILE_FACTORS = 31  # distinct factors: one law is built per distinct factor
# Widest change-per-period law the planner builds (possible changes in one period). Checked on the
# parameters before any law is built; the walk's full cost is priced separately by the read service.
MAX_LAW_WIDTH = 20_001


@dataclass(frozen=True)
class StockPlanParams:
    """A stock plan: start stock, safety floor (``low``), capacity (``high``), rules, horizon and the change law.

    ``period`` names the planning period (day, week, shift, month); the horizon
    and every rate are counted in it. ``below`` is what happens to demand the
    stock cannot meet and ``above`` to stock beyond capacity (the rule names
    are walkmath's, ``walkmath.checks.BELOW_RULES`` / ``ABOVE_RULES``).

    The change per period is given one of three ways (``step_method``):
    ``net`` (optional supply law minus demand, the usual way), ``table``
    (probabilities of each change) or ``nearest`` (chances of one up and one
    down). ``profile`` scales mean demand period by period in a repeating cycle
    (weekday factors); ``delivery_every``/``delivery_size`` add a fixed
    delivery in periods every, 2 x every, ...
    """

    start: int
    horizon: int
    period: str = "day"
    low: int = 0
    high: int | None = None
    below: str = checks.DEFAULT_BELOW
    above: str = checks.DEFAULT_ABOVE
    step_method: str = "net"
    up: float | None = None
    down: float | None = None
    table: tuple[tuple[int, float], ...] = ()
    arrivals: CountLaw | None = None
    demand: CountLaw | None = None
    profile: tuple[float, ...] = ()
    delivery_every: int | None = None
    delivery_size: int = 0

    def __post_init__(self):
        set_ = object.__setattr__
        checks.choice("period", self.period, tuple(PERIODS))
        set_(self, "horizon", checks.whole("horizon", self.horizon, minimum=1, maximum=MAX_HORIZON))
        set_(self, "low", checks.whole("safety floor", self.low, minimum=-MAX_LEVEL, maximum=MAX_LEVEL))
        if self.high is not None:
            set_(self, "high", checks.whole("capacity", self.high, minimum=self.low, maximum=MAX_LEVEL))
        top = self.high if self.high is not None else MAX_LEVEL
        set_(self, "start", checks.whole("start stock", self.start, minimum=self.low, maximum=top))
        checks.choice("unmet demand rule", self.below, checks.BELOW_RULES)
        checks.choice("excess stock rule", self.above, checks.ABOVE_RULES)
        checks.choice("change per period", self.step_method, STEP_METHODS)
        if self.step_method == "nearest":
            set_(self, "up", checks.probability("chance of one up", self.up))
            set_(self, "down", checks.probability("chance of one down", self.down))
            if self.up + self.down > 1 + checks.SUM_TOLERANCE:
                raise ValueError(
                    f"chance of one up + chance of one down must be at most 1; got {self.up + self.down:.12g}"
                )
        if self.step_method == "table":
            set_(self, "table", value_table("change table", self.table))
        if self.step_method == "net":
            if not isinstance(self.demand, CountLaw):
                raise ValueError("demand law is required when the plan is given as demand and deliveries")
            if self.arrivals is not None and not isinstance(self.arrivals, CountLaw):
                raise ValueError("supply law must be a count law or none")
        self._check_cycle()
        self._check_width()

    def _check_cycle(self) -> None:
        set_ = object.__setattr__
        if self.profile:
            if self.step_method != "net" or self.demand.family not in SCALABLE_FAMILIES:
                raise ValueError("demand profile needs Poisson or negative binomial demand")
            factors = tuple(checks.real("demand profile factor", f, minimum=0.0, maximum=100.0) for f in self.profile)
            if len(factors) > MAX_CYCLE:
                raise ValueError(f"demand profile must have at most {MAX_CYCLE} factors; got {len(factors)}")
            if len(set(factors)) > MAX_PROFILE_FACTORS:
                raise ValueError(
                    f"demand profile must have at most {MAX_PROFILE_FACTORS} different factors; "
                    f"got {len(set(factors))} (round them, e.g. to 0.05)"
                )
            set_(self, "profile", factors)
        if self.delivery_every is not None:
            set_(
                self,
                "delivery_every",
                checks.whole("delivery every", self.delivery_every, minimum=1, maximum=MAX_CYCLE),
            )
            size = checks.whole("delivery size", self.delivery_size, minimum=1, maximum=MAX_JUMP)
            set_(self, "delivery_size", size)
        else:
            set_(self, "delivery_size", 0)
        if self.cycle_length > MAX_CYCLE:
            raise ValueError(
                f"demand profile length x delivery interval must repeat within {MAX_CYCLE} periods; "
                f"got {self.cycle_length}"
            )

    def _check_width(self) -> None:
        """Refuse, before building any law, a change law wider than ``MAX_LAW_WIDTH`` possible changes."""
        if self.step_method != "net":
            return
        scale = max(self.profile, default=1.0)
        width = self.demand.width_bound(scale) + (self.arrivals.width_bound() - 1 if self.arrivals else 0)
        if width > MAX_LAW_WIDTH:
            raise ValueError(
                f"demand mean must be smaller or less spread out: in one {self.period} the stock could change "
                f"in about {width:,} different ways (at most {MAX_LAW_WIDTH:,}). Count in larger units "
                "(crates rather than loaves) or plan by a shorter period."
            )

    @property
    def cycle_length(self) -> int:
        return math.lcm(len(self.profile) or 1, self.delivery_every or 1)

    @property
    def mean_change(self) -> float:
        """Mean change per period over the repeating cycle (units per period), from the numbers alone."""
        if self.step_method == "nearest":
            return self.up - self.down
        if self.step_method == "table":
            return math.fsum(value * prob for value, prob in self.table)
        factor = math.fsum(self.profile) / len(self.profile) if self.profile else 1.0
        supply = self.arrivals.mean_count() if self.arrivals else 0.0
        delivered = self.delivery_size / self.delivery_every if self.delivery_every else 0.0
        return supply + delivered - self.demand.mean_count() * factor

    def replace(self, **changes) -> StockPlanParams:
        """A validated copy with some fields changed."""
        return dataclasses.replace(self, **changes)

    def to_json(self) -> dict:
        data = {
            "period": self.period,
            "start": self.start,
            "horizon": self.horizon,
            "low": self.low,
            "high": self.high,
            "below": self.below,
            "above": self.above,
            "step_method": self.step_method,
        }
        if self.step_method == "nearest":
            data.update(up=self.up, down=self.down)
        if self.step_method == "table":
            data["table"] = [list(row) for row in self.table]
        if self.step_method == "net":
            data.update(arrivals=self.arrivals.to_json() if self.arrivals else None, demand=self.demand.to_json())
        if self.profile:
            data["profile"] = list(self.profile)
        if self.delivery_every is not None:
            data.update(delivery_every=self.delivery_every, delivery_size=self.delivery_size)
        return data

    @classmethod
    def from_json(cls, data: dict) -> StockPlanParams:
        """Parameters from the model's JSON, of this or an earlier version; ValueError naming what is wrong."""
        if not isinstance(data, dict):
            raise ValueError("parameters must be an object")
        known = {f.name for f in dataclasses.fields(cls)}
        unknown = sorted(set(data) - known)
        if unknown:
            raise ValueError(f"parameters has unknown keys: {', '.join(unknown)}")
        for name in ("start", "horizon"):
            if name not in data:
                raise ValueError(f"parameters must include {name}")
        values = dict(data)
        values.setdefault("step_method", "nearest")  # the first release's default
        for name in ("arrivals", "demand"):
            if values.get(name) is not None:
                values[name] = CountLaw.from_json(values[name])
        values["table"] = json_rows("change table", values.get("table"))
        values["profile"] = json_list("demand profile", values.get("profile"))
        try:
            return cls(**values)
        except TypeError as exc:  # a value of the wrong type (a list where a number belongs, say)
            raise ValueError(f"parameters hold a value of the wrong type ({exc})") from exc

    # -- the laws (built once per request by the kind's job) -----------------

    def base_law(self, scale: float = 1.0) -> wm.StepLaw:
        """The change law of an ordinary period (demand mean times ``scale``)."""
        if self.step_method == "nearest":
            return wm.StepLaw.nearest(up=self.up, down=self.down)
        if self.step_method == "table":
            return wm.StepLaw.from_pmf(dict(self.table))
        supply = self.arrivals.law() if self.arrivals else wm.StepLaw.fixed(0)
        return wm.StepLaw.net(arrivals=supply, demand=self.demand.law(scale))

    def step_laws(self) -> list[wm.StepLaw]:
        """One law per period of the repeating cycle; period 1 uses the first.

        Cost: one law per distinct profile factor (at most ``MAX_PROFILE_FACTORS``),
        each at most ``MAX_LAW_WIDTH`` wide.
        """
        by_factor: dict[float, wm.StepLaw] = {}
        laws = []
        for period in range(1, self.cycle_length + 1):
            factor = self.profile[(period - 1) % len(self.profile)] if self.profile else 1.0
            if factor not in by_factor:
                by_factor[factor] = self.base_law(factor)
            law = by_factor[factor]
            if self.delivery_every and period % self.delivery_every == 0:
                law = with_delivery(law, self.delivery_size)
            laws.append(law)
        return laws

    def first_law(self) -> wm.StepLaw:
        """The law of period 1 alone (what the form's preview shows)."""
        law = self.base_law(self.profile[0] if self.profile else 1.0)
        return with_delivery(law, self.delivery_size) if self.delivery_every == 1 else law

    def walk(self, laws: list[wm.StepLaw] | None = None) -> wm.BandedWalk:
        laws = laws if laws is not None else self.step_laws()
        return wm.BandedWalk(
            laws[0] if len(laws) == 1 else laws,
            start=self.start,
            low=self.low,
            high=self.high,
            below=self.below,
            above=self.above,
        )


def with_delivery(law: wm.StepLaw, size: int) -> wm.StepLaw:
    """``law`` shifted up by a fixed delivery of ``size`` units (law minus a fixed demand of -size)."""
    return wm.StepLaw.net(arrivals=law, demand=wm.StepLaw.fixed(-size))
