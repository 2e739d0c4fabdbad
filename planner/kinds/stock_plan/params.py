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
import functools
import math
from dataclasses import dataclass

import walkmath as wm
from planner.formatting import PERIODS
from walkmath import checks

STEP_METHODS = ("net", "table", "nearest")
COUNT_FAMILIES = ("poisson", "negative_binomial", "fixed", "table")
# Families whose mean can be scaled by a repeating profile (variance scales with it,
# keeping the variance-to-mean ratio, so a busy day is busier but not more erratic per unit).
SCALABLE_FAMILIES = ("poisson", "negative_binomial")

MAX_HORIZON = 3650  # ten years of daily periods
MAX_LEVEL = 1_000_000
MAX_CYCLE = 400  # periods in one repetition of profile x deliveries
MAX_PROFILE_FACTORS = 31  # distinct factors: one law is built per distinct factor
MAX_TABLE_ROWS = 200
MAX_JUMP = 10_000
MAX_MEAN = 1e4
MAX_VARIANCE = 1e8
# Widest change-per-period law the planner builds (possible changes in one period). Checked on the
# parameters before any law is built; the walk's full cost is priced separately by the read service.
MAX_LAW_WIDTH = 20_001


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


def _json_list(name: str, value) -> tuple:
    """A list from saved or sent JSON (empty when absent); ValueError for anything else."""
    if value is None:
        return ()
    if not isinstance(value, list | tuple):
        raise ValueError(f"{name} must be a list of numbers")
    return tuple(value)


def _json_rows(name: str, value) -> tuple[tuple, ...]:
    """Rows of [value, probability] from JSON; ValueError for any other shape."""
    rows = _json_list(name, value)
    if not all(isinstance(row, list | tuple) and len(row) == 2 for row in rows):
        raise ValueError(f"{name} must be a list of [value, probability] pairs")
    return tuple(tuple(row) for row in rows)


# Count laws kept across requests (at most 64 x MAX_LAW_WIDTH floats, about 10 MB).
LAW_CACHE_SIZE = 64


@functools.lru_cache(maxsize=LAW_CACHE_SIZE)
def _count_law(law: CountLaw, scale: float) -> wm.StepLaw:
    return law._build(scale)


@dataclass(frozen=True)
class CountLaw:
    """Supply or demand in one period: a count law given by family and its numbers."""

    family: str
    mean: float | None = None
    variance: float | None = None
    amount: int | None = None
    table: tuple[tuple[int, float], ...] = ()

    def __post_init__(self):
        checks.choice("family", self.family, COUNT_FAMILIES)
        if self.family in SCALABLE_FAMILIES:
            object.__setattr__(self, "mean", checks.real("mean", self.mean, minimum=0.0, maximum=MAX_MEAN))
        if self.family == "negative_binomial":
            variance = checks.real("variance", self.variance, minimum=0.0, maximum=MAX_VARIANCE)
            if variance <= self.mean:
                raise ValueError(
                    f"variance must exceed the mean ({self.mean:g}) for a negative binomial law; got {variance:g}"
                )
            object.__setattr__(self, "variance", variance)
        if self.family == "fixed":
            object.__setattr__(self, "amount", checks.whole("amount", self.amount, minimum=0, maximum=MAX_JUMP))
        if self.family == "table":
            rows = _table("count table", self.table)
            if any(value < 0 for value, _ in rows):
                raise ValueError("count table values must be whole numbers at least 0 (counts)")
            object.__setattr__(self, "table", rows)

    def width_bound(self, scale: float = 1.0) -> int:
        """Possible counts the law has, from its numbers alone (no law is built).

        Poisson and negative binomial laws: walkmath's own cut, found on the survival
        function (``StepLaw.count_width``, a few dozen evaluations).
        """
        if self.family in SCALABLE_FAMILIES:
            variance = None if self.family == "poisson" else self.variance * scale
            return wm.StepLaw.count_width(self.family, self.mean * scale, variance)
        if self.family == "fixed":
            return 1
        return self.table[-1][0] - self.table[0][0] + 1 if self.table else 1

    def law(self, scale: float = 1.0) -> wm.StepLaw:
        """The walkmath law, with the mean (and variance) multiplied by ``scale``.

        Kept in a small cache shared by requests (``LAW_CACHE_SIZE`` laws, each at most
        ``MAX_LAW_WIDTH`` floats): a what-if on a plan rebuilds the same count laws each time, and a
        StepLaw is immutable.
        """
        return _count_law(self, float(scale))

    def _build(self, scale: float) -> wm.StepLaw:
        if self.family in SCALABLE_FAMILIES and self.mean * scale == 0:
            return wm.StepLaw.fixed(0)  # no demand at all (a mean-0 negative binomial is a point mass at 0)
        if self.family == "poisson":
            return wm.StepLaw.poisson(mean=self.mean * scale)
        if self.family == "negative_binomial":
            return wm.StepLaw.negative_binomial(mean=self.mean * scale, variance=self.variance * scale)
        if self.family == "fixed":
            return wm.StepLaw.fixed(self.amount)
        return wm.StepLaw.from_pmf(dict(self.table))

    def mean_count(self) -> float:
        """Mean count per period, from the numbers (no law is built)."""
        if self.family in SCALABLE_FAMILIES:
            return self.mean
        if self.family == "fixed":
            return float(self.amount)
        return math.fsum(value * prob for value, prob in self.table)

    def with_mean(self, mean: float) -> CountLaw:
        """The same family with another mean (a negative binomial keeps its variance-to-mean ratio)."""
        if self.family not in SCALABLE_FAMILIES:
            raise ValueError(f"mean can only be changed for a Poisson or negative binomial law; this is {self.family}")
        variance = None
        if self.family == "negative_binomial":
            variance = self.variance * mean / self.mean if self.mean else self.variance + mean
        return CountLaw(family=self.family, mean=mean, variance=variance)

    def to_json(self) -> dict:
        data = {"family": self.family}
        if self.family in SCALABLE_FAMILIES:
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
        try:
            return cls(
                family=data.get("family"),
                mean=data.get("mean"),
                variance=data.get("variance"),
                amount=data.get("amount"),
                table=_json_rows("count table", data.get("table")),
            )
        except TypeError as exc:
            raise ValueError(f"a count law holds a value of the wrong type ({exc})") from exc


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
            set_(self, "table", _table("change table", self.table))
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
        values["table"] = _json_rows("change table", values.get("table"))
        values["profile"] = _json_list("demand profile", values.get("profile"))
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
