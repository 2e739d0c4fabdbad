"""Periodic review (s, S): the long-run stock law and its service measures (design notes, section 3).

Each period: review; at or below the reorder level s, order up to S (arriving
``lead_time`` periods later, before that period's demand; at once when 0);
then the period's demand is served from stock on hand, the unmet part lost or
backordered.

Methods:

* Position after ordering, y in s+1..S (backorders, any lead time; lost sales
  with lead time 0, where the on-hand stock after ordering moves exactly as the
  position does, because an empty shelf is at or below s >= 0). With j = S - y
  the chain jumps up by the period's demand and renews to 0 past S - s - 1,
  so its long-run law is the renewal product form
  P(j) proportional to u(j), u(0) = 1, u(j) = sum_{i>=1} P(D = i) u(j - i) / P(D >= 1)
  (Sahin, Regenerative Inventory Systems, 1990; Zipkin, Foundations of
  Inventory Management, 2000, ch. 6; both from memory): non-negative terms only.
  The stock available to a period's demand is N = y - (demand over the lead
  time), the end-of-period stock y - (demand over lead time + 1 periods)
  (for lost sales, at least 0).
* Lost sales with a lead time: the chain on (on hand, orders due), GTH state
  reduction on its closed class (walkmath/reviewchain.py).

Every measure is then an expectation of a non-negative table of the one-period
demand at N+ (P(D > n), P(D <= n), E[min(D, n)], E[(D - n)+]), so each
probability and its complement come from their own side.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from functools import cached_property

import numpy as np

from walkmath import checks
from walkmath.cost import Work
from walkmath.distribution import LevelDistribution
from walkmath.leadtime import lead_time_demand
from walkmath.reviewchain import ReviewChain, chain_work, closed_class, gth_steady_state, gth_work, state_bound
from walkmath.steplaw import StepLaw

UNMET_RULES = ("lost", "backorder")
_KNOB = "lower the order-up-to level, shorten the lead time or coarsen the demand units"
# Largest order-up-to level and lead time, in demand units and periods.
LEVEL_CAP = 1_000_000
LEAD_CAP = 10_000


@dataclass(frozen=True)
class PolicyMeasures:
    """Long-run measures per period; each probability beside its complement from its own side."""

    stockout_probability: float  # P(a period's demand exceeds the stock available to serve it)
    in_stock_probability: float  # P(it does not)
    fill_rate: float  # expected demand served from stock / expected demand
    unfilled_share: float  # expected demand not served from stock / expected demand
    mean_on_hand: float  # mean stock on hand at the end of a period
    mean_backorders: float  # mean backordered units at the end of a period (0 for lost sales)
    mean_short: float  # mean units of demand not served from stock in a period
    orders_per_period: float  # long-run P(an order is placed at a review)


@dataclass(frozen=True, eq=False)
class PeriodicReview:
    """An (s, S) periodic-review policy on a count demand law; an order-up-to policy is s = S - 1.

    Long-run answers are exact up to rounding (renewal product form, or GTH on
    the pipeline chain for lost sales with a lead time, about n^3 / 3 work for
    n chain states, priced by ``cost``); every probability is a sum of
    non-negative terms, so a stock-out probability of 1e-15 keeps its digits.
    The demand law's own cut tail (``demand.truncated_mass``) is the only other error.
    """

    demand: StepLaw
    reorder_level: int
    order_up_to: int
    lead_time: int = 0
    unmet: str = "lost"
    _tables: DemandTables = field(init=False, repr=False)

    def __post_init__(self):
        demand = _count_law(self.demand)
        order_up_to = checks.whole("order_up_to", self.order_up_to, minimum=1, maximum=LEVEL_CAP)
        reorder_level = checks.whole("reorder_level", self.reorder_level, minimum=0, maximum=order_up_to - 1)
        lead_time = checks.whole("lead_time", self.lead_time, minimum=0, maximum=LEAD_CAP)
        unmet = checks.choice("unmet", self.unmet, UNMET_RULES)
        for name, value in (
            ("demand", demand),
            ("order_up_to", order_up_to),
            ("reorder_level", reorder_level),
            ("lead_time", lead_time),
            ("unmet", unmet),
        ):
            object.__setattr__(self, name, value)
        object.__setattr__(self, "_tables", DemandTables(demand, order_up_to))

    # -- cost model ------------------------------------------------------------------------------------

    def cost(self, method: str = "steady_state", horizon: int = 0, start: int | None = None) -> Work:
        """Priced work of ``method`` ("steady_state" or "stockout_risk" over ``horizon`` from ``start``)."""
        method = checks.choice("method", method, ("steady_state", "stockout_risk"))
        jumps = self.demand.probs.size
        if method == "stockout_risk":
            top = max(self.order_up_to, start or 0)
            return chain_work("stockout_risk", self._states(top), jumps, horizon=horizon)
        if self.unmet == "lost" and self.lead_time > 0:
            # The state search and GTH, both on the bound of the states; GTH is priced again on the closed
            # class found, before it runs.
            states = self._states(self.order_up_to)
            return chain_work("steady_state", states, jumps) + gth_work(states)
        return position_work(self.demand, self.order_up_to, self.order_up_to - self.reorder_level, self.lead_time)

    def _states(self, top: int) -> int:
        gap = self.order_up_to - self.reorder_level
        return state_bound(top, self.lead_time, self.order_up_to, gap)

    # -- long run ----------------------------------------------------------------------------------------

    @cached_property
    def _drop(self) -> tuple[np.ndarray, float]:
        """Law of W = S - N (N the stock available to a period's demand) and orders per period."""
        self.cost().check()
        gap = self.order_up_to - self.reorder_level
        if self.unmet == "backorder" or self.lead_time == 0:
            position = position_law(self.demand, gap)
            return drop_law(position, self.demand, self.lead_time), orders_per_review(position, self._tables)
        chain = _pipeline(self, self.order_up_to)
        weights = _chain_steady_state(chain)
        drop = np.bincount(self.order_up_to - chain.available, weights=weights, minlength=self.order_up_to + 1)
        return drop, math.fsum(weights[chain.ordering])

    def measures(self) -> PolicyMeasures:
        """All long-run measures at once (one position law, one pass of the demand tables); cached."""
        return self._measures

    @cached_property
    def _measures(self) -> PolicyMeasures:
        drop, orders = self._drop
        end = end_drop_law(drop, self.demand)
        curves = measure_curves(drop, end, self._tables, np.array([self.order_up_to]), self.unmet)
        return PolicyMeasures(**{name: float(values[0]) for name, values in curves.items()}, orders_per_period=orders)

    def steady_state(self) -> LevelDistribution:
        """Long-run law of the end-of-period stock: net stock (negative = backorders) or on hand (lost sales)."""
        drop, _ = self._drop
        end = end_drop_law(drop, self.demand)  # V = S - end-of-period net stock
        levels = self.order_up_to - np.arange(end.size)[::-1]
        probs = end[::-1].copy()
        if self.unmet == "lost" and levels[0] < 0:
            cut = -int(levels[0])  # index of level 0
            probs = np.concatenate([[math.fsum(end[self.order_up_to :])], probs[cut + 1 :]])
            levels = levels[cut:]
        return LevelDistribution(levels, np.minimum(probs, 1.0))

    def stockout_probability(self) -> float:
        """Long-run P(a period's demand exceeds the stock available to serve it)."""
        return self.measures().stockout_probability

    def fill_rate(self) -> float:
        """Long-run expected demand served from stock / expected demand."""
        return self.measures().fill_rate

    def mean_on_hand(self) -> float:
        """Long-run mean stock on hand at the end of a period."""
        return self.measures().mean_on_hand

    def orders_per_period(self) -> float:
        """Long-run P(an order is placed at a review)."""
        return self.measures().orders_per_period

    # -- finite horizon ----------------------------------------------------------------------------------

    def stockout_risk(self, horizon: int, start: int | None = None) -> StockoutRisk:
        """P(at least one stock-out in periods 1..n), n = 0..horizon, from ``start`` on hand and nothing due.

        Forward sweep of the pipeline chain (on hand, orders due) without the
        stock-out moves: the stopped mass accumulates as a sum of non-negative
        terms, the surviving mass is summed on its own; the rule for unmet demand
        does not matter before the first stock-out. ``start`` defaults to S.
        """
        horizon = checks.horizon(horizon)
        start = self.order_up_to if start is None else checks.whole("start", start, minimum=0, maximum=LEVEL_CAP)
        self.cost("stockout_risk", horizon, start).check()
        chain = _pipeline(self, start, shortage_moves=False)
        stockout, in_stock = chain.stockout_curve(horizon)
        return StockoutRisk(start=start, stockout=stockout, in_stock=in_stock)


@dataclass(frozen=True, eq=False)
class StockoutRisk:
    """``stockout[n]`` = P(a stock-out in periods 1..n), ``in_stock[n]`` = P(none), each from its own side."""

    start: int
    stockout: np.ndarray
    in_stock: np.ndarray


# -- demand tables and measure curves (shared with the design solvers) -----------------------------


class DemandTables:
    """One-period demand tables at stock n = 0..top: P(D > n), P(D <= n), E[min(D, n)], E[(D - n)+]."""

    def __init__(self, demand: StepLaw, top: int):
        probs = np.zeros(max(top + 1, demand.highest + 2))
        probs[demand.lowest : demand.highest + 1] = demand.probs
        at_least = np.cumsum(probs[::-1])[::-1]
        self.above = np.minimum(np.append(at_least[1:], 0.0), 1.0)
        self.below = np.minimum(np.cumsum(probs), 1.0)
        # fsum of a list: the same correctly rounded sum as of the array, without numpy's per-item scalars
        self.mean = math.fsum((probs * np.arange(probs.size)).tolist())
        self.short = np.cumsum(self.above[::-1])[::-1]  # E[(D - n)+] = sum_{k >= n} P(D > k)
        self.served = np.concatenate([[0.0], np.cumsum(self.above)[:-1]])  # E[min(D, n)] = sum_{k < n} P(D > k)

    def named(self) -> dict[str, np.ndarray]:
        return {"above": self.above, "below": self.below, "served": self.served, "short": self.short}


def measure_curves(
    drop: np.ndarray, end_drop: np.ndarray, tables: DemandTables, order_up_to: np.ndarray, unmet: str
) -> dict[str, np.ndarray]:
    """Measures at each order-up-to level S for a fixed drop law W (available N = S - W, end = S - V).

    E[f((S - W)+)] for each table f as one direct convolution over S (sums of
    non-negative terms; W > S reads f(0)); on hand E[(S - V)+], backorders
    E[(V - S)+] as the loss sum of V's tail (``finish_curves``).
    """
    top = int(order_up_to.max())
    bodies = {name: _at_levels(drop[: top + 1], table, order_up_to) for name, table in tables.named().items()}
    on_hand = _at_levels(end_drop[:top], np.arange(top + 1.0), order_up_to)
    return finish_curves(bodies, on_hand, drop, end_drop, tables, order_up_to, unmet)


def finish_curves(
    bodies: dict[str, np.ndarray],
    on_hand: np.ndarray,
    drop: np.ndarray,
    end_drop: np.ndarray | None,
    tables: DemandTables,
    order_up_to: np.ndarray,
    unmet: str,
) -> dict[str, np.ndarray]:
    """The measures from ``bodies[f][i]`` = sum_{w <= S} P(W = w) f(S - w) at S = ``order_up_to[i]``.

    Adds f(0) P(W > S) to each body (W > S leaves no stock), backorders E[(V - S)+]
    as the loss sum of V's tail; curves over S are made monotone as the quantities
    are (each S is summed on its own; neighbours may differ by an ulp). Without ``end_drop``
    (a caller that reads no backorders) there is no ``mean_backorders`` curve.
    """
    beyond = np.append(np.cumsum(drop[::-1])[::-1], 0.0)  # P(W >= w)
    over = beyond[np.minimum(order_up_to + 1, beyond.size - 1)]
    named = tables.named()
    expect = {name: bodies[name] + table[0] * over for name, table in named.items()}
    mean = tables.mean
    curves = {
        "stockout_probability": np.minimum(expect["above"], 1.0),
        "in_stock_probability": np.minimum(expect["below"], 1.0),
        "fill_rate": np.minimum(expect["served"] / mean, 1.0),
        "unfilled_share": np.minimum(expect["short"] / mean, 1.0),
        "mean_on_hand": on_hand,
    }
    if end_drop is not None:
        end_tail = np.append(np.cumsum(end_drop[::-1])[::-1][1:], 0.0)  # P(V > v)
        end_loss = np.append(np.cumsum(end_tail[::-1])[::-1], 0.0)  # E[(V - v)+] = sum_{k >= v} P(V > k)
        curves["mean_backorders"] = (
            end_loss[np.minimum(order_up_to, end_loss.size - 1)] if unmet == "backorder" else 0 * on_hand
        )
    curves["mean_short"] = expect["short"]
    if order_up_to.size > 1 and np.all(np.diff(order_up_to) > 0):
        for name in ("stockout_probability", "unfilled_share", "mean_backorders", "mean_short"):
            if name in curves:
                curves[name] = np.minimum.accumulate(curves[name])
        for name in ("in_stock_probability", "fill_rate", "mean_on_hand"):
            curves[name] = np.maximum.accumulate(curves[name])
    return curves


def _at_levels(law: np.ndarray, table: np.ndarray, levels: np.ndarray) -> np.ndarray:
    """sum_{w <= S} law[w] table[S - w] at each S in ``levels`` (non-negative terms, never FFT).

    One level: a dot product; many: one direct convolution (numpy's convolve is direct).
    """
    if law.size == 0:
        return np.zeros(levels.size)
    if levels.size == 1:
        level = int(levels[0])
        reach = min(level, law.size - 1)
        return np.array([law[: reach + 1] @ table[level - reach : level + 1][::-1]])
    top = int(levels.max())
    return np.convolve(law[: top + 1], table[: top + 1])[levels]


# -- the position law (renewal product form) ----------------------------------------------------------


def renewal_weights(demand: StepLaw, length: int) -> np.ndarray:
    """u(0..length-1): u(0) = 1, u(j) = sum_{i>=1} P(D = i) u(j - i) / P(D >= 1); non-negative terms only.

    O(length x demand width). u(j) = P(D >= 1) x (expected visits of the demand's partial sums to j),
    which tends to P(D >= 1) / E[D] (renewal theorem), so it neither overflows nor underflows.
    """
    probs = count_probs(demand)
    moving = math.fsum(probs[1:])  # P(D >= 1) from its own side, never 1 - P(D = 0)
    weights = np.zeros(length)
    weights[0] = 1.0
    reach = probs.size - 1
    for j in range(1, length):
        width = min(j, reach)
        weights[j] = float(probs[1 : width + 1] @ weights[j - 1 :: -1][:width]) / moving
    return weights


def position_law(demand: StepLaw, gap: int) -> np.ndarray:
    """Long-run P(S - y = j), j = 0..gap-1, for the position y after ordering (gap = S - s)."""
    weights = renewal_weights(demand, gap)
    return weights / math.fsum(weights)


def position_work(demand: StepLaw, order_up_to: int, gap: int, lead_time: int) -> Work:
    """Renewal weights (gap steps over the demand width), the lead-time law and its convolution with
    the position law, and the measures at one level (a few dot products of length S)."""
    width = demand.probs.size
    lead_levels = lead_time * demand.highest + 1
    parts = [
        Work("steady_state", width, gap, 1, knob=_KNOB),
        Work("steady_state", lead_levels, max(1, math.ceil(math.log2(lead_time + 1))), width, knob=_KNOB),
        Work("steady_state", gap + lead_levels, 1, min(gap, lead_levels), knob=_KNOB),
        Work("steady_state", order_up_to + gap + lead_levels + width, 1, 8, knob=_KNOB),
    ]
    return total_work(parts)


def total_work(parts: list[Work]) -> Work:
    """The largest part, carrying the others' units as extra (``Work.__add__`` would count the largest twice)."""
    largest = max(parts, key=lambda part: part.units)
    rest = sum(part.units for part in parts) - largest.units
    return replace(largest, dense=largest.dense + rest)


def drop_law(position: np.ndarray, demand: StepLaw, lead_time: int) -> np.ndarray:
    """Law of W = (S - y) + demand over the lead time, on 0, 1, ... (direct convolution)."""
    if lead_time == 0:
        return position.copy()
    return _convolve(position, lead_time_demand(demand, lead_time).probs)


def orders_per_review(position: np.ndarray, tables: DemandTables) -> float:
    """P(y - D <= s) = sum_j P(S - y = j) P(D >= gap - j), non-negative terms."""
    gap = position.size
    need = gap - 1 - np.arange(gap)  # P(D > gap - j - 1)
    above = np.where(need < tables.above.size, tables.above[np.minimum(need, tables.above.size - 1)], 0.0)
    return min(math.fsum((position * above).tolist()), 1.0)


def count_probs(demand: StepLaw) -> np.ndarray:
    """P(D = k) for k = 0..max (a count law stored from its lowest count)."""
    probs = np.zeros(demand.highest + 1)
    probs[demand.lowest :] = demand.probs
    return probs


def end_drop_law(drop: np.ndarray, demand: StepLaw) -> np.ndarray:
    """Law of V = W + one period's demand (S - V is the end-of-period net stock)."""
    return _convolve(drop, count_probs(demand))


def _convolve(left: np.ndarray, right: np.ndarray) -> np.ndarray:
    return np.minimum(np.convolve(left, right), 1.0)


# -- lost sales with a lead time: the pipeline chain ------------------------------------------------------


def _pipeline(policy: PeriodicReview, start: int, shortage_moves: bool = True) -> ReviewChain:
    due = (0,) * max(policy.lead_time - 1, 0)
    return ReviewChain(
        count_probs(policy.demand),
        policy.reorder_level,
        policy.order_up_to,
        policy.lead_time,
        (start, *due),
        shortage_moves=shortage_moves,
    )


def _chain_steady_state(chain: ReviewChain) -> np.ndarray:
    """Long-run law over the chain's states (0 off its closed class), by GTH on the closed class."""
    full = (chain.transitions + chain.shortage_transitions).tocsr()
    members = closed_class(full)
    gth_work(members.size).check()
    weights = np.zeros(len(chain.states))
    # The whole chain is one class in the usual case: its dense matrix directly (the same entries).
    inside = full if members.size == full.shape[0] else full[members][:, members]
    weights[members] = gth_steady_state(inside.toarray())
    return weights


def _count_law(demand) -> StepLaw:
    if not isinstance(demand, StepLaw):
        raise ValueError(f"demand must be a StepLaw of counts (0, 1, 2, ...); got {type(demand).__name__}")
    if demand.lowest < 0:
        raise ValueError(f"demand must be a count law with steps 0, 1, 2, ...; its lowest step is {demand.lowest}")
    if demand.highest < 1:
        raise ValueError("demand must have a positive probability of at least one unit in a period")
    return demand
