"""Stock-walk parameters as a plain frozen dataclass, and the step laws they stand for.

This is the boundary between the web app and walkmath: the model keeps the
parameters as JSON, forms produce a ``StockWalkParams``, and only this module
turns one into walkmath objects. Every constructor validates and raises
``ValueError`` naming the parameter and its allowed range.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

import walkmath as wm
from walkmath import checks

BELOW_RULES = ("backorder", "lost", "stop")
ABOVE_RULES = ("spill", "stop")
STEP_METHODS = ("nearest", "table", "net")
COUNT_FAMILIES = ("poisson", "negative_binomial", "fixed", "table")
# Families whose mean can be scaled by a repeating profile (variance scales with it,
# keeping the variance-to-mean ratio, so a busy day is busier but not more erratic per unit).
SCALABLE_FAMILIES = ("poisson", "negative_binomial")

MAX_HORIZON = 3650  # ten years of daily periods
MAX_LEVEL = 1_000_000
MAX_CYCLE = 400  # periods in one repetition of profile x deliveries
MAX_TABLE_ROWS = 200
MAX_JUMP = 10_000


def _table(name: str, rows) -> tuple[tuple[int, float], ...]:
    """A table of (value, probability) rows; probabilities must sum to 1."""
    rows = tuple(rows or ())
    if not rows:
        raise ValueError(f"{name} must have at least one row of 'value: probability'")
    if len(rows) > MAX_TABLE_ROWS:
        raise ValueError(f"{name} must have at most {MAX_TABLE_ROWS} rows; got {len(rows)}")
    values = [checks.whole(f"{name} value", v, minimum=-MAX_JUMP, maximum=MAX_JUMP) for v, _ in rows]
    if len(set(values)) != len(values):
        raise ValueError(f"{name} must list each value once")
    weights = checks.probability_vector(f"{name} probabilities", [p for _, p in rows])
    return tuple(zip(values, (float(w) for w in weights), strict=True))


@dataclass(frozen=True)
class CountLaw:
    """Arrivals or demand in one period: a count law given by family and its numbers."""

    family: str
    mean: float | None = None
    variance: float | None = None
    amount: int | None = None
    table: tuple[tuple[int, float], ...] = ()

    def __post_init__(self):
        checks.choice("family", self.family, COUNT_FAMILIES)
        if self.family in ("poisson", "negative_binomial"):
            object.__setattr__(self, "mean", checks.real("mean", self.mean, minimum=0.0, maximum=1e4))
        if self.family == "negative_binomial":
            variance = checks.real("variance", self.variance, minimum=0.0, maximum=1e8)
            if variance <= self.mean:
                raise ValueError(
                    f"variance must exceed the mean ({self.mean:g}) for negative binomial; got {variance:g}"
                )
            object.__setattr__(self, "variance", variance)
        if self.family == "fixed":
            object.__setattr__(self, "amount", checks.whole("amount", self.amount, minimum=0, maximum=MAX_JUMP))
        if self.family == "table":
            rows = _table("count table", self.table)
            if any(value < 0 for value, _ in rows):
                raise ValueError("count table values must be whole numbers at least 0 (counts)")
            object.__setattr__(self, "table", rows)

    def law(self, scale: float = 1.0) -> wm.StepLaw:
        """The walkmath law, with the mean (and variance) multiplied by ``scale``."""
        if self.family == "poisson":
            return wm.StepLaw.poisson(mean=self.mean * scale)
        if self.family == "negative_binomial":
            if scale == 0:
                return wm.StepLaw.fixed(0)
            return wm.StepLaw.negative_binomial(mean=self.mean * scale, variance=self.variance * scale)
        if self.family == "fixed":
            return wm.StepLaw.fixed(self.amount)
        return wm.StepLaw.from_pmf(dict(self.table))

    def to_json(self) -> dict:
        data = {"family": self.family}
        if self.family in ("poisson", "negative_binomial"):
            data["mean"] = self.mean
        if self.family == "negative_binomial":
            data["variance"] = self.variance
        if self.family == "fixed":
            data["amount"] = self.amount
        if self.family == "table":
            data["table"] = [list(row) for row in self.table]
        return data

    @classmethod
    def from_json(cls, data: dict) -> CountLaw:
        if not isinstance(data, dict):
            raise ValueError("a count law must be an object with a 'family'")
        return cls(
            family=data.get("family"),
            mean=data.get("mean"),
            variance=data.get("variance"),
            amount=data.get("amount"),
            table=tuple(tuple(row) for row in data.get("table") or ()),
        )


@dataclass(frozen=True)
class StockWalkParams:
    """A buffer level as a walk: start, band, rules, horizon and the per-period step law.

    The step law is given one of three ways (``step_method``): ``nearest`` (up/down
    probabilities, stay = 1 - up - down), ``table`` (jump probabilities) or ``net``
    (arrivals minus demand). ``profile`` scales mean demand period by period in a
    repeating cycle (weekday factors); ``delivery_every``/``delivery_size`` add a
    fixed delivery in periods every, 2*every, ...
    """

    start: int
    horizon: int
    low: int = 0
    high: int | None = None
    below: str = "backorder"
    above: str = "spill"
    step_method: str = "nearest"
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
        set_(self, "horizon", checks.whole("horizon", self.horizon, minimum=1, maximum=MAX_HORIZON))
        set_(self, "low", checks.whole("low", self.low, minimum=-MAX_LEVEL, maximum=MAX_LEVEL))
        if self.high is not None:
            set_(self, "high", checks.whole("capacity", self.high, minimum=self.low, maximum=MAX_LEVEL))
        top = self.high if self.high is not None else MAX_LEVEL
        set_(self, "start", checks.whole("start level", self.start, minimum=self.low, maximum=top))
        checks.choice("rule below low", self.below, BELOW_RULES)
        checks.choice("rule above capacity", self.above, ABOVE_RULES)
        checks.choice("step method", self.step_method, STEP_METHODS)
        if self.step_method == "nearest":
            set_(self, "up", checks.probability("up", self.up))
            set_(self, "down", checks.probability("down", self.down))
            if self.up + self.down > 1 + checks.SUM_TOLERANCE:
                raise ValueError(f"up + down must be at most 1; got {self.up + self.down:.12g}")
        if self.step_method == "table":
            set_(self, "table", _table("step table", self.table))
        if self.step_method == "net":
            for name in ("arrivals", "demand"):
                if not isinstance(getattr(self, name), CountLaw):
                    raise ValueError(f"{name} law is required when the step law is arrivals minus demand")
        self._check_cycle()

    def _check_cycle(self) -> None:
        set_ = object.__setattr__
        if self.profile:
            if self.step_method != "net" or self.demand.family not in SCALABLE_FAMILIES:
                raise ValueError(
                    "profile needs the arrivals-and-demand step law with Poisson or negative binomial demand"
                )
            factors = tuple(checks.real("profile factor", f, minimum=0.0, maximum=100.0) for f in self.profile)
            if len(factors) > MAX_CYCLE:
                raise ValueError(f"profile must have at most {MAX_CYCLE} factors; got {len(factors)}")
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
                f"profile length x delivery interval must repeat within {MAX_CYCLE} periods; got {self.cycle_length}"
            )

    @property
    def cycle_length(self) -> int:
        return math.lcm(len(self.profile) or 1, self.delivery_every or 1)

    def replace(self, **changes) -> StockWalkParams:
        """A validated copy with some fields changed."""
        return dataclasses.replace(self, **changes)

    def to_json(self) -> dict:
        data = {
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
            data.update(arrivals=self.arrivals.to_json(), demand=self.demand.to_json())
        if self.profile:
            data["profile"] = list(self.profile)
        if self.delivery_every is not None:
            data.update(delivery_every=self.delivery_every, delivery_size=self.delivery_size)
        return data

    @classmethod
    def from_json(cls, data: dict) -> StockWalkParams:
        """Parameters from the model's JSON; raises ValueError naming what is wrong."""
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
        for name in ("arrivals", "demand"):
            if values.get(name) is not None:
                values[name] = CountLaw.from_json(values[name])
        values["table"] = tuple(tuple(row) for row in values.get("table") or ())
        values["profile"] = tuple(values.get("profile") or ())
        return cls(**values)

    # -- the walk ----------------------------------------------------------

    def base_law(self, scale: float = 1.0) -> wm.StepLaw:
        """The step law of an ordinary period (demand mean times ``scale``)."""
        if self.step_method == "nearest":
            return wm.StepLaw.nearest(up=self.up, down=self.down)
        if self.step_method == "table":
            return wm.StepLaw.from_pmf(dict(self.table))
        return wm.StepLaw.net(arrivals=self.arrivals.law(), demand=self.demand.law(scale))

    def step_laws(self) -> list[wm.StepLaw]:
        """One law per period of the repeating cycle; period 1 uses the first.

        Cost: one law per distinct profile factor, at most ``MAX_CYCLE`` in all.
        """
        cycle = self.cycle_length
        by_factor: dict[float, wm.StepLaw] = {}
        laws = []
        for period in range(1, cycle + 1):
            factor = self.profile[(period - 1) % len(self.profile)] if self.profile else 1.0
            if factor not in by_factor:
                by_factor[factor] = self.base_law(factor)
            law = by_factor[factor]
            if self.delivery_every and period % self.delivery_every == 0:
                law = with_delivery(law, self.delivery_size)
            laws.append(law)
        return laws

    def walk(self) -> wm.BandedWalk:
        laws = self.step_laws()
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


def compute_size(params: StockWalkParams) -> tuple[int, int]:
    """Levels the walk can occupy and periods: the work and memory an outlook needs (levels x periods).

    Mirrors the reach of a banded sweep: the band when both ends are bounded,
    otherwise the furthest the steps can carry the level within the horizon.
    """
    laws = params.step_laws()
    max_down = max(0, -min(law.lowest for law in laws))
    max_up = max(0, max(law.highest for law in laws))
    lowest = params.low if params.below != "backorder" else params.start - params.horizon * max_down
    highest = params.high if params.high is not None else params.start + params.horizon * max_up
    return highest - min(lowest, params.low) + 1, params.horizon
