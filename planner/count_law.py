"""Count laws shared by the kinds: supply or demand in one period (Poisson, negative binomial, fixed, table).

A ``CountLaw`` is the plain, JSON-ready statement of a law; ``law()`` builds
the walkmath ``StepLaw`` it stands for (kept in a small cache shared by
requests). Every constructor validates and raises ``ValueError`` naming the
input and its allowed range, before building any law.
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass

import walkmath as wm
from walkmath import checks

COUNT_FAMILIES = ("poisson", "negative_binomial", "fixed", "table")
# Families whose mean can be scaled by a repeating profile (variance scales with it,
# keeping the variance-to-mean ratio, so a busy day is busier but not more erratic per unit).
SCALABLE_FAMILIES = ("poisson", "negative_binomial")

MAX_TABLE_ROWS = 200
MAX_JUMP = 10_000
MAX_MEAN = 1e4
MAX_VARIANCE = 1e8


def value_table(name: str, rows) -> tuple[tuple[int, float], ...]:
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


# Count laws kept across requests (each kind bounds a law's width before building it: about 10 MB in all).
LAW_CACHE_SIZE = 64


@functools.lru_cache(maxsize=LAW_CACHE_SIZE)
def _count_law(law: CountLaw, scale: float) -> wm.StepLaw:
    return law._build(scale)


def json_list(name: str, value) -> tuple:
    """A list from saved or sent JSON (empty when absent); ValueError for anything else."""
    if value is None:
        return ()
    if not isinstance(value, list | tuple):
        raise ValueError(f"{name} must be a list of numbers")
    return tuple(value)


def json_rows(name: str, value) -> tuple[tuple, ...]:
    """Rows of [value, probability] from JSON; ValueError for any other shape."""
    rows = json_list(name, value)
    if not all(isinstance(row, list | tuple) and len(row) == 2 for row in rows):
        raise ValueError(f"{name} must be a list of [value, probability] pairs")
    return tuple(tuple(row) for row in rows)


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
            rows = value_table("count table", self.table)
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

        Kept in a small cache shared by requests (``LAW_CACHE_SIZE`` laws, each as wide as the
        kind allows, checked before it is asked for): a what-if on a plan rebuilds the same count laws each time, and a
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
                table=json_rows("count table", data.get("table")),
            )
        except TypeError as exc:
            raise ValueError(f"a count law holds a value of the wrong type ({exc})") from exc
