"""Seeded portfolios for the benchmark and the tests: a fictional island bakery co-operative's stores.

What a store's item list looks like (common practice, chosen for the benchmark, not measured data):

* daily demand is Poisson with a mean that planners keep to one decimal (a forecast
  read off a sales history is not known to more digits); means are spread
  log-normally (median 3 a day, so many slow movers and few fast ones), cut to
  0.1..20 a day. One decimal gives at most 200 distinct demand laws, so items do
  share laws; ``distinct=True`` draws every mean to full precision instead (every
  item its own law: the worst case for sharing);
* deliveries are either a supply matched to demand (Poisson with the same mean: a
  daily bake sized to the day's orders) or a fixed delivery every 1, 2, 3 or 7 days
  of that many days' mean demand, rounded (a cycle of laws, the delivery on the
  last day);
* the capacity is 5 to 20 days of mean demand, at least 5 and at most 200 units;
  one item in ten has none (shelf space is not the limit); one in ten keeps a
  safety floor of 1 to 5 units;
* the rules come by department, as a store sets them: fresh goods lose unmet
  demand and spill (or give away) what does not fit, dry goods backorder, and
  the ovens' service parts stop the plan at a stock-out or an overflow;
* the start is anywhere in the band (a snapshot of the shelves), the horizon 90
  days, the targets 1, 2 or 5 %.

Reorder items: Poisson demand (same means), a lead time of 1 to 30 days, a
cycle-service target of 90, 95, 98 or 99 % (one item in five a fill-rate target
with an order quantity of 1 to 4 weeks of demand).
"""

from __future__ import annotations

import math

import numpy as np

from walkmath.portfolio import ReorderItem, StockItem
from walkmath.steplaw import StepLaw

HORIZON = 90
MAX_MEAN = 20.0
MAX_CAPACITY = 200
TARGETS = (0.01, 0.02, 0.05)
# (share, below, above): fresh goods, dry goods, service parts.
DEPARTMENTS = ((0.5, "lost", "spill"), (0.35, "backorder", "spill"), (0.15, "stop", "stop"))
DELIVERY_DAYS = (1, 2, 3, 7)


class _Laws:
    """Laws built once per (supply, mean) and shared by the items that use them, as a planner's cache would."""

    def __init__(self):
        self.demand: dict[float, StepLaw] = {}
        self.cycles: dict[tuple, tuple[StepLaw, ...]] = {}

    def poisson(self, mean: float) -> StepLaw:
        if mean not in self.demand:
            self.demand[mean] = StepLaw.poisson(mean)
        return self.demand[mean]

    def cycle(self, mean: float, every: int | None) -> tuple[StepLaw, ...]:
        key = (mean, every)
        if key not in self.cycles:
            demand = self.poisson(mean)
            if every is None:  # supply matched to demand
                self.cycles[key] = (StepLaw.net(arrivals=demand, demand=demand),)
            else:
                size = max(1, round(every * mean))
                quiet = StepLaw.net(arrivals=StepLaw.fixed(0), demand=demand)
                delivery = StepLaw.net(arrivals=StepLaw.fixed(size), demand=demand)
                self.cycles[key] = (quiet,) * (every - 1) + (delivery,)
        return self.cycles[key]


def daily_means(rng: np.random.Generator, count: int, distinct: bool = False) -> np.ndarray:
    """Mean daily demand: log-normal around 3 a day, cut to 0.1..20, to one decimal unless ``distinct``."""
    means = np.clip(np.exp(rng.normal(math.log(3.0), 0.9, count)), 0.1, MAX_MEAN)
    return means if distinct else np.maximum(np.round(means, 1), 0.1)


def stock_items(count: int, seed: int = 12, distinct: bool = False) -> list[StockItem]:
    """``count`` stock items of a store (see the module's notes), reproducible from ``seed``."""
    rng = np.random.default_rng(seed)
    laws = _Laws()
    means = daily_means(rng, count, distinct)
    shares = np.array([share for share, _, _ in DEPARTMENTS])
    items = []
    for mean in means.tolist():
        every = None if rng.random() < 0.4 else int(rng.choice(DELIVERY_DAYS, p=[0.2, 0.2, 0.2, 0.4]))
        _, below, above = DEPARTMENTS[rng.choice(len(DEPARTMENTS), p=shares)]
        low = int(rng.integers(1, 6)) if rng.random() < 0.1 else 0
        high = None
        if rng.random() >= 0.1:
            days = rng.uniform(5.0, 20.0)
            high = low + int(min(MAX_CAPACITY - low, max(5, round(days * mean))))
        start = int(rng.integers(low, (high if high is not None else low + max(5, round(10 * mean))) + 1))
        items.append(
            StockItem(
                laws=laws.cycle(mean, every),
                start=start,
                horizon=HORIZON,
                stockout_target=float(rng.choice(TARGETS)),
                low=low,
                high=high,
                below=below,
                above=above,
                overflow_target=float(rng.choice(TARGETS)) if high is not None else None,
            )
        )
    return items


def reorder_items(count: int, seed: int = 12, distinct: bool = False) -> list[ReorderItem]:
    """``count`` reorder items (see the module's notes), reproducible from ``seed``."""
    rng = np.random.default_rng(seed + 1)
    laws = _Laws()
    items = []
    for mean in daily_means(rng, count, distinct).tolist():
        lead = int(rng.integers(1, 31))
        if rng.random() < 0.2:
            quantity = max(1, round(mean * 7 * int(rng.integers(1, 5))))
            items.append(ReorderItem(laws.poisson(mean), lead, float(rng.choice((0.95, 0.98))), "fill", quantity))
        else:
            items.append(ReorderItem(laws.poisson(mean), lead, float(rng.choice((0.90, 0.95, 0.98, 0.99)))))
    return items


def distinct_laws(items) -> int:
    """Number of distinct law cycles (stock items) or demand laws with lead times (reorder items)."""
    from walkmath.portfolio_engine import law_digest

    keys = set()
    for item in items:
        if isinstance(item, StockItem):
            keys.add((law_digest(item.laws), item.horizon))
        else:
            keys.add((law_digest((item.demand,)), item.lead_time, item.review_period))
    return len(keys)
