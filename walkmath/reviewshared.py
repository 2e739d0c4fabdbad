"""Pieces the periodic-review design solvers share: the result types, the shared forms, the price of a search.

(walkmath/reviewdesign.py holds the public names; walkmath/reviewlevels.py and walkmath/reviewcheapest.py
the solvers.)

Every solver returns its answer with the whole decision-against-service curve,
built from shared pieces rather than one policy solve per candidate:

* the renewal weights u(0..G-1) of the position law (walkmath/policy.py) are
  one sequence for every gap S - s up to G: the law for gap g is u(0..g-1)
  normalised, so widening the gap adds one term;
* the lead-time demand is built once; the drop W = (S - y) + lead-time demand
  for gap g + 1 is the one for g plus one shifted copy (non-negative additions);
* for a fixed gap, every order-up-to level S reads the same drop law, and each
  measure over all S is one direct convolution with a one-period demand table.

Lost sales with a lead time have no such shared form: the pipeline chain on
(on hand, orders due) changes with S, and with s, and is not the chain of a
neighbouring policy shifted (the shelf is floored at 0 when a sale is lost), so
each policy keeps its own exact steady state (GTH, walkmath/reviewchain.py).
What is shared there:

* every candidate's chain is built with numpy from one known state set and the
  chains of one size class are reduced together along an array axis
  (walkmath/reviewstack.py): one pass for the cheapest policy's whole grid, an
  order-up-to search with a gap above 1, or a reorder-level search; no Python
  loop over states, demands or candidates;
* for a reorder-level search (one S, every s), the chains share the GTH
  reduction of the low positions, where every chain s' >= s orders: one sweep
  keeping both versions of each row left serves them all, and each s needs GTH
  only above it and a triangular solve back (walkmath/reviewsweep.py); which
  reorder levels use it is chosen by price (small gaps: few states above s).

Every candidate's price is its own: its exact state count (``pipeline_count``),
the GTH arithmetic on its padded size, and the numpy calls of its stack
(``stack_work``, ``lost_policy_work``), so a grid of many small chains is priced
as the small chains it holds, not as many copies of the largest.

Service measures: "cycle" = P(no stock-out in a period), "fill" = fill rate.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from walkmath.cost import Work
from walkmath.leadtime import lead_time_demand
from walkmath.policy import (
    DemandTables,
    PolicyMeasures,
    count_probs,
    end_drop_law,
    finish_curves,
    measure_curves,
    orders_per_review,
    renewal_weights,
)
from walkmath.reviewstack import lost_sales_measures, stack_work
from walkmath.reviewsweep import lost_policy_work
from walkmath.steplaw import StepLaw

MEASURES = ("cycle", "fill")
_SERVICE = {"cycle": ("in_stock_probability", "stockout_probability"), "fill": ("fill_rate", "unfilled_share")}
_KNOB = "lower top (the largest order-up-to level searched), the largest gap, or coarsen the demand units"


@dataclass(frozen=True, eq=False)
class LevelSearch:
    """Smallest level meeting a service target and the service at every candidate level.

    ``levels`` are the candidates (order-up-to levels S, or reorder levels s), every one in range
    except for an order-up-to search with lost sales and a lead time, where they are the levels solved
    (the bisection's, a coarse grid and those asked for: see walkmath/reviewlevels.py's docstring);
    ``service[i]`` the measure there, ``shortfall[i]`` its complement from its own
    side; ``stockout``, ``fill_rate``, ``mean_on_hand``, ``orders_per_period`` the
    other measures at each candidate; ``mean_short`` the mean units of demand not
    served from stock per period. ``answer`` is None when no candidate meets
    the target.
    """

    measure: str
    target: float
    answer: int | None
    levels: np.ndarray
    service: np.ndarray
    shortfall: np.ndarray
    stockout: np.ndarray
    fill_rate: np.ndarray
    mean_on_hand: np.ndarray
    orders_per_period: np.ndarray
    mean_short: np.ndarray | None = None


@dataclass(frozen=True, eq=False)
class PolicyChoice:
    """Cheapest (s, S) on the searched grid, every candidate's cost and service, and the best cost by S.

    ``reorder_levels[i], order_up_to_levels[i]`` list the candidates with their
    ``cost``, ``service``, ``shortfall`` and ``feasible`` (meets the service
    target, if any). ``curve_order_up_to[k]``: the best feasible cost
    ``curve_cost[k]`` with that S, reached at ``curve_reorder_level[k]``.
    """

    reorder_level: int | None
    order_up_to: int | None
    cost: float | None
    measures: PolicyMeasures | None
    reorder_levels: np.ndarray
    order_up_to_levels: np.ndarray
    costs: np.ndarray
    service: np.ndarray
    shortfall: np.ndarray
    feasible: np.ndarray
    curve_order_up_to: np.ndarray
    curve_reorder_level: np.ndarray
    curve_cost: np.ndarray


class _Shared:
    """The lead-time demand, the demand tables and the renewal weights, built once for a search."""

    def __init__(self, demand: StepLaw, lead_time: int, unmet: str, top: int, largest_gap: int):
        self.demand, self.lead_time, self.unmet, self.top = demand, lead_time, unmet, top
        self.tables = DemandTables(demand, top)
        self.shared = unmet == "backorder" or lead_time == 0
        if self.shared:
            self.lead = lead_time_demand(demand, lead_time).probs if lead_time else np.ones(1)
            self.renewal = renewal_weights(demand, largest_gap)

    def drops(self, gaps):
        """Yield (gap, drop law W, orders per period) for increasing gaps, each from the one before."""
        sums = np.zeros(self.lead.size + int(max(gaps)))
        totals = np.cumsum(self.renewal)  # non-negative terms: relative error a few ulps per term at most
        done = 0
        for gap in gaps:
            for j in range(done, gap):  # add the shifted copies for positions S - j
                sums[j : j + self.lead.size] += self.renewal[j] * self.lead
            done = gap
            total = totals[gap - 1]
            position = self.renewal[:gap] / total
            yield (
                gap,
                np.minimum(sums[: gap + self.lead.size - 1] / total, 1.0),
                orders_per_review(position, self.tables),
            )

    def curves(self, drop: np.ndarray, levels: np.ndarray) -> dict[str, np.ndarray]:
        return measure_curves(drop, end_drop_law(drop, self.demand), self.tables, levels, self.unmet)

    def gap_curves(self, gaps, *, backorders: bool = True):
        """Yield (gap, measures at S = gap..top, orders per period) for increasing gaps, sharing the work.

        ``backorders=False``: no ``mean_backorders`` curve, and no end-of-period law convolved for it
        (the cheapest-policy search reads on hand, units short and service only).

        The drop law is a mixture, W = sum_j position(j) x (lead-time demand shifted by j), so each
        expectation sum_{w <= S} P(W = w) f(S - w) is sum_{j < gap} u(j) B_f(S - j) / U(gap) with
        B_f = (lead-time demand) * f convolved once; each gap adds one shifted copy of B_f: O(top) per
        gap and table instead of a convolution of length top (same non-negative terms, summed in
        another order). Equal to ``curves`` for each gap to rounding.
        """
        top = self.top
        levels = np.arange(top + 1)
        lead = self.lead[: top + 1]
        bases = {name: np.convolve(lead, table[: top + 1])[: top + 1] for name, table in self.tables.named().items()}
        end_lead = np.convolve(self.lead, count_probs(self.demand))[:top]
        bases["on_hand"] = np.convolve(end_lead, levels.astype(float))[: top + 1]
        sums = {name: np.zeros(top + 1) for name in bases}
        done = 0
        for gap, drop, ordered in self.drops(gaps):
            for j in range(done, min(gap, top + 1)):
                for name, base in bases.items():
                    sums[name][j:] += self.renewal[j] * base[: top + 1 - j]
            done = gap
            total = math.fsum(self.renewal[:gap])
            at = levels[gap:]
            bodies = {name: values[at] / total for name, values in sums.items()}
            on_hand = bodies.pop("on_hand")
            end_drop = end_drop_law(drop, self.demand) if backorders else None
            curves = finish_curves(bodies, on_hand, drop, end_drop, self.tables, at, self.unmet)
            yield gap, curves, np.full(at.size, ordered)

    def chain_gaps(self, gaps, top: int):
        """Yield (gap, measures at S = gap..top, orders per period) for each gap, every chain solved in one
        stacked pass (walkmath/reviewstack.py)."""
        gaps = list(gaps)
        policies = [(big_s - gap, big_s) for gap in gaps for big_s in range(gap, top + 1)]
        rows = lost_sales_measures(self.demand, policies, self.lead_time)
        self.solved = dict(zip(policies, rows, strict=True))  # the chosen policy's measures, not solved again
        done = 0
        for gap in gaps:
            count = top + 1 - gap
            yield (gap, *_stacked_curves(rows[done : done + count]))
            done += count


def _stacked_curves(rows: list[PolicyMeasures]) -> tuple[dict[str, np.ndarray], np.ndarray]:
    names = [name for name in PolicyMeasures.__dataclass_fields__ if name != "orders_per_period"]
    curves = {name: np.array([getattr(row, name) for row in rows]) for name in names}
    return curves, np.array([row.orders_per_period for row in rows])


def _search_work(
    method: str,
    demand: StepLaw,
    lead_time: int,
    unmet: str,
    top: int,
    gaps: int,
    per_gap: int,
    policies=list,
    one_level: bool = False,
) -> Work:
    """The shared forms' sweeps; lost sales with a lead time: the chains of the (s, S) pairs ``policies()``
    lists (called only then: the grid of a shared form may be far too large to list), stacked
    (walkmath/reviewstack.py) or, for a reorder-level search (``one_level``), partly read off one shared
    reduction (walkmath/reviewsweep.py)."""
    if unmet == "lost" and lead_time > 0:
        if one_level:
            return lost_policy_work(method, demand, policies(), lead_time, _KNOB)
        return stack_work(method, demand, policies(), lead_time, _KNOB)
    lead_levels = lead_time * demand.highest + 1
    return Work(method, top + gaps + lead_levels, gaps, 7 * (top + 1) + lead_levels, knob=_KNOB)


def _meets(service: np.ndarray, shortfall: np.ndarray, target: float) -> np.ndarray:
    # Above 1/2 decide on the shortfall side, where 1 - target is exact (no cancellation).
    return service >= target if target <= 0.5 else shortfall <= 1.0 - target
